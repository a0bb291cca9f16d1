package compare

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"sort"
	"strings"

	"spinpop/model"
)

// FitOptions control Fit.
type FitOptions struct {
	// Starts is the number of starting points (0: 4). The first is the
	// model's Default; the others are the best local maxima of a scan of
	// the first "age_gyr" parameter over the template age bins, or, for a
	// model without one, points drawn from a stream of Seed.
	Starts int
	Seed   uint64
	// Init holds extra starting points (θ, inside the bounds), tried
	// before the others, e.g. a previous fit's answer.
	Init [][]float64
	// NuisanceStart, for FitJoint, is where the nuisance parameters start
	// and the first expansion is centred (nil: their nominal values).
	NuisanceStart []float64
	// MaxRounds, for FitJoint, bounds its expansions (0: MaxRounds).
	MaxRounds int
	// Workers, for FitJoint, is how many goroutines fit a round's side
	// points and proposal starts (0: GOMAXPROCS); results do not depend
	// on it.
	Workers int
	// Stage, if not nil, is told what a long fit is doing (FitJoint: one
	// line per expansion), for progress reports.
	Stage func(msg string)
}

// FitResult is a maximum-likelihood fit.
type FitResult struct {
	Theta   []float64 // best-fitting free parameters
	Names   []string
	Weights []float64 // the age-bin mass fractions at Theta
	// LogL is ln L at the fit: the data's log-likelihood plus, with
	// nuisance parameters, their constraint terms (LogPrior).
	LogL        float64
	Evaluations int  // likelihood evaluations, all starts
	Converged   bool // the best start ended on a convergence criterion

	// With nuisance parameters (FitJoint): their fitted values and names,
	// the constraint terms at them, the templates made exactly at them
	// (every expectation of this fit must use these), and how many
	// expansions the fit needed.
	Nuisance      []float64
	NuisanceNames []string
	LogPrior      float64
	Templates     *Templates
	Rounds        int
	// RoundLimit is set when FitJoint stopped at its limit of expansions
	// (FitOptions.MaxRounds) with the last one still improving ln L: the answer may
	// not be the maximum, and Converged is false.
	RoundLimit bool
	// LastGain is how much ln L rose in the search's last round (0 when
	// the last round did not move the centre): with RoundLimit, how far
	// from converged the answer is.
	LastGain float64
	// OtherMaxima are where FitJoint's other searches from its starting
	// grid ended (lower ln L), best first: a maximum close in ln L but
	// far in the answer says the answer is less certain than an interval
	// drawn about one maximum.
	OtherMaxima []LocalMaximum
	morph       *morph
}

// LocalMaximum is where one search of a joint fit ended.
type LocalMaximum struct {
	LogL       float64
	Theta      []float64 // history parameters, in FitResult.Names' order
	Nuisance   []float64
	RoundLimit bool    // that search stopped at its round limit while improving
	LastGain   float64 // what its last round gained (see FitResult.LastGain)
}

// LogLData returns the data's log-likelihood at the fit, without the
// nuisance constraint terms.
func (f FitResult) LogLData() float64 { return f.LogL - f.LogPrior }

// Fit maximises the likelihood over the model's free parameters.
//
// It runs BFGS (minimizeBFGS) on the bounded transform of the parameters (see
// HistoryModel.ToInternal) with the exact gradient by the chain rule,
// dlnL/dθ_j = Σ_k (∂lnL/∂w_k)(dw_k/dθ_j), where ∂lnL/∂w comes from
// Likelihood.LogLGrad and dw/dθ from finite differences of the history's
// bin weights (cheap: closed forms, one history per parameter and side).
// Burst-age likelihoods have several maxima (one per gyrochrone ridge the
// burst can sit on), so several starts are run and the best kept; see
// FitOptions. A model without free parameters is simply evaluated.
func Fit(like *Likelihood, m HistoryModel, opts FitOptions) (FitResult, error) {
	if err := m.Validate(); err != nil {
		return FitResult{}, err
	}
	if len(m.AgeEdgesGyr)-1 != like.NumAgeBins() {
		return FitResult{}, fmt.Errorf("compare: the history model has %d age bins, the templates %d; use the templates' age edges", len(m.AgeEdgesGyr)-1, like.NumAgeBins())
	}
	if opts.Starts <= 0 {
		opts.Starts = 4
	}
	if m.Dim() == 0 {
		res := FitResult{Names: m.Names()}
		w, err := m.Weights(nil)
		if err != nil {
			return res, err
		}
		res.Theta, res.Weights, res.LogL, res.Evaluations, res.Converged = []float64{}, w, like.LogL(w), 1, true
		return res, nil
	}
	obj := newObjective(like, m, nil, nil)
	return obj.fit(m, opts, nil)
}

// fit runs the starts of opts (and, with nuisance parameters, from nuStart)
// and returns the best answer.
func (o *objective) fit(m HistoryModel, opts FitOptions, nuStart []float64) (FitResult, error) {
	res := FitResult{Names: m.Names(), LogL: math.Inf(-1), NuisanceNames: o.nu.Names()}
	if o.mo != nil {
		o.setNuisance(nuStart)
	}
	var starts [][]float64
	for i, s := range opts.Init {
		switch len(s) {
		case m.Dim():
			starts = append(starts, s)
		case 0:
			// A warm start from a fit that has no θ: the point where its
			// templates cannot reach every data star (profileWith), whose
			// fit is ln L = −∞ with no history. No start at all; the
			// others remain.
		default:
			return res, fmt.Errorf("compare: starting point %d has %d values; the history model has %d free parameters (%s)", i, len(s), m.Dim(), strings.Join(m.Names(), ", "))
		}
	}
	starts = append(starts, m.Default())
	starts = append(starts, scanStarts(o, m, opts.Starts-1, opts.Seed)...)
	var firstErr error
	for _, s := range dedupe(starts) {
		if o.mo != nil {
			o.setNuisance(nuStart)
		}
		theta, nu, logL, conv, err := o.maximise(interior(m, s), nuStart)
		if err != nil {
			if firstErr == nil {
				firstErr = err
			}
			continue
		}
		if logL > res.LogL {
			res.Theta, res.Nuisance, res.LogL, res.Converged = theta, nu, logL, conv
		}
	}
	res.Evaluations = o.evals
	if res.Theta == nil {
		if firstErr == nil {
			firstErr = errors.New("no start reached a finite likelihood")
		}
		return res, fmt.Errorf("compare: fit of %s failed: %w", strings.Join(append(res.Names, res.NuisanceNames...), ", "), firstErr)
	}
	w, err := m.Weights(res.Theta)
	if err != nil {
		return res, err
	}
	res.Weights = w
	if o.nu != nil {
		res.LogPrior = o.nu.LogPrior(res.Nuisance)
	}
	return res, nil
}

// objective is −ln L on the optimiser's unbounded coordinates: the
// history's free parameters, then the nuisance parameters (if any).
type objective struct {
	like  *Likelihood
	m     HistoryModel
	nu    *Nuisance // nil: history only
	mo    *morph    // the expansion of the templates in the nuisance parameters
	evals int

	theta, dtheta, gw []float64
	jac               [][]float64
	nuVals, dnu, gnu  []float64
	nuLo, nuHi        []float64 // the nuisance parameters' bounds here: the expansion's trust region
	rows, vars, dm    []float64
	dv, scratch       []float64
	clamped           []bool
	lastX             []float64
	lastF             float64
	lastG             []float64
	err               error
}

func newObjective(like *Likelihood, m HistoryModel, nu *Nuisance, mo *morph) *objective {
	d := m.Dim()
	o := &objective{like: like, m: m, nu: nu, mo: mo, theta: make([]float64, d), dtheta: make([]float64, d),
		gw: make([]float64, like.NumAgeBins()), lastG: make([]float64, d+nu.Dim())}
	o.jac = make([][]float64, d)
	for j := range o.jac {
		o.jac[j] = make([]float64, like.NumAgeBins())
	}
	if mo != nil {
		J := nu.Dim()
		o.nuVals, o.dnu, o.gnu = make([]float64, J), make([]float64, J), make([]float64, J)
		o.nuLo, o.nuHi = mo.trustRegion(nu)
		o.rows, o.vars = make([]float64, like.nb*like.k), make([]float64, like.nb*like.k)
		o.clamped = make([]bool, like.nb*like.k)
		o.dm, o.dv, o.scratch = make([]float64, like.nb), make([]float64, like.nb), make([]float64, like.nb*like.k)
	}
	return o
}

// setNuisance puts the templates at nuisance values v into the likelihood.
func (o *objective) setNuisance(v []float64) {
	copy(o.nuVals, v)
	o.mo.apply(o.nuVals, o.rows, o.vars, o.clamped, o.scratch)
	o.like.setRows(o.rows, o.vars)
	o.lastX = nil
}

// logL evaluates ln L at theta (no gradient), at the nuisance values last
// set.
func (o *objective) logL(theta []float64) float64 {
	w, err := o.m.Weights(theta)
	if err != nil {
		return math.Inf(-1)
	}
	o.evals++
	return o.like.LogL(w)
}

// nuisanceFromInternal maps the optimiser's nuisance coordinates to values
// inside bounds lo, hi (the sine transform of HistoryModel), writing dν/dx
// into deriv.
func nuisanceFromInternal(lo, hi, x, v, deriv []float64) {
	for j := range v {
		half := 0.5 * (hi[j] - lo[j])
		v[j] = math.Max(lo[j], math.Min(hi[j], lo[j]+half*(1+math.Sin(x[j]))))
		deriv[j] = half * math.Cos(x[j])
	}
}

func nuisanceToInternal(lo, hi, v []float64) []float64 {
	x := make([]float64, len(v))
	for j := range v {
		u := 2*(v[j]-lo[j])/(hi[j]-lo[j]) - 1
		if !(hi[j] > lo[j]) {
			u = 0
		}
		x[j] = math.Asin(math.Max(-1, math.Min(1, u)))
	}
	return x
}

// eval computes f = −ln L and its gradient at x, caching the last point.
func (o *objective) eval(x []float64) {
	if o.lastX != nil && slices.Equal(x, o.lastX) {
		return
	}
	o.lastX = append(o.lastX[:0], x...)
	d := o.m.Dim()
	o.m.FromInternal(x[:d], o.theta, o.dtheta)
	bad := func() {
		o.lastF = math.Inf(1)
		for j := range o.lastG {
			o.lastG[j] = math.NaN()
		}
	}
	if o.mo != nil {
		nuisanceFromInternal(o.nuLo, o.nuHi, x[d:], o.nuVals, o.dnu)
		o.mo.apply(o.nuVals, o.rows, o.vars, o.clamped, o.scratch)
		o.like.setRows(o.rows, o.vars)
	}
	h, err := o.m.History(o.theta)
	var w []float64
	if err == nil {
		w = h.BinWeights(o.m.AgeEdgesGyr)
	}
	if err != nil {
		o.err = err
		bad()
		return
	}
	o.evals++
	var l float64
	if o.mo != nil {
		l = o.like.logLFull(w, o.gw, o.dm, o.dv)
	} else {
		l = o.like.LogLGrad(w, o.gw)
	}
	if math.IsInf(l, -1) || math.IsNaN(l) {
		bad()
		return
	}
	if err := o.m.weightJacobian(h, o.theta, o.jac); err != nil {
		o.err = err
	}
	o.lastF = -l
	for j := range d {
		var s float64
		for k, g := range o.gw {
			s += g * o.jac[j][k]
		}
		o.lastG[j] = -s * o.dtheta[j]
	}
	if o.mo != nil {
		clear(o.gnu)
		o.mo.gradient(o.nuVals, w, o.dm, o.dv, o.clamped, o.scratch, o.gnu)
		for j, p := range o.nu.Params {
			o.lastF -= p.logPrior(o.nuVals[j])
			o.lastG[d+j] = -(o.gnu[j] + p.logPriorDeriv(o.nuVals[j])) * o.dnu[j]
		}
	}
}

// maximise runs BFGS from theta0 (and nuisance values nu0) and returns the
// best point.
func (o *objective) maximise(theta0, nu0 []float64) (theta, nu []float64, logL float64, converged bool, err error) {
	x0 := o.m.ToInternal(theta0)
	if o.mo != nil {
		x0 = append(x0, nuisanceToInternal(o.nuLo, o.nuHi, nu0)...)
	}
	fg := func(x, g []float64) float64 {
		o.eval(x)
		copy(g, o.lastG)
		return o.lastF
	}
	x, f, conv := minimize(fg, x0, 400)
	if math.IsInf(f, 1) || math.IsNaN(f) {
		if o.err != nil {
			return nil, nil, 0, false, o.err
		}
		return nil, nil, 0, false, errors.New("the likelihood is zero at the start")
	}
	d := o.m.Dim()
	theta = make([]float64, d)
	o.m.FromInternal(x[:d], theta, nil)
	if o.mo != nil {
		nu = make([]float64, o.nu.Dim())
		nuisanceFromInternal(o.nuLo, o.nuHi, x[d:], nu, make([]float64, len(nu)))
	}
	return theta, nu, -f, conv, nil
}

// interior moves a start off the bounds, where the transform is flat.
func interior(m HistoryModel, theta []float64) []float64 {
	out := append([]float64(nil), theta...)
	for i, f := range m.Free {
		eps := 1e-3 * (f.Max - f.Min)
		out[i] = math.Min(math.Max(out[i], f.Min+eps), f.Max-eps)
	}
	return out
}

func dedupe(starts [][]float64) [][]float64 {
	var out [][]float64
	for _, s := range starts {
		dup := false
		for _, o := range out {
			if slices.Equal(o, s) {
				dup = true
				break
			}
		}
		if !dup {
			out = append(out, s)
		}
	}
	return out
}

// scanStarts returns up to n starting points. With an "age_gyr" free
// parameter it scans that parameter over the centres of the template age
// bins inside its bounds (the templates' own resolution), the others at
// their defaults, and returns the best local maxima of the scan; otherwise
// points uniform (or log-uniform) inside the bounds from a stream of seed.
// The scan is what finds a burst far from the default age: the likelihood
// has a maximum on every gyrochrone ridge, and a descent started on the
// wrong one stays there.
func scanStarts(o *objective, m HistoryModel, n int, seed uint64) [][]float64 {
	if n <= 0 {
		return nil
	}
	// A parameter on its bound (a burst fraction of 0) would make the scan
	// flat: the scan holds such parameters a tenth of the way inside.
	def := m.Default()
	for i, f := range m.Free {
		rng := f.Max - f.Min
		if def[i] <= f.Min+0.01*rng {
			def[i] = f.Min + 0.1*rng
		} else if def[i] >= f.Max-0.01*rng {
			def[i] = f.Max - 0.1*rng
		}
	}
	ageIdx := -1
	for i, f := range m.Free {
		if strings.HasSuffix(f.Name, "age_gyr") {
			ageIdx = i
			break
		}
	}
	if ageIdx < 0 {
		r := model.ChunkStream(seed, 0x5eed)
		out := make([][]float64, n)
		for s := range out {
			out[s] = randomPoint(m, r)
		}
		return out
	}
	f := m.Free[ageIdx]
	var ages []float64
	e := m.AgeEdgesGyr
	for k := 0; k+1 < len(e); k++ {
		if c := 0.5 * (e[k] + e[k+1]); c > f.Min && c < f.Max {
			ages = append(ages, c)
		}
	}
	if len(ages) < 8 {
		ages = ages[:0]
		for i := range 16 {
			ages = append(ages, f.Min+(f.Max-f.Min)*(float64(i)+0.5)/16)
		}
	}
	ll := make([]float64, len(ages))
	theta := append([]float64(nil), def...)
	for i, a := range ages {
		theta[ageIdx] = a
		ll[i] = o.logL(theta)
	}
	var peaks []int
	for i := range ages {
		if (i == 0 || ll[i] >= ll[i-1]) && (i == len(ages)-1 || ll[i] >= ll[i+1]) && !math.IsInf(ll[i], -1) {
			peaks = append(peaks, i)
		}
	}
	sort.SliceStable(peaks, func(a, b int) bool { return ll[peaks[a]] > ll[peaks[b]] })
	var out [][]float64
	for _, i := range peaks {
		if len(out) == n {
			break
		}
		t := append([]float64(nil), def...)
		t[ageIdx] = ages[i]
		out = append(out, t)
	}
	return out
}

func randomPoint(m HistoryModel, r *rand.Rand) []float64 {
	t := make([]float64, m.Dim())
	for i, f := range m.Free {
		u := 0.05 + 0.9*r.Float64()
		if f.LogPrior {
			t[i] = math.Exp(math.Log(f.Min) + u*(math.Log(f.Max)-math.Log(f.Min)))
		} else {
			t[i] = f.Min + u*(f.Max-f.Min)
		}
	}
	return t
}

// ProfilePoint is one point of a profile likelihood.
type ProfilePoint struct {
	Value float64 // the profiled parameter
	LogL  float64 // ln L maximised over the other free parameters
}

// Interval is a profile-likelihood interval: where ln L falls by 0.5
// (68 %) and 1.92 (95 %) below its maximum, the one-parameter Wilks
// levels (χ²₁ quantiles 1 and 3.84, halved). An end that the likelihood
// does not reach inside the scanned range is set to the range's end and
// flagged open.
type Interval struct {
	Best           float64
	Lo68, Hi68     float64
	Lo95, Hi95     float64
	LoOpen, HiOpen bool // the 95 % interval reaches the scanned range's end
}

// Δ ln L levels of the 68.27 % and 95 % intervals of one parameter.
const (
	dLogL68 = 0.5
	dLogL95 = 1.920729410347062 // ½ χ²₁(0.95) = ½ · 3.841458820694124
)

// Profile returns the profile likelihood of param over grid (each point
// a fit of the other free parameters, started from its neighbour's
// answer) and the interval it implies, with crossings interpolated
// linearly between grid points. The maximum is the best of the global
// fit and the grid.
func Profile(like *Likelihood, m HistoryModel, param string, grid []float64) ([]ProfilePoint, Interval, error) {
	if len(grid) < 2 {
		return nil, Interval{}, fmt.Errorf("compare: profile of %q needs at least two grid values", param)
	}
	if !sort.Float64sAreSorted(grid) {
		return nil, Interval{}, fmt.Errorf("compare: profile grid of %q must be increasing", param)
	}
	best, err := Fit(like, m, FitOptions{})
	if err != nil {
		return nil, Interval{}, err
	}
	idx := slices.Index(m.Names(), param)
	if idx < 0 {
		return nil, Interval{}, fmt.Errorf("compare: %q is not a free parameter; free are %s", param, strings.Join(m.Names(), ", "))
	}
	pts := make([]ProfilePoint, len(grid))
	var prev []float64
	for i, v := range grid {
		r, err := profileAt(like, m, param, idx, v, best.Theta, prev, nil, FitResult{})
		if err != nil {
			return nil, Interval{}, err
		}
		prev = r.Theta
		pts[i] = ProfilePoint{Value: v, LogL: r.LogL}
	}
	maxL, bestV := best.LogL, best.Theta[idx]
	for _, p := range pts {
		if p.LogL > maxL {
			maxL, bestV = p.LogL, p.Value
		}
	}
	return pts, intervalFrom(pts, maxL, bestV, 1), nil
}

// profileAt fits the model with param fixed at v; start values come from
// the global best and the previous grid point. With nuisance parameters
// (nu, and a joint fit nuFit that holds their expansion) they are refitted
// at every point on that expansion.
func profileAt(like *Likelihood, m HistoryModel, param string, idx int, v float64, best, prev []float64, nu *Nuisance, nuFit FitResult) (FitResult, error) {
	fixed, err := m.WithFixed(param, v)
	if err != nil {
		return FitResult{}, err
	}
	drop := func(t []float64) []float64 {
		if t == nil {
			return nil
		}
		return append(append([]float64(nil), t[:idx]...), t[idx+1:]...)
	}
	init := [][]float64{drop(best)}
	if prev != nil {
		init = append(init, prev)
	}
	var r FitResult
	if nu.Dim() > 0 && nuFit.morph != nil {
		r, err = refitAt(like, fixed, nu, nuFit.morph, FitOptions{Starts: 1, Init: init}, nuFit.Nuisance)
	} else {
		r, err = Fit(like, fixed, FitOptions{Starts: 1, Init: init})
	}
	if err != nil {
		return FitResult{}, err
	}
	return r, nil
}

// intervalFrom reads the interval off profile points; scale ≥ 1 widens the
// Δln L levels (a quasi-likelihood interval for dispersion φ̂ = scale).
func intervalFrom(pts []ProfilePoint, maxL, best, scale float64) Interval {
	iv := Interval{Best: best}
	cross := func(level float64, dir int) (float64, bool) {
		// Start at the grid point nearest the best value, walk outward.
		start := 0
		for i, p := range pts {
			if math.Abs(p.Value-best) < math.Abs(pts[start].Value-best) {
				start = i
			}
		}
		prevV, prevD := best, 0.0
		for i := start; i >= 0 && i < len(pts); i += dir {
			p := pts[i]
			if (dir > 0 && p.Value < best) || (dir < 0 && p.Value > best) {
				continue
			}
			d := maxL - p.LogL
			if d >= level {
				if d == prevD {
					return p.Value, true
				}
				return prevV + (p.Value-prevV)*(level-prevD)/(d-prevD), true
			}
			prevV, prevD = p.Value, d
		}
		if dir > 0 {
			return pts[len(pts)-1].Value, false
		}
		return pts[0].Value, false
	}
	var ok bool
	iv.Lo68, _ = cross(scale*dLogL68, -1)
	iv.Hi68, _ = cross(scale*dLogL68, 1)
	iv.Lo95, ok = cross(scale*dLogL95, -1)
	iv.LoOpen = !ok
	iv.Hi95, ok = cross(scale*dLogL95, 1)
	iv.HiOpen = !ok
	return iv
}

// WithCalibration widens an interval of a positive quantity (an age) by a
// calibration uncertainty sigmaLn of its logarithm: each bound's distance
// from the best value in ln is added in quadrature with sigmaLn (68 %
// bounds) or 1.959964·sigmaLn (95 % bounds). The best value and the open
// flags stay.
func WithCalibration(iv Interval, sigmaLn float64) Interval {
	if !(iv.Best > 0) || !(sigmaLn > 0) {
		return iv
	}
	lb := math.Log(iv.Best)
	widen := func(bound, z float64, up bool) float64 {
		d := 0.0
		if bound > 0 {
			d = math.Abs(math.Log(bound) - lb)
		}
		d = math.Hypot(d, z*sigmaLn)
		if up {
			return math.Exp(lb + d)
		}
		return math.Exp(lb - d)
	}
	const z95 = 1.959963984540054 // Φ⁻¹(0.975)
	out := iv
	out.Lo68, out.Hi68 = widen(iv.Lo68, 1, false), widen(iv.Hi68, 1, true)
	out.Lo95, out.Hi95 = widen(iv.Lo95, z95, false), widen(iv.Hi95, z95, true)
	return out
}

// stillRisingGain is the gain in ln L of a search's last round above
// which a fit stopped at its round limit is called unfinished: half a
// unit, a quarter of the 1.92 that bounds a 95 % interval in one
// parameter. A last round that gained less moved the answer by less than
// its own error.
const stillRisingGain = 0.5

// StillRising reports a fit that stopped at its round limit while ln L was
// still rising by more than stillRisingGain a round: its answer may not be
// the maximum. A fit stopped at the limit by a last round gaining less is
// as good as finished, and is not called unfinished.
func (f FitResult) StillRising() bool { return f.RoundLimit && f.LastGain > stillRisingGain }
