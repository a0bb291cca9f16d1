package compare

import (
	"context"
	"errors"
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"
	"sync"

	"gonum.org/v1/gonum/floats"
)

// NuisanceParam is a parameter of the physics or of the selection — a
// spin-down coefficient, a period scatter, a detection threshold, a color
// zero point — fitted together with the history because the answer
// depends on it and its value is known only roughly. It is named by its
// scenario path.
type NuisanceParam struct {
	Name     string
	Nominal  float64 // the scenario's value: the centre of the prior
	Min, Max float64 // hard bounds of the fit
	// Sigma is the width of a Gaussian prior about Nominal (a constraint
	// term −½((ν − Nominal)/Sigma)² in ln L, as for a parameter measured
	// elsewhere); 0 means a flat prior on [Min, Max].
	Sigma float64
	// Step is the distance from the centre at which templates are made
	// for the quadratic interpolation (see Nuisance); 0 means Sigma, or an
	// eighth of the range when the prior is flat.
	Step float64
	// Starts are values the joint fit tries before its search begins (see
	// FitJoint): for a parameter whose effect is far from quadratic over
	// its range, so that a search from one value can stop on a local
	// maximum. Empty: the starting value alone.
	Starts []float64
	// Linear says the templates are linear in this parameter (a
	// detection efficiency or a share that multiplies each star's
	// weight): the expansion's quadratic term is then zero, so it makes
	// templates on one side of its centre only — or none, when the source
	// gives the derivative with the centre's templates (SlopeObserver).
	Linear bool
}

// logPrior returns the constraint term at v (0 at the nominal value).
func (p NuisanceParam) logPrior(v float64) float64 {
	if p.Sigma <= 0 {
		return 0
	}
	d := (v - p.Nominal) / p.Sigma
	return -0.5 * d * d
}

// logPriorDeriv returns d logPrior/dv.
func (p NuisanceParam) logPriorDeriv(v float64) float64 {
	if p.Sigma <= 0 {
		return 0
	}
	return -(v - p.Nominal) / (p.Sigma * p.Sigma)
}

func (p NuisanceParam) step() float64 {
	switch {
	case p.Step > 0:
		return p.Step
	case p.Sigma > 0:
		return p.Sigma
	}
	return (p.Max - p.Min) / 8
}

// Observer makes templates at given nuisance values (one per parameter,
// in order) — by re-observing stored template stars (BankObserver), never
// by a new simulation.
type Observer interface {
	Observe(ctx context.Context, values []float64) (*Templates, error)
}

// SlopeObserver is an Observer that can also give, from the same pass
// that makes the templates, their exact derivatives in some parameters —
// the first, and the second too for a parameter they are not Linear in:
// a fit's expansion then needs no re-observation for those at all.
type SlopeObserver interface {
	Observer
	// Slopes reports whether ObserveSlopes gives the derivatives in
	// parameter j.
	Slopes(j int) bool
	// ObserveSlopes returns the templates at values and, for each j in
	// params, their derivatives in values[j].
	ObserveSlopes(ctx context.Context, values []float64, params []int) (*Templates, []Slope, error)
}

// Slope holds the templates' derivatives in one parameter (Var nil):
// First = ∂Counts/∂ν, and Second = ∂²Counts/∂ν², nil where the templates
// are linear in ν.
type Slope struct {
	First, Second *Templates
}

// SideOrderer is an Observer whose re-observations cost less in some
// orders than in others (a memo of the last points' per-star work, as
// model.Bank keeps): SideOrder ranks each parameter, and a fit's
// expansion makes the side points of lower ranks first. The order changes
// no number, only the time.
type SideOrderer interface {
	Observer
	SideOrder() []int
}

// Nuisance is the nuisance part of a model: its parameters and where
// templates at other values come from.
//
// How a fit moves them cheaply. Templates at the centre ν_c and at
// ν_c ± δ_j for each parameter j (2J + 1 re-observations; one side only
// for a parameter the templates are Linear in, none when the source
// gives the derivative in it with the centre's templates) fix, bin by bin,
// a quadratic in each ν_j through the three points, continued linearly
// beyond them; the templates at any ν are the centre's plus the sum of
// the J changes ("vertical" template interpolation, the piecewise-quadratic
// form HistFactory uses for shape systematics: Cranmer et al. 2012,
// CERN-OPEN-2012-016) [memory]. A likelihood evaluation after a nuisance
// change is then 2J + 1 scaled matrix additions, with an exact gradient.
// Interactions between parameters are left out, so a fit re-centres the
// expansion on its answer and fits again until the answer stays within
// half a step of the centre: the final likelihood is then computed from
// templates made exactly at the fitted values.
type Nuisance struct {
	Params []NuisanceParam
	Source Observer

	mu     sync.Mutex
	cache  map[string]*Templates
	slopes map[string][]Slope // derivatives (slopeParams' order) by values
	order  []string           // cache's keys, oldest first
}

// maxCachedSets bounds the sets of templates a Nuisance keeps (the
// oldest go first). A fit asks again only for points of its last round or
// two, and each set is megabytes: a burst test over many catalogs that kept
// every point it ever scored grew past 24 GB. Templates dropped are made
// again, to the same numbers, if asked for.
const maxCachedSets = 48

// Validate checks the parameters.
func (n *Nuisance) Validate() error {
	if n == nil {
		return nil
	}
	if n.Source == nil {
		return errors.New("compare: nuisance parameters need a source of templates")
	}
	seen := map[string]bool{}
	size := 1
	for _, p := range n.Params {
		switch {
		case seen[p.Name]:
			return fmt.Errorf("compare: nuisance parameter %q is listed twice", p.Name)
		case !(p.Min < p.Max) || math.IsInf(p.Min, 0) || math.IsInf(p.Max, 0):
			return fmt.Errorf("compare: nuisance parameter %q has bounds [%g, %g]; want finite min < max", p.Name, p.Min, p.Max)
		case !(p.Nominal >= p.Min && p.Nominal <= p.Max):
			return fmt.Errorf("compare: nuisance parameter %q: its scenario value %g lies outside its bounds [%g, %g]", p.Name, p.Nominal, p.Min, p.Max)
		case p.Sigma < 0 || p.Step < 0 || math.IsNaN(p.Sigma) || math.IsNaN(p.Step):
			return fmt.Errorf("compare: nuisance parameter %q: prior width %g and step %g must be ≥ 0", p.Name, p.Sigma, p.Step)
		}
		for _, v := range p.Starts {
			if !(v >= p.Min && v <= p.Max) {
				return fmt.Errorf("compare: nuisance parameter %q: starting value %g lies outside its bounds [%g, %g]", p.Name, v, p.Min, p.Max)
			}
		}
		if len(p.Starts) > 0 && size <= maxStartGrid {
			size *= len(p.Starts)
		}
		seen[p.Name] = true
	}
	if size > maxStartGrid {
		return fmt.Errorf("compare: the nuisance parameters' starting values make a grid of more than %d points (each is a re-observation and a fit)", maxStartGrid)
	}
	return nil
}

// Dim returns the number of nuisance parameters (0 for nil).
func (n *Nuisance) Dim() int {
	if n == nil {
		return 0
	}
	return len(n.Params)
}

// Names returns the parameters' names.
func (n *Nuisance) Names() []string {
	if n == nil {
		return nil
	}
	out := make([]string, len(n.Params))
	for i, p := range n.Params {
		out[i] = p.Name
	}
	return out
}

// Nominal returns the parameters' scenario values.
func (n *Nuisance) Nominal() []float64 {
	out := make([]float64, n.Dim())
	for i, p := range n.Params {
		out[i] = p.Nominal
	}
	return out
}

// LogPrior returns Σ_j of the constraint terms at values.
func (n *Nuisance) LogPrior(values []float64) float64 {
	var s float64
	for j, p := range n.Params {
		s += p.logPrior(values[j])
	}
	return s
}

// Templates returns the templates at values, made once and kept: a fit
// asks for the same points again when it re-centres, and the bootstrap
// replicates share the data's.
func (n *Nuisance) Templates(ctx context.Context, values []float64) (*Templates, error) {
	key := valuesKey(values)
	n.mu.Lock()
	t, ok := n.cache[key]
	n.mu.Unlock()
	if ok {
		return t, nil
	}
	t, err := n.Source.Observe(ctx, values)
	if err != nil {
		return nil, fmt.Errorf("compare: templates at %s: %w", n.describe(values), err)
	}
	t, _ = n.store(key, t, nil)
	return t, nil
}

// store keeps templates t (and derivatives ds, when not nil) made at the
// values of key, returning the set to use: one already kept for key has
// the same numbers, and others may hold it.
func (n *Nuisance) store(key string, t *Templates, ds []Slope) (*Templates, []Slope) {
	n.mu.Lock()
	defer n.mu.Unlock()
	if n.cache == nil {
		n.cache = map[string]*Templates{}
	}
	if old, ok := n.cache[key]; ok {
		t = old
	} else {
		n.order = append(n.order, key)
		for len(n.order) > maxCachedSets {
			delete(n.cache, n.order[0])
			delete(n.slopes, n.order[0])
			n.order = n.order[1:]
		}
	}
	n.cache[key] = t
	if ds != nil {
		if n.slopes == nil {
			n.slopes = map[string][]Slope{}
		}
		n.slopes[key] = ds
	}
	return t, ds
}

// slopeParams returns the parameters whose template derivatives the
// source gives directly (see SlopeObserver), in order.
func (n *Nuisance) slopeParams() []int {
	so, ok := n.Source.(SlopeObserver)
	if !ok {
		return nil
	}
	var out []int
	for j := range n.Params {
		if so.Slopes(j) {
			out = append(out, j)
		}
	}
	return out
}

// templatesAndSlopes returns the templates at values and their
// derivatives in the parameters of slopeParams (in that order), made in
// one pass and kept as Templates keeps its sets.
func (n *Nuisance) templatesAndSlopes(ctx context.Context, values []float64) (*Templates, []Slope, error) {
	params := n.slopeParams()
	if len(params) == 0 {
		t, err := n.Templates(ctx, values)
		return t, nil, err
	}
	key := valuesKey(values)
	n.mu.Lock()
	t, ok := n.cache[key]
	ds, dok := n.slopes[key]
	n.mu.Unlock()
	if ok && dok {
		return t, ds, nil
	}
	t, ds, err := n.Source.(SlopeObserver).ObserveSlopes(ctx, values, params)
	if err != nil {
		return nil, nil, fmt.Errorf("compare: templates and their derivatives at %s: %w", n.describe(values), err)
	}
	if len(ds) != len(params) {
		return nil, nil, fmt.Errorf("compare: the source gave derivatives in %d parameters at %s; %d asked", len(ds), n.describe(values), len(params))
	}
	for i, j := range params {
		switch {
		case ds[i].First == nil:
			return nil, nil, fmt.Errorf("compare: the source gave no derivative in %s", n.Params[j].Name)
		case !n.Params[j].Linear && ds[i].Second == nil:
			return nil, nil, fmt.Errorf("compare: the source gave no second derivative in %s, which the templates are not linear in (mark it Linear if they are)", n.Params[j].Name)
		}
	}
	t, ds = n.store(key, t, ds)
	return t, ds, nil
}

// ResetCache forgets every set of templates made so far (for timing a
// fit from scratch).
func (n *Nuisance) ResetCache() {
	n.mu.Lock()
	n.cache, n.slopes, n.order = nil, nil, nil
	n.mu.Unlock()
}

func valuesKey(v []float64) string {
	var b strings.Builder
	for _, x := range v {
		b.WriteString(strconv.FormatUint(math.Float64bits(x), 16))
		b.WriteByte(',')
	}
	return b.String()
}

func (n *Nuisance) describe(values []float64) string {
	parts := make([]string, len(values))
	for j, v := range values {
		parts[j] = fmt.Sprintf("%s = %.4g", n.Params[j].Name, v)
	}
	return strings.Join(parts, ", ")
}

// morph is the expansion of the templates about a centre (see Nuisance),
// in a likelihood's bins-major layout: rows(ν) = t0 + Σ_j x_j a_j +
// β_j(x_j) b_j with x_j = ν_j − centre_j, β_j = x_j² between the two
// side points and continued linearly beyond them.
type morph struct {
	centre []float64
	lo, hi []float64   // the side points' distances below and above the centre (≥ 0)
	t0     []float64   // bins-major templates at the centre
	var0   []float64   // and their variances
	a, b   [][]float64 // the expansion's coefficients, dense until compact
	exact  *Templates  // the centre's templates, as made
	nb, k  int
	sides  []sidePoint // the side points' values and templates

	// The expansion is kept only where it is not zero — most (bin, age)
	// entries of a template set are empty, and apply runs for every
	// likelihood evaluation of a fit: nz lists the bins-major entries any
	// of t0, a_j, b_j has, and t0c, ac[j], bc[j] their values there.
	nz     []int32
	t0c    []float64
	ac, bc [][]float64
	// rho is each nonzero entry's variance per count at the centre
	// (var0/t0; 1 where t0 is 0): the expanded templates carry the
	// variance rho·rows, so that a bin the expansion empties is not left
	// with the centre's variance — Barlow–Beeston lite would read that
	// as a template so uncertain that it fits any data.
	rho []float64
}

// sidePoint is one side point of an expansion: the nuisance values and the
// templates made there.
type sidePoint struct {
	values []float64
	tpl    *Templates
	// derived marks templates made from the centre's and its derivatives
	// (stepped), not observed: exact in the counts where they are linear
	// in the parameter, to second order where not, and approximate in the
	// variances.
	derived bool
}

// stepped returns the templates t + d·ds.First + ½d²·ds.Second (no
// second term when nil), ds the derivatives of t's counts in one
// parameter, clamped at zero (rounding can leave −1e−17). Each bin keeps
// t's variance per count, as the expansion does (morph.rho): a count
// where t has none gets a variance equal to it.
func stepped(t *Templates, ds Slope, d float64) *Templates {
	out := *t
	out.Key = "" // made here, from no scenario's templates
	out.Counts = make([]float64, len(t.Counts))
	if t.Var != nil {
		out.Var = make([]float64, len(t.Var))
	}
	for i, c := range t.Counts {
		x := c + d*ds.First.Counts[i]
		if ds.Second != nil {
			x += 0.5 * d * d * ds.Second.Counts[i]
		}
		v := math.Max(x, 0)
		out.Counts[i] = v
		if t.Var == nil {
			continue
		}
		if c > 0 {
			out.Var[i] = t.Var[i] * v / c
		} else {
			out.Var[i] = v
		}
	}
	return &out
}

// newMorph builds the expansion of nu about centre for like's layout, with
// side points at the parameters' steps (steps nil) or at steps.
func newMorph(ctx context.Context, like *Likelihood, nu *Nuisance, centre, steps []float64) (*morph, error) {
	t0, slopes, err := nu.templatesAndSlopes(ctx, centre)
	if err != nil {
		return nil, err
	}
	slopeOf := map[int]Slope{}
	for i, j := range nu.slopeParams() {
		slopeOf[j] = slopes[i]
	}
	if err := prefetchSides(ctx, nu, centre, steps, slopeOf); err != nil {
		return nil, err
	}
	mo := &morph{centre: append([]float64(nil), centre...), nb: like.nb, k: like.k, exact: t0}
	mo.t0, mo.var0, err = like.rowsOf(t0)
	if err != nil {
		return nil, err
	}
	J := nu.Dim()
	mo.lo, mo.hi = make([]float64, J), make([]float64, J)
	mo.a, mo.b = make([][]float64, J), make([][]float64, J) // dense until compact
	for j, p := range nu.Params {
		d := p.step()
		if steps != nil {
			d = steps[j]
		}
		c := centre[j]
		up, down, makeUp, makeDown := sideValues(p, c, d)
		mo.hi[j], mo.lo[j] = up-c, c-down
		if ds, ok := slopeOf[j]; ok {
			// The derivatives themselves: the expansion is the Taylor
			// series to second order (exact where the templates are
			// linear). The fit still gets side points (it scores them and
			// searches from them), made from the derivatives: one for a
			// linear parameter, both for another, as observed ones.
			if mo.a[j], _, err = like.rowsOf(ds.First); err != nil {
				return nil, err
			}
			mo.b[j] = make([]float64, len(mo.t0))
			if ds.Second != nil {
				second, _, err := like.rowsOf(ds.Second)
				if err != nil {
					return nil, err
				}
				floats.AddScaled(mo.b[j], 0.5, second)
			}
			var at []float64
			switch {
			case ds.Second == nil && mo.hi[j] > 0:
				at = []float64{up}
			case ds.Second == nil:
				at = []float64{down}
			default:
				if makeUp {
					at = append(at, up)
				}
				if down < c {
					at = append(at, down)
				}
			}
			for _, v := range at {
				vals := append([]float64(nil), centre...)
				vals[j] = v
				mo.sides = append(mo.sides, sidePoint{values: vals, tpl: stepped(t0, ds, v-c), derived: true})
			}
			continue
		}
		var fp, fm []float64
		if makeUp {
			if fp, err = mo.side(ctx, like, nu, centre, j, up); err != nil {
				return nil, err
			}
		}
		if p.Linear && makeUp {
			mo.lo[j] = 0 // the trust region reaches as far down as up
		}
		if makeDown {
			if fm, err = mo.side(ctx, like, nu, centre, j, down); err != nil {
				return nil, err
			}
		}
		a, b := make([]float64, len(mo.t0)), make([]float64, len(mo.t0))
		hp, hm := mo.hi[j], mo.lo[j]
		for i, f0 := range mo.t0 {
			switch {
			case fp != nil && fm != nil:
				dp, dm := (fp[i]-f0)/hp, (fm[i]-f0)/hm
				b[i] = (dp + dm) / (hp + hm)
				a[i] = dp - b[i]*hp
			case fp != nil:
				a[i] = (fp[i] - f0) / hp
			case fm != nil:
				a[i] = (f0 - fm[i]) / hm
			}
		}
		mo.a[j], mo.b[j] = a, b
	}
	mo.compact()
	return mo, nil
}

// compact keeps the expansion's nonzero entries (see morph).
func (mo *morph) compact() {
	for i, v := range mo.t0 {
		keep := v != 0
		for j := range mo.a {
			keep = keep || mo.a[j][i] != 0 || mo.b[j][i] != 0
		}
		if keep {
			mo.nz = append(mo.nz, int32(i))
		}
	}
	pick := func(x []float64) []float64 {
		out := make([]float64, len(mo.nz))
		for q, i := range mo.nz {
			out[q] = x[i]
		}
		return out
	}
	mo.t0c = pick(mo.t0)
	mo.rho = make([]float64, len(mo.nz))
	for q, i := range mo.nz {
		mo.rho[q] = 1
		if t := mo.t0[i]; t > 0 {
			mo.rho[q] = mo.var0[i] / t
		}
	}
	mo.ac, mo.bc = make([][]float64, len(mo.a)), make([][]float64, len(mo.b))
	for j := range mo.a {
		mo.ac[j], mo.bc[j] = pick(mo.a[j]), pick(mo.b[j])
	}
	mo.a, mo.b = nil, nil // the dense copies are not needed again
}

// sideValues returns where parameter p's side points about c lie a step d
// away, inside its range, and which of them an expansion makes: the upper
// one when it lies above c, the lower one when it lies below c — except
// for a Linear parameter that has an upper one, where one side point
// fixes the line.
func sideValues(p NuisanceParam, c, d float64) (up, down float64, makeUp, makeDown bool) {
	up, down = math.Min(c+d, p.Max), math.Max(c-d, p.Min)
	makeUp = up > c
	makeDown = down < c && !(p.Linear && makeUp)
	return up, down, makeUp, makeDown
}

// prefetchSides makes the templates of an expansion's side points (those
// newMorph will ask for: not the parameters in slopeOf) in the order the
// source's SideOrder ranks them, and keeps them in nu's cache, where
// newMorph then finds them. Without a SideOrderer it does nothing.
func prefetchSides(ctx context.Context, nu *Nuisance, centre, steps []float64, slopeOf map[int]Slope) error {
	so, ok := nu.Source.(SideOrderer)
	if !ok || len(so.SideOrder()) != nu.Dim() {
		return nil
	}
	rank := so.SideOrder()
	if 2*(nu.Dim()-len(slopeOf))+1 > maxCachedSets {
		// More side points than the cache keeps: the first made would be
		// dropped before newMorph reads them, and made twice.
		return nil
	}
	order := make([]int, nu.Dim())
	for j := range order {
		order[j] = j
	}
	sort.SliceStable(order, func(a, b int) bool { return rank[order[a]] < rank[order[b]] })
	for _, j := range order {
		if _, derived := slopeOf[j]; derived {
			continue
		}
		p := nu.Params[j]
		d := p.step()
		if steps != nil {
			d = steps[j]
		}
		c := centre[j]
		up, down, makeUp, makeDown := sideValues(p, c, d)
		vals := []float64{}
		if makeUp {
			vals = append(vals, up)
		}
		if makeDown {
			vals = append(vals, down)
		}
		for _, v := range vals {
			at := append([]float64(nil), centre...)
			at[j] = v
			if _, err := nu.Templates(ctx, at); err != nil {
				return err
			}
		}
	}
	return nil
}

// side returns the bins-major templates with parameter j at v.
func (mo *morph) side(ctx context.Context, like *Likelihood, nu *Nuisance, centre []float64, j int, v float64) ([]float64, error) {
	vals := append([]float64(nil), centre...)
	vals[j] = v
	t, err := nu.Templates(ctx, vals)
	if err != nil {
		return nil, err
	}
	mo.sides = append(mo.sides, sidePoint{values: vals, tpl: t})
	rows, _, err := like.rowsOf(t)
	return rows, err
}

// trustReach is how far beyond its side points an expansion is trusted,
// in steps: a fit on the expansion may not move a nuisance parameter
// further from the centre than this many steps.
const trustReach = 2

// linearReach is trustReach for a parameter the templates are Linear in:
// the expansion is exact along it, and only its interactions with the
// other parameters (left out) limit how far it can be trusted, so a fit
// may move it much further in a round — eight steps, the whole range at
// the default step — and still halves that reach when the proposal,
// scored on exact templates, disappoints. A search loss whose efficiency
// falls from 1 to 0.3 would otherwise take a dozen rounds to walk there.
const linearReach = 8

// trustRegion returns the bounds a fit on the expansion keeps each
// nuisance parameter in: trustReach steps either side of the centre,
// inside the parameter's own bounds. Far outside its side points a
// bin-wise quadratic continued linearly can take shapes no set of
// templates has — a bootstrap replicate refitted there would be fitted by
// artefacts, not by the model.
func (mo *morph) trustRegion(nu *Nuisance) (lo, hi []float64) {
	lo, hi = make([]float64, len(mo.centre)), make([]float64, len(mo.centre))
	for j, p := range nu.Params {
		c := mo.centre[j]
		down, up := mo.lo[j], mo.hi[j]
		if down == 0 {
			down = up
		}
		if up == 0 {
			up = down
		}
		reach := float64(trustReach)
		if p.Linear {
			reach = linearReach
		}
		lo[j] = math.Max(p.Min, c-reach*down)
		hi[j] = math.Min(p.Max, c+reach*up)
	}
	return lo, hi
}

// beta returns β_j(x) and dβ_j/dx.
func (mo *morph) beta(j int, x float64) (b, db float64) {
	hp, hm := mo.hi[j], mo.lo[j]
	switch {
	case x > hp:
		return 2*hp*x - hp*hp, 2 * hp
	case x < -hm:
		return -2*hm*x - hm*hm, -2 * hm
	}
	return x * x, 2 * x
}

// apply writes the templates at values into dst (bins-major), clamped at
// zero; clamped marks the entries the clamp changed (their derivative is
// zero), when not nil. Entries outside the expansion's nonzero set are
// zero in every template set; apply writes them as zero. scratch (nil, or
// at least len(nz) long) is the caller's: a morph is shared, read-only, by
// the goroutines of a bootstrap.
func (mo *morph) apply(values, dst, dstVar []float64, clamped []bool, scratch []float64) {
	n := len(mo.nz)
	if cap(scratch) < n {
		scratch = make([]float64, n)
	}
	x := scratch[:n]
	copy(x, mo.t0c)
	for j, v := range values {
		d := v - mo.centre[j]
		if d == 0 {
			continue
		}
		bj, _ := mo.beta(j, d)
		floats.AddScaled(x, d, mo.ac[j])
		floats.AddScaled(x, bj, mo.bc[j])
	}
	clear(dst)
	clear(dstVar)
	if clamped != nil {
		clear(clamped)
	}
	for q, i := range mo.nz {
		v := x[q]
		if v < 0 {
			v = 0
			if clamped != nil {
				clamped[i] = true
			}
		}
		dst[i] = v
		dstVar[i] = mo.rho[q] * v
	}
}

// gradient adds to g[j] the derivative of ln L with respect to values[j],
// Σ_ik (dm_i w_k + dv_i w_k² rho_ik) ∂rows_ik/∂ν_j over the entries the
// clamp left alone (the variance follows the rows), using c (at least
// len(nz)) as scratch; dv is nil for exact templates.
func (mo *morph) gradient(values, w, dm, dv []float64, clamped []bool, c, g []float64) {
	k := mo.k
	c = c[:len(mo.nz)]
	for q, i := range mo.nz {
		if clamped[i] {
			c[q] = 0
			continue
		}
		b, j := int(i)/k, int(i)%k
		c[q] = dm[b] * w[j]
		if dv != nil {
			c[q] += dv[b] * w[j] * w[j] * mo.rho[q]
		}
	}
	for j, v := range values {
		_, db := mo.beta(j, v-mo.centre[j])
		s := floats.Dot(c, mo.ac[j])
		if db != 0 {
			s += db * floats.Dot(c, mo.bc[j])
		}
		g[j] += s
	}
}
