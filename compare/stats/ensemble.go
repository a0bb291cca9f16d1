package stats

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
)

// Ensemble is the affine-invariant ensemble sampler of Goodman & Weare
// (2010, Comm. App. Math. Comp. Sci. 5, 65) with their stretch move. It is
// serial: walkers are updated one after the other within a step, each
// against the current positions of all the others (the original algorithm
// of the paper; the split-ensemble variant exists only to parallelise).
// All randomness comes from the *rand.Rand handed to Run, so a seed fixes
// the chain bit for bit.
type Ensemble struct {
	logProb func(x []float64) float64
	a       float64 // stretch scale
	walkers int
	dim     int

	pos    []float64 // current positions, walkers × dim
	lp     []float64 // current log-probabilities
	chain  []float64 // stored steps × walkers × dim
	lpHist []float64 // stored steps × walkers
	steps  int
	accept []int // accepted proposals per walker
	tried  int   // proposals per walker
	prop   []float64
}

// NewEnsemble starts an ensemble at init (one position per walker, all of
// the same dimension) for the log-density logProb, which may return −Inf
// outside the support but must be finite at every starting position. a is
// the stretch scale (Goodman & Weare's a; 2 is their recommendation and
// common practice). There must be more walkers than dimensions, or the
// ensemble cannot span the space; about twice the dimension or more is
// advisable. The positions are copied.
func NewEnsemble(logProb func(x []float64) float64, init [][]float64, a float64) (*Ensemble, error) {
	if logProb == nil {
		return nil, errors.New("stats: NewEnsemble needs a log-probability function")
	}
	if !(a > 1) {
		return nil, fmt.Errorf("stats: stretch scale a must exceed 1, got %g (2 is usual)", a)
	}
	if len(init) == 0 || len(init[0]) == 0 {
		return nil, errors.New("stats: NewEnsemble needs at least one walker position of dimension ≥ 1")
	}
	dim := len(init[0])
	if len(init) <= dim {
		return nil, fmt.Errorf("stats: %d walkers cannot span %d dimensions; use at least %d (about %d is advisable)", len(init), dim, dim+1, 2*dim+2)
	}
	e := &Ensemble{
		logProb: logProb,
		a:       a,
		walkers: len(init),
		dim:     dim,
		pos:     make([]float64, len(init)*dim),
		lp:      make([]float64, len(init)),
		accept:  make([]int, len(init)),
		prop:    make([]float64, dim),
	}
	for w, x := range init {
		if len(x) != dim {
			return nil, fmt.Errorf("stats: walker %d has dimension %d, walker 0 has %d", w, len(x), dim)
		}
		copy(e.pos[w*dim:], x)
		e.lp[w] = logProb(e.pos[w*dim : w*dim+dim])
		if math.IsNaN(e.lp[w]) || math.IsInf(e.lp[w], 0) {
			return nil, fmt.Errorf("stats: log-probability at the start of walker %d is %g; start every walker where it is finite", w, e.lp[w])
		}
	}
	return e, nil
}

// Run advances every walker nSteps times and stores the positions after
// each step. progress, if not nil, is called after each step with the
// number of steps done in this call. A NaN log-probability is an error
// naming the walker and step; −Inf simply rejects the proposal.
func (e *Ensemble) Run(r *rand.Rand, nSteps int, progress func(done, total int)) error {
	if nSteps < 0 {
		return fmt.Errorf("stats: Run needs nSteps ≥ 0, got %d", nSteps)
	}
	d := e.dim
	e.chain = slices.Grow(e.chain, nSteps*e.walkers*d)
	e.lpHist = slices.Grow(e.lpHist, nSteps*e.walkers)
	for s := 0; s < nSteps; s++ {
		for k := 0; k < e.walkers; k++ {
			// Partner j ≠ k, uniform over the others.
			j := r.IntN(e.walkers - 1)
			if j >= k {
				j++
			}
			// z from g(z) ∝ 1/√z on [1/a, a] by inversion.
			z := (e.a - 1) * r.Float64()
			z = (z + 1) * (z + 1) / e.a
			xk := e.pos[k*d : k*d+d]
			xj := e.pos[j*d : j*d+d]
			for i := range e.prop {
				e.prop[i] = xj[i] + z*(xk[i]-xj[i])
			}
			lp := e.logProb(e.prop)
			if math.IsNaN(lp) {
				return fmt.Errorf("stats: log-probability is NaN at step %d, walker %d; return −Inf outside the support instead", e.steps, k)
			}
			lnq := float64(d-1)*math.Log(z) + lp - e.lp[k]
			if math.Log(r.Float64()) < lnq {
				copy(xk, e.prop)
				e.lp[k] = lp
				e.accept[k]++
			}
		}
		e.tried++
		e.chain = append(e.chain, e.pos...)
		e.lpHist = append(e.lpHist, e.lp...)
		e.steps++
		if progress != nil {
			progress(s+1, nSteps)
		}
	}
	return nil
}

// Walkers returns the number of walkers.
func (e *Ensemble) Walkers() int { return e.walkers }

// Dim returns the dimension of the parameter space.
func (e *Ensemble) Dim() int { return e.dim }

// Steps returns the number of stored steps.
func (e *Ensemble) Steps() int { return e.steps }

// Position returns the stored position of walker w after step s (0-based).
// The slice aliases the chain and must not be modified.
func (e *Ensemble) Position(s, w int) []float64 {
	off := (s*e.walkers + w) * e.dim
	return e.chain[off : off+e.dim : off+e.dim]
}

// LogProb returns the stored log-probability of walker w after step s.
func (e *Ensemble) LogProb(s, w int) float64 { return e.lpHist[s*e.walkers+w] }

// AcceptanceFraction returns, per walker, the fraction of proposals
// accepted so far. Goodman & Weare's move works well at roughly 0.2–0.5
// (common practice, no source).
func (e *Ensemble) AcceptanceFraction() []float64 {
	f := make([]float64, e.walkers)
	if e.tried == 0 {
		return f
	}
	for i, a := range e.accept {
		f[i] = float64(a) / float64(e.tried)
	}
	return f
}

// Flat returns the stored positions from step burn on, every thin-th step,
// all walkers pooled, as one slice of samples × dim (row-major).
func (e *Ensemble) Flat(burn, thin int) (samples []float64, n int) {
	if thin < 1 {
		thin = 1
	}
	for s := max(burn, 0); s < e.steps; s += thin {
		off := s * e.walkers * e.dim
		samples = append(samples, e.chain[off:off+e.walkers*e.dim]...)
		n += e.walkers
	}
	return samples, n
}

// Series returns the stored values of coordinate i of walker w from step
// burn on, for autocorrelation analysis.
func (e *Ensemble) Series(w, i, burn int) []float64 {
	burn = max(burn, 0)
	out := make([]float64, 0, max(e.steps-burn, 0))
	for s := burn; s < e.steps; s++ {
		out = append(out, e.chain[(s*e.walkers+w)*e.dim+i])
	}
	return out
}

// AutocorrTime returns, for each coordinate, the integrated autocorrelation
// time of the chain from step burn on, estimated as in AutocorrTimeWalkers
// from all walkers. ok is false for a coordinate whose chain is shorter
// than 50 τ, where the estimate is not to be trusted (the threshold is the
// common-practice one; Sokal 1997).
func (e *Ensemble) AutocorrTime(burn int, c float64) (tau []float64, ok []bool) {
	tau = make([]float64, e.dim)
	ok = make([]bool, e.dim)
	series := make([][]float64, e.walkers)
	for i := 0; i < e.dim; i++ {
		for w := range series {
			series[w] = e.Series(w, i, burn)
		}
		t, _ := AutocorrTimeWalkers(series, c)
		tau[i] = t
		ok[i] = float64(len(series[0])) > 50*t
	}
	return tau, ok
}
