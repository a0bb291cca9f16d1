package compare

import (
	"fmt"
	"math"
	"slices"
	"sort"
	"strings"
)

// conditionalSigma estimates the width of the likelihood along free
// parameter idx at theta, the others held fixed, from a second difference
// of ln L; it falls back to a tenth of the range where ln L is not
// curved downward (flat, or an optimum on a bound).
func conditionalSigma(o *objective, m HistoryModel, theta []float64, idx int) float64 {
	f := m.Free[idx]
	rng := f.Max - f.Min
	h := 1e-3 * rng
	t := append([]float64(nil), theta...)
	c := t[idx]
	lo, hi := math.Max(f.Min, c-h), math.Min(f.Max, c+h)
	mid := 0.5 * (lo + hi)
	t[idx] = lo
	l0 := o.logL(t)
	t[idx] = mid
	l1 := o.logL(t)
	t[idx] = hi
	l2 := o.logL(t)
	step := 0.5 * (hi - lo)
	d2 := (l0 + l2 - 2*l1) / (step * step)
	sigma := rng / 10
	if d2 < 0 && !math.IsInf(d2, 0) {
		sigma = 1 / math.Sqrt(-d2)
	}
	return math.Min(math.Max(sigma, 1e-6*rng), rng/4)
}

// ProfileAuto returns the profile-likelihood interval of param around the
// fit best: a grid of ±4 conditional widths in steps of a half width,
// extended outward by doubling until ln L has fallen by 1.92 or a bound
// is reached.
func ProfileAuto(like *Likelihood, m HistoryModel, param string, best FitResult) (Interval, error) {
	return profileAutoScaled(like, m, param, best, nil, 1)
}

// profileAutoScaled is ProfileAuto with nuisance parameters refitted at
// every point (on best's expansion) and the Δln L levels multiplied by
// scale ≥ 1: for a dispersion φ̂ the quasi-likelihood interval, whose
// levels are φ̂ times the likelihood's (McCullagh & Nelder 1989, §9.2.4)
// [memory].
func profileAutoScaled(like *Likelihood, m HistoryModel, param string, best FitResult, nu *Nuisance, scale float64) (Interval, error) {
	iv, _, err := profileScan(like, m, param, best, nu, scale)
	return iv, err
}

// profilePeak is the highest point of a profile that lies above the fit
// it was drawn about: the parameter's value there and the fit with it
// held (history and nuisance parameters refitted); Value is NaN when no
// point rose above the fit.
type profilePeak struct {
	Value float64
	Fit   FitResult
	Pts   []ProfilePoint
}

// profileScan is profileAutoScaled returning its points and its peak too.
func profileScan(like *Likelihood, m HistoryModel, param string, best FitResult, nu *Nuisance, scale float64) (Interval, profilePeak, error) {
	scale = math.Max(1, scale)
	idx := slices.Index(m.Names(), param)
	if idx < 0 {
		return Interval{}, profilePeak{}, fmt.Errorf("compare: %q is not a free parameter; free are %s", param, strings.Join(m.Names(), ", "))
	}
	peak, peakV := FitResult{LogL: best.LogL}, math.NaN()
	f := m.Free[idx]
	o := newObjective(like, m, nil, nil)
	sigma := conditionalSigma(o, m, best.Theta, idx)
	c := best.Theta[idx]
	var grid []float64
	for k := -8; k <= 8; k++ {
		v := c + 0.5*float64(k)*sigma
		if v >= f.Min && v <= f.Max {
			grid = append(grid, v)
		}
	}
	pts := make([]ProfilePoint, 0, len(grid)+16)
	var prev []float64
	eval := func(v float64) error {
		r, err := profileAt(like, m, param, idx, v, best.Theta, prev, nu, best)
		if err != nil {
			return err
		}
		prev = r.Theta
		pts = append(pts, ProfilePoint{Value: v, LogL: r.LogL})
		if r.LogL > peak.LogL {
			peak, peakV = r, v
		}
		return nil
	}
	for _, v := range grid {
		if err := eval(v); err != nil {
			return Interval{}, profilePeak{}, err
		}
	}
	// A burst narrower than the age bins it sits in makes the profile in
	// its age a staircase (flat inside a bin, steps at the edges): the
	// template age bins near the best value join the grid so that every
	// step is seen.
	e := m.AgeEdgesGyr
	for k := 0; k+1 < len(e); k++ {
		if mid := 0.5 * (e[k] + e[k+1]); mid > f.Min && mid < f.Max && math.Abs(mid-c) <= 8*sigma && !slices.Contains(grid, mid) {
			if err := eval(mid); err != nil {
				return Interval{}, profilePeak{}, err
			}
		}
	}
	sort.Slice(pts, func(a, b int) bool { return pts[a].Value < pts[b].Value })
	top := func() (float64, float64) {
		maxL, bestV := best.LogL, c
		for _, p := range pts {
			if p.LogL > maxL {
				maxL, bestV = p.LogL, p.Value
			}
		}
		return maxL, bestV
	}
	for _, dir := range []float64{-1, 1} {
		reach := 4 * sigma
		for range 30 {
			end := pts[0]
			if dir > 0 {
				end = pts[len(pts)-1]
			}
			// Measured from the fit, not the peak: an interval read from
			// the fit's ln L (BurstTest with nuisance parameters) needs the
			// profile to fall that far below the fit.
			if best.LogL-end.LogL >= scale*dLogL95 || (dir < 0 && end.Value <= f.Min) || (dir > 0 && end.Value >= f.Max) {
				break
			}
			reach *= 2
			v := math.Min(math.Max(c+dir*reach, f.Min), f.Max)
			if err := eval(v); err != nil {
				return Interval{}, profilePeak{}, err
			}
			sort.Slice(pts, func(a, b int) bool { return pts[a].Value < pts[b].Value })
		}
	}
	// The profile may peak away from the fit (the global fit missed a
	// ridge) or between grid points: halve the gaps beside the peak while
	// a neighbour lies more than the 68 % level below it, so that the
	// interval is read off points that resolve the peak.
	for range 12 {
		maxL, bestV := top()
		i := slices.IndexFunc(pts, func(p ProfilePoint) bool { return p.Value == bestV })
		var mids []float64
		for _, j := range []int{i - 1, i + 1} {
			if i >= 0 && j >= 0 && j < len(pts) && maxL-pts[j].LogL > scale*dLogL68 && math.Abs(pts[j].Value-bestV) > 1e-4*(f.Max-f.Min) {
				mids = append(mids, 0.5*(pts[j].Value+bestV))
			}
		}
		if len(mids) == 0 {
			break
		}
		for _, v := range mids {
			if err := eval(v); err != nil {
				return Interval{}, profilePeak{}, err
			}
		}
		sort.Slice(pts, func(a, b int) bool { return pts[a].Value < pts[b].Value })
	}
	maxL, bestV := top()
	return intervalFrom(pts, maxL, bestV, scale), profilePeak{Value: peakV, Fit: peak, Pts: pts}, nil
}

// evidence fills the Bayes-factor fields of res.
//
// Z_burst = ∫ L(θ_b, θ̂_s) π(θ_b) dθ_b over the burst-only parameters θ_b
// (at most 3), with the parameters the burst model shares with the smooth
// one held at the burst fit's values; Z_smooth = L(θ̂₀), the smooth
// model's maximum. Holding the shared parameters at their best values is a
// profile approximation: their Occam factors, similar in both models,
// are taken to cancel; it is exact when the smooth model has no free
// parameter. The integral runs in prior-CDF coordinates u ∈ [0, 1]^d (θ
// linear in u for a uniform prior, ln θ for a log-uniform one), where the
// prior is flat, by the tensor trapezoid rule on nodes that join an even
// grid to a fine one over ±6 widths around the burst fit, so that a
// likelihood peak much narrower than the prior is resolved.
func evidence(like *Likelihood, smooth, burst HistoryModel, f0, f1 FitResult, res *BurstResult) error {
	extra := burstOnly(smooth, burst)
	res.EvidenceParams = extra
	switch {
	case len(extra) == 0:
		res.EvidenceNote = "skipped: the burst model adds no parameter to the smooth one"
		return nil
	case len(extra) > 3:
		res.EvidenceNote = fmt.Sprintf("skipped: grid integration over %d burst parameters is too costly; at most 3", len(extra))
		return nil
	}
	lnZ1, nodes, ok := gridEvidence(like, burst, f1, extra)
	if !ok {
		res.EvidenceNote = "failed: the likelihood is zero over the whole prior grid"
		return nil
	}
	res.LogBayesFactor = lnZ1 - f0.LogL
	res.HasEvidence = true
	shared := len(burst.Free) - len(extra)
	res.EvidenceNote = fmt.Sprintf("ln B = ln Z(burst) − ln Z(smooth) by grid integration over %s with their priors (%d nodes)", strings.Join(extra, ", "), nodes)
	if shared > 0 || smooth.Dim() > 0 || f1.Nuisance != nil {
		res.EvidenceNote += "; the other parameters are held at each model's best fit (a profile approximation whose Occam factors are taken to cancel)"
	}
	return nil
}

// logEvidence returns ln Z of model m around fit f by grid integration
// over at most three of its free parameters (the first three; the others
// and any nuisance parameters held at f), and which they were; ok is false
// when the model has more than three or the integral fails. A model
// without free parameters has ln Z = ln L.
func logEvidence(like *Likelihood, m HistoryModel, f FitResult) (lnZ float64, params []string, ok bool) {
	if m.Dim() == 0 {
		return f.LogL, nil, true
	}
	if m.Dim() > 3 {
		return math.NaN(), nil, false
	}
	params = m.Names()
	lnZ, _, ok = gridEvidence(like, m, f, params)
	return lnZ, params, ok
}

// gridEvidence returns ln ∫ L(θ_p, θ̂_rest) π(θ_p) dθ_p over the named
// free parameters of m (at most 3), the others at fit f's values, plus
// f's nuisance constraint terms, and the number of nodes. The integral
// runs in prior-CDF coordinates u ∈ [0, 1]^d (θ linear in u for a uniform
// prior, ln θ for a log-uniform one), where the prior is flat, by the
// tensor trapezoid rule on nodes that join an even grid to a fine one over
// ±6 widths around the fit, so that a likelihood peak much narrower than
// the prior is resolved. like must hold f's templates.
func gridEvidence(like *Likelihood, m HistoryModel, f FitResult, params []string) (lnZ float64, nodes int, ok bool) {
	nEven, nFine := map[int]int{1: 201, 2: 61, 3: 21}[len(params)], map[int]int{1: 200, 2: 40, 3: 16}[len(params)]
	o := newObjective(like, m, nil, nil)
	idx := make([]int, len(params))
	grid := make([][]float64, len(params))
	wts := make([][]float64, len(params))
	for d, name := range params {
		i := slices.Index(m.Names(), name)
		idx[d] = i
		fp := m.Free[i]
		sigma := conditionalSigma(o, m, f.Theta, i)
		u := make([]float64, 0, nEven+nFine)
		for j := range nEven {
			u = append(u, float64(j)/float64(nEven-1))
		}
		lo, hi := math.Max(fp.Min, f.Theta[i]-6*sigma), math.Min(fp.Max, f.Theta[i]+6*sigma)
		for j := range nFine {
			u = append(u, toPriorU(fp, lo+(hi-lo)*float64(j)/float64(nFine-1)))
		}
		sort.Float64s(u)
		u = slices.CompactFunc(u, func(a, b float64) bool { return math.Abs(a-b) < 1e-12 })
		grid[d] = u
		w := make([]float64, len(u))
		for j := 0; j+1 < len(u); j++ {
			h := 0.5 * (u[j+1] - u[j])
			w[j] += h
			w[j+1] += h
		}
		wts[d] = w
	}
	theta := append([]float64(nil), f.Theta...)
	pos := make([]int, len(params))
	maxTerm := math.Inf(-1)
	var terms []float64
	for {
		lw := 0.0
		for d := range params {
			fp := m.Free[idx[d]]
			theta[idx[d]] = fromPriorU(fp, grid[d][pos[d]])
			lw += math.Log(wts[d][pos[d]])
		}
		term := o.logL(theta) + lw
		terms = append(terms, term)
		maxTerm = math.Max(maxTerm, term)
		d := 0
		for ; d < len(pos); d++ {
			pos[d]++
			if pos[d] < len(grid[d]) {
				break
			}
			pos[d] = 0
		}
		if d == len(pos) {
			break
		}
	}
	if math.IsInf(maxTerm, -1) {
		return math.NaN(), len(terms), false
	}
	var s float64
	for _, t := range terms {
		s += math.Exp(t - maxTerm)
	}
	// With nuisance parameters they are held at the fit's values, their
	// constraint terms included.
	return maxTerm + math.Log(s) + f.LogPrior, len(terms), true
}

// toPriorU maps θ to its prior CDF; fromPriorU inverts it.
func toPriorU(f FreeParam, v float64) float64 {
	if f.LogPrior {
		return (math.Log(v) - math.Log(f.Min)) / (math.Log(f.Max) - math.Log(f.Min))
	}
	return (v - f.Min) / (f.Max - f.Min)
}

func fromPriorU(f FreeParam, u float64) float64 {
	if f.LogPrior {
		return math.Min(f.Max, math.Max(f.Min, math.Exp(math.Log(f.Min)+u*(math.Log(f.Max)-math.Log(f.Min)))))
	}
	return math.Min(f.Max, math.Max(f.Min, f.Min+u*(f.Max-f.Min)))
}
