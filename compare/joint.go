package compare

import (
	"context"
	"fmt"
	"math"
	"runtime"
	"sort"
	"sync"
	"sync/atomic"

	"spinpop/internal/workerpanic"
)

// MaxRounds bounds the expansions a joint fit makes by default (see
// FitJoint and FitOptions.MaxRounds), and
// minStepFraction how far its trust region may shrink.
const (
	MaxRounds       = 12
	minStepFraction = 1.0 / 32
)

// FitJoint maximises the likelihood over the history's free parameters and
// the nuisance parameters together (nu nil or empty: Fit).
//
// It is a trust-region search in which the expansion of the templates (see
// Nuisance) is the model and templates made exactly are the judge. A
// round expands the templates about the current centre with side points
// one step away in each parameter, fits history and nuisance parameters
// together on the expansion, and then scores the centre, every side point
// and the expansion's proposal with exact templates (the history refitted
// at each: the profile likelihood). The best of them becomes the next
// centre, and the move that reached it is repeated while repeating gains
// (extrapolate). When the centre stays best, the steps halve if the proposal lay
// more than a tenth of a step away — the expansion misled, as a quadratic
// in each bin can when a ridge moves across bins — and the search ends when
// the proposal agrees with the centre or the steps have shrunk 32-fold. The
// answer is the final centre: Nuisance, Templates, Weights and LogL all
// belong to that one point, made exactly; like's templates are left there.
//
// With a starting grid (NuisanceParam.Starts) the search runs from the
// grid's two best points; the better answer is returned and the other is
// kept in OtherMaxima.
func FitJoint(ctx context.Context, like *Likelihood, m HistoryModel, nu *Nuisance, opts FitOptions) (FitResult, error) {
	if nu.Dim() == 0 {
		return Fit(like, m, opts)
	}
	if err := m.Validate(); err != nil {
		return FitResult{}, err
	}
	if err := nu.Validate(); err != nil {
		return FitResult{}, err
	}
	if len(m.AgeEdgesGyr)-1 != like.NumAgeBins() {
		return FitResult{}, fmt.Errorf("compare: the history model has %d age bins, the templates %d; use the templates' age edges", len(m.AgeEdgesGyr)-1, like.NumAgeBins())
	}
	if opts.Starts <= 0 {
		opts.Starts = 4
	}
	if opts.MaxRounds <= 0 {
		opts.MaxRounds = MaxRounds
	}
	centre := nu.Nominal()
	if opts.NuisanceStart != nil {
		centre = append([]float64(nil), opts.NuisanceStart...)
	}
	evals := 0
	// The centre's profile likelihood, with every history start.
	first, err := profileAtValues(ctx, like, m, nu, centre, opts)
	if err != nil {
		return FitResult{}, err
	}
	evals += first.Evaluations
	// The starting grid: every combination of the parameters' Starts
	// (the others at the centre), scored exactly. The search runs from the
	// best point and, when there is a grid, from the second best too: the
	// likelihood over many nuisance parameters can have several maxima,
	// and one search cannot tell whether another lies near in ln L but
	// far in the answer (FitResult.OtherMaxima). A given NuisanceStart (a
	// previous answer) skips the grid.
	scored := []FitResult{first}
	if opts.NuisanceStart == nil {
		for _, v := range nu.startGrid(centre) {
			if err := ctx.Err(); err != nil {
				return FitResult{}, err
			}
			r, err := profileAtValues(ctx, like, m, nu, v, FitOptions{Starts: 1, Init: [][]float64{first.Theta}, Seed: opts.Seed})
			if err != nil {
				return FitResult{}, err
			}
			evals += r.Evaluations
			if opts.Stage != nil {
				opts.Stage(fmt.Sprintf("starting grid: ln L = %.2f at %s", r.LogL, nu.describe(v)))
			}
			scored = append(scored, r)
		}
	}
	// Stable: among equal ln L the earlier point (the centre first) wins.
	sort.SliceStable(scored, func(a, b int) bool { return scored[a].LogL > scored[b].LogL })
	searches := min(len(scored), gridSearches)
	var best FitResult
	var mo *morph
	var steps []float64
	var others []FitResult
	for k := range searches {
		if opts.Stage != nil && searches > 1 {
			opts.Stage(fmt.Sprintf("search %d of %d from the starting grid", k+1, searches))
		}
		r, rmo, rsteps, err := searchFrom(ctx, like, m, nu, scored[k], opts)
		if err != nil {
			return FitResult{}, err
		}
		evals += r.Evaluations
		if k == 0 || r.LogL > best.LogL {
			if k > 0 {
				others = append(others, best)
			}
			best, mo, steps = r, rmo, rsteps
		} else {
			others = append(others, r)
		}
	}
	centre = best.Nuisance
	// The answer and the expansion about it, for the bootstrap replicates.
	if mo == nil || !equalValues(mo.centre, centre) {
		if mo, err = newMorph(ctx, like, nu, centre, steps); err != nil {
			return FitResult{}, err
		}
	}
	if err := like.SetTemplates(mo.exact); err != nil {
		return FitResult{}, err
	}
	best.Templates = mo.exact
	best.morph = mo
	best.Evaluations = evals
	for _, o := range others {
		best.OtherMaxima = append(best.OtherMaxima, asLocalMaximum(o))
	}
	return best, nil
}

// gridSearches is how many of the starting grid's best points the joint
// fit searches from (see FitJoint): two, so that a second maximum can be
// seen, at twice the cost of a fit with a grid.
const gridSearches = 2

// searchFrom runs the trust-region search of FitJoint from the scored
// point start and returns its answer (Rounds, RoundLimit and Evaluations
// its own), the last expansion made and the steps it ended with.
func searchFrom(ctx context.Context, like *Likelihood, m HistoryModel, nu *Nuisance, start FitResult, opts FitOptions) (FitResult, *morph, []float64, error) {
	best := start
	centre := append([]float64(nil), start.Nuisance...)
	steps := make([]float64, nu.Dim())
	for j, p := range nu.Params {
		steps[j] = p.step()
	}
	evals := 0
	var err error
	var mo *morph
	round := 0
	improving := false // the last round moved the centre
	lastGain := 0.0    // what it gained
	for round < opts.MaxRounds {
		round++
		if err := ctx.Err(); err != nil {
			return FitResult{}, nil, nil, err
		}
		if opts.Stage != nil {
			opts.Stage(fmt.Sprintf("expansion %d: ln L = %.2f at %s", round, best.LogL, nu.describe(centre)))
		}
		if mo, err = newMorph(ctx, like, nu, centre, steps); err != nil {
			return FitResult{}, nil, nil, err
		}
		warm := FitOptions{Starts: 1, Init: [][]float64{best.Theta}, Seed: opts.Seed}
		cand := best
		// Every side point, scored exactly, and the point that takes every
		// improving side step at once (a pattern move: it lets the search
		// move in several parameters per round).
		gain := make([]float64, nu.Dim())
		combined := append([]float64(nil), centre...)
		profiles := make([]FitResult, len(mo.sides))
		if err := onCopies(like, len(mo.sides), opts.Workers, func(i int, l *Likelihood) error {
			var err error
			profiles[i], err = profileWith(l, m, nu, mo.sides[i].values, mo.sides[i].tpl, warm)
			return err
		}); err != nil {
			return FitResult{}, nil, nil, err
		}
		for i, sp := range mo.sides {
			r := profiles[i]
			evals += r.Evaluations
			if sp.derived && r.LogL > cand.LogL {
				// It would win: score it on templates made there.
				if r, err = profileAtValues(ctx, like, m, nu, sp.values, warm); err != nil {
					return FitResult{}, nil, nil, err
				}
				evals += r.Evaluations
			}
			if r.LogL > cand.LogL {
				cand = r
			}
			for j := range sp.values {
				if d := r.LogL - best.LogL; sp.values[j] != centre[j] && d > gain[j] {
					gain[j], combined[j] = d, sp.values[j]
				}
			}
		}
		moves := 0
		for j := range gain {
			if gain[j] > 0 {
				moves++
			}
		}
		if moves > 1 {
			r, err := profileAtValues(ctx, like, m, nu, combined, FitOptions{Starts: 1, Init: [][]float64{cand.Theta, best.Theta}, Seed: opts.Seed})
			if err != nil {
				return FitResult{}, nil, nil, err
			}
			evals += r.Evaluations
			if r.LogL > cand.LogL {
				cand = r
			}
		}
		// The expansion's proposal, searched from the centre and from side
		// points: where the data want two parameters moved together (a
		// ridge across the axes), a search from the centre alone can stop
		// at a local maximum beside it. The first round starts from every
		// side point; later ones, near the answer, from the best.
		o := newObjective(like, m, nu, mo)
		prop, err := o.fit(m, FitOptions{Starts: 1, Init: [][]float64{best.Theta}, Seed: opts.Seed}, centre)
		if err != nil {
			return FitResult{}, nil, nil, err
		}
		var starts [][]float64
		if round == 1 {
			for _, sp := range mo.sides {
				starts = append(starts, sp.values)
			}
		} else if cand.Nuisance != nil && !equalValues(cand.Nuisance, centre) {
			starts = append(starts, cand.Nuisance)
		}
		fits := make([]FitResult, len(starts))
		fitted := make([]bool, len(starts))
		fitEvals := make([]int, len(starts))
		if err := onCopies(like, len(starts), opts.Workers, func(i int, l *Likelihood) error {
			oi := newObjective(l, m, nu, mo)
			r, err := oi.fit(m, FitOptions{Starts: 1, Init: [][]float64{cand.Theta, best.Theta}, Seed: opts.Seed}, starts[i])
			fits[i], fitted[i], fitEvals[i] = r, err == nil, oi.evals
			return nil // a start that fails is passed over
		}); err != nil {
			return FitResult{}, nil, nil, err
		}
		prop.Evaluations = o.evals
		for i, r := range fits {
			prop.Evaluations += fitEvals[i]
			if fitted[i] && r.LogL > prop.LogL {
				n := prop.Evaluations
				prop = r
				prop.Evaluations = n
			}
		}
		evals += prop.Evaluations
		far := false
		for j := range steps {
			if math.Abs(prop.Nuisance[j]-centre[j]) > 0.1*steps[j] {
				far = true
			}
		}
		if far {
			r, err := profileAtValues(ctx, like, m, nu, prop.Nuisance, FitOptions{Starts: 1, Init: [][]float64{prop.Theta, best.Theta}, Seed: opts.Seed})
			if err != nil {
				return FitResult{}, nil, nil, err
			}
			evals += r.Evaluations
			if r.LogL > cand.LogL {
				cand = r
			}
		}
		if cand.LogL > best.LogL+1e-9 {
			// A move of a whole step in a parameter says the answer may lie
			// further: that parameter's step doubles (up to a quarter of
			// its range), so a long way is walked in few rounds.
			for j, p := range nu.Params {
				if math.Abs(cand.Nuisance[j]-centre[j]) >= 0.99*steps[j] {
					steps[j] = math.Min(2*steps[j], (p.Max-p.Min)/4)
				}
			}
			before, prev := best.LogL, centre
			best = cand
			centre = append([]float64(nil), cand.Nuisance...)
			r, n, err := extrapolate(ctx, like, m, nu, prev, best, opts)
			if err != nil {
				return FitResult{}, nil, nil, err
			}
			evals += n
			if r.LogL > best.LogL+1e-9 {
				best = r
				centre = append([]float64(nil), r.Nuisance...)
			}
			lastGain = best.LogL - before
			improving = true
			continue
		}
		improving, lastGain = false, 0
		if !far {
			break // the expansion agrees: the centre is the maximum
		}
		shrunk := true
		for j, p := range nu.Params {
			steps[j] *= 0.5
			if steps[j] > minStepFraction*p.step() {
				shrunk = false
			}
		}
		if shrunk {
			break
		}
	}
	best.Rounds = round
	best.RoundLimit = round == opts.MaxRounds && improving
	best.LastGain = lastGain
	best.Converged = best.Converged && !best.RoundLimit
	best.Evaluations = evals
	return best, mo, steps, nil
}

// extrapolate is the pattern move of Hooke & Jeeves (1961, J. ACM 8,
// 212) across rounds: after a round has moved the centre from prev to
// best's, the same move is tried again from there, then twice and four
// times as far while each try gains, every try scored with exact
// templates (the history refitted). Where the likelihood is a long ridge
// across several nuisance parameters — the color zero point, the binary
// share and the law's coefficients trading against each other — a round
// moves only a step or two along it (its trust region), and searches on
// the independent model's catalogs were still gaining tens in ln L a
// round after 12 rounds; repeating a successful move walks such a ridge in
// far fewer rounds. It returns the best point tried (best itself when no
// try gains) and the history fits it made.
func extrapolate(ctx context.Context, like *Likelihood, m HistoryModel, nu *Nuisance, prev []float64, best FitResult, opts FitOptions) (FitResult, int, error) {
	move := make([]float64, len(prev))
	moved := false
	for j := range prev {
		move[j] = best.Nuisance[j] - prev[j]
		moved = moved || move[j] != 0
	}
	evals := 0
	if !moved {
		return best, evals, nil
	}
	from := append([]float64(nil), best.Nuisance...)
	for _, scale := range []float64{1, 2, 4} {
		at := make([]float64, len(from))
		for j, p := range nu.Params {
			at[j] = math.Max(p.Min, math.Min(p.Max, from[j]+scale*move[j]))
		}
		if equalValues(at, best.Nuisance) {
			break // against the bounds: nowhere further to go
		}
		if err := ctx.Err(); err != nil {
			return FitResult{}, evals, err
		}
		r, err := profileAtValues(ctx, like, m, nu, at, FitOptions{Starts: 1, Init: [][]float64{best.Theta}, Seed: opts.Seed})
		if err != nil {
			return FitResult{}, evals, err
		}
		evals += r.Evaluations
		if opts.Stage != nil {
			opts.Stage(fmt.Sprintf("the last move repeated ×%g: ln L = %.2f", scale, r.LogL))
		}
		if !(r.LogL > best.LogL+1e-9) {
			break
		}
		best = r
	}
	return best, evals, nil
}

// onCopies runs job(i, l) for every i < n on up to workers goroutines
// (0: GOMAXPROCS),
// each with its own copy l of like (its data; the job sets the templates
// it needs), and returns the first error in i's order. The round's side
// points and proposal starts are independent fits that used to run one
// after the other on one core while the other waited. Jobs leave like
// itself alone and write their results by i, and a fit does not depend on
// what its copy held before, so nothing depends on the number of
// goroutines (TestFitJointSameOnAnyThreads).
func onCopies(like *Likelihood, n, workers int, job func(i int, l *Likelihood) error) error {
	if n == 0 {
		return nil
	}
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	workers = min(n, workers)
	like.markShared() // the copies only read its templates
	copies := make([]*Likelihood, workers)
	for w := range copies {
		c, err := like.withCounts(like.Counts(), false)
		if err != nil {
			return err
		}
		copies[w] = c
	}
	errs := make([]error, n)
	var next atomic.Int64
	var wg sync.WaitGroup
	panics := workerpanic.New(nil)
	for w := range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			defer panics.Catch()
			for {
				i := int(next.Add(1) - 1)
				if i >= n {
					return
				}
				errs[i] = job(i, copies[w])
			}
		}()
	}
	wg.Wait()
	panics.Repanic()
	for _, err := range errs {
		if err != nil {
			return err
		}
	}
	return nil
}

// profileAtValues fits the history with the templates made exactly at
// nuisance values v, and returns the fit with v, its constraint terms and
// its templates.
//
// The templates come with their derivatives when the source gives any
// (SlopeObserver): a point scored exactly is the next centre of the
// search if it wins, and the expansion there needs them.
func profileAtValues(ctx context.Context, like *Likelihood, m HistoryModel, nu *Nuisance, v []float64, opts FitOptions) (FitResult, error) {
	t, _, err := nu.templatesAndSlopes(ctx, v)
	if err != nil {
		return FitResult{}, err
	}
	return profileWith(like, m, nu, v, t, opts)
}

// profileWith is profileAtValues with the templates given.
func profileWith(like *Likelihood, m HistoryModel, nu *Nuisance, v []float64, t *Templates, opts FitOptions) (FitResult, error) {
	reachable, err := useAndReach(like, t)
	if err != nil {
		return FitResult{}, err
	}
	if !reachable {
		// Data stars where these templates have none: no history fits.
		return FitResult{Names: m.Names(), LogL: math.Inf(-1), Nuisance: append([]float64(nil), v...), NuisanceNames: nu.Names(), Templates: t}, nil
	}
	r, err := Fit(like, m, opts)
	if err != nil {
		return FitResult{}, err
	}
	r.Nuisance = append([]float64(nil), v...)
	r.NuisanceNames = nu.Names()
	r.LogPrior = nu.LogPrior(v)
	r.LogL += r.LogPrior
	r.Templates = t
	return r, nil
}

// maxStartGrid bounds the starting grid's size: each point costs a
// re-observation of the stored stars and a history fit. (Scenarios apply
// the same bound, scenarios.MaxStartGrid, with the key named.)
const maxStartGrid = 64

// startGrid returns the product of the parameters' Starts, the parameters
// without any held at centre; nil when none has Starts. The grid's size is
// checked by Validate.
func (n *Nuisance) startGrid(centre []float64) [][]float64 {
	grid := [][]float64{append([]float64(nil), centre...)}
	any := false
	for j, p := range n.Params {
		if len(p.Starts) == 0 {
			continue
		}
		any = true
		var next [][]float64
		for _, g := range grid {
			for _, s := range p.Starts {
				v := append([]float64(nil), g...)
				v[j] = s
				next = append(next, v)
			}
		}
		grid = next
	}
	if !any {
		return nil
	}
	return grid
}

func equalValues(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}

// refitAt fits the history and the nuisance parameters to like's data with
// the expansion mo held fixed (no new templates): what a bootstrap
// replicate does, starting from the data's answers. Its LogL includes the
// constraint terms, as FitJoint's does.
func refitAt(like *Likelihood, m HistoryModel, nu *Nuisance, mo *morph, opts FitOptions, nuStart []float64) (FitResult, error) {
	if nu.Dim() == 0 || mo == nil {
		return Fit(like, m, opts)
	}
	o := newObjective(like, m, nu, mo)
	r, err := o.fit(m, opts, nuStart)
	if err != nil {
		return r, err
	}
	r.morph = mo
	return r, nil
}

// useTemplates puts a fit's templates into like (its exact templates, or
// the expansion at its nuisance values), so that Expected and Fitted
// describe that fit. A fit without nuisance parameters uses base.
func useTemplates(like *Likelihood, f FitResult, base *Templates) error {
	switch {
	case f.morph != nil:
		rows, vars := make([]float64, like.nb*like.k), make([]float64, like.nb*like.k)
		f.morph.apply(f.Nuisance, rows, vars, nil, nil)
		like.setRows(rows, vars)
		return nil
	case f.Templates != nil:
		return like.SetTemplates(f.Templates)
	case base != nil:
		return like.SetTemplates(base)
	}
	return nil
}

// UseFit puts fit f's templates into l — those made at its nuisance
// values, for a joint fit — so that Expected, Fitted and PearsonResiduals
// describe that fit. A fit without nuisance parameters leaves l as it is.
func (l *Likelihood) UseFit(f FitResult) error { return useTemplates(l, f, nil) }
