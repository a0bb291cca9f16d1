package stats

import (
	"math"

	"gonum.org/v1/gonum/floats"
)

// Template mixtures.
//
// A model histogram is a non-negative mixture of K templates over N bins,
// μ_i = Σ_k w_k T_ki (one template per age bin, say). Templates are stored
// bins-major in one contiguous slice, T[i*K+k], so the K numbers a bin needs
// are adjacent. The log-likelihood is the Poisson one,
//
//	ln L(w) = Σ_i [n_i ln μ_i − μ_i − ln n_i!],
//
// with gradient
//
//	∂ ln L/∂w_k = Σ_i (n_i/μ_i − 1) T_ki.
//
// Empty data bins contribute only −μ_i: their ln term is skipped.
//
// Evaluation runs over blocks of mixtureBlock bins: μ for the block is one
// matrix–vector product, the per-bin logarithms and factors
// c_i = n_i/μ_i − 1 (which overwrite μ in place) are one vectorised pass,
// and the block's share of the gradient is one transposed product
// accumulated into grad (kernel.go; AVX2+FMA assembly where the processor
// has it, plain Go elsewhere). A block of 64 bins × 40 templates is 20 KiB,
// so the second pass reads it from L1. The block buffer lives on the
// stack: nothing is allocated, and concurrent calls share nothing.

// mixtureBlock is the number of bins per block; see above.
const mixtureBlock = 64

// MixtureLogL returns the Poisson log-likelihood of counts (length N) under
// the mixture of templates (bins-major, length N·K) with weights (length K).
// If some non-empty bin has μ_i ≤ 0 the result is −Inf. It allocates
// nothing.
func MixtureLogL(weights, templates, counts []float64) float64 {
	checkMixture(len(weights), templates, counts)
	var buf [mixtureBlock]float64
	return mixtureBlocks(nil, weights, templates, counts, buf[:], true)
}

// MixtureLogLGrad returns the Poisson log-likelihood like MixtureLogL and
// writes its gradient with respect to the weights into grad (length K). It
// allocates nothing. If some non-empty bin has μ_i ≤ 0 the value is −Inf
// and grad is filled with NaN: the weights lie outside the model's domain.
// For repeated evaluations against the same data, Mixture skips the empty
// bins' share of the work as well.
func MixtureLogLGrad(grad, weights, templates, counts []float64) float64 {
	checkMixture(len(weights), templates, counts)
	if len(grad) != len(weights) {
		panic("stats: MixtureLogLGrad grad length mismatch")
	}
	for j := range grad {
		grad[j] = 0
	}
	var buf [mixtureBlock]float64
	return mixtureBlocks(grad, weights, templates, counts, buf[:], true)
}

func checkMixture(k int, templates, counts []float64) {
	if k == 0 {
		panic("stats: mixture has no templates")
	}
	if len(templates) != len(counts)*k {
		panic("stats: templates length is not len(counts)·len(weights)")
	}
}

// mixtureBlocks returns Σ_i [n_i ln μ_i − ln n_i! − μ_i] over the bins
// (withMu) or Σ_i n_i ln μ_i (rows of non-empty bins only, constants left
// to the caller), and, when grad is non-nil, adds Σ_i c_i T_ki to grad with
// c_i = n_i/μ_i − 1 (withMu) or n_i/μ_i. scratch must hold mixtureBlock
// values. Outside the domain (a non-empty bin with μ ≤ 0 or NaN) it
// returns −Inf and fills grad with NaN.
func mixtureBlocks(grad, weights, rows, counts, scratch []float64, withMu bool) float64 {
	k := len(weights)
	nb := len(counts)
	sub := 0.0
	if withMu {
		sub = 1
	}
	var s float64
	for start := 0; start < nb; start += mixtureBlock {
		m := min(mixtureBlock, nb-start)
		block := rows[start*k : (start+m)*k]
		cnt := counts[start : start+m]
		mu := scratch[:m]
		gemvRows(block, m, k, weights, mu)
		sumNLog, sumMu, ok := blockTerms(mu, cnt, sub)
		if !ok {
			// The fast path declines unusual values (zero, negative,
			// subnormal, infinite); recompute the block and let the
			// plain loop decide.
			gemvRows(block, m, k, weights, mu)
			sumNLog, sumMu, ok = blockTermsGo(mu, cnt, sub)
		}
		if !ok {
			if grad != nil {
				for j := range grad {
					grad[j] = math.NaN()
				}
			}
			return math.Inf(-1)
		}
		s += sumNLog
		if withMu {
			s -= sumMu + sumLnFactorial(cnt)
		}
		if grad != nil {
			gemvRowsTAdd(block, m, k, mu, grad)
		}
	}
	return s
}

// blockTerms returns Σ_{n_i≠0} n_i ln μ_i and Σ_i μ_i over one block and
// overwrites μ_i with c_i = n_i/μ_i − sub (−sub for empty bins). ok is
// false when a non-empty bin has a μ_i the fast path does not take; μ is
// then partly overwritten and must be recomputed.
func blockTerms(mu, n []float64, sub float64) (sumNLog, sumMu float64, ok bool) {
	if !useAsmKernels || len(mu) < 4 {
		return blockTermsGo(mu, n, sub)
	}
	m4 := len(mu) &^ 3
	sumNLog, sumMu, bad := blockTermsAsm(&mu[0], &n[0], m4, sub)
	if bad != 0 {
		return 0, 0, false
	}
	tl, tm, ok := blockTermsGo(mu[m4:], n[m4:len(mu)], sub)
	return sumNLog + tl, sumMu + tm, ok
}

// blockTermsGo is blockTerms in plain Go with math.Log; ok is false only
// outside the domain (a non-empty bin with μ ≤ 0 or NaN).
func blockTermsGo(mu, n []float64, sub float64) (sumNLog, sumMu float64, ok bool) {
	n = n[:len(mu)]
	for i, v := range mu {
		sumMu += v
		ni := n[i]
		if ni == 0 {
			mu[i] = -sub
			continue
		}
		if !(v > 0) {
			return 0, 0, false
		}
		sumNLog += ni * math.Log(v)
		mu[i] = ni/v - sub
	}
	return sumNLog, sumMu, true
}

// Mixture is a template mixture prepared for many evaluations against one
// data histogram, as in a fit or a sampler run. It keeps only the rows of
// non-empty bins (compacted, bins-major), the template totals S_k = Σ_i T_ki,
// which give Σ_i μ_i = Σ_k w_k S_k and the constant part of the gradient,
// and the data-only constant Σ ln n_i!, so an evaluation touches non-empty
// bins only. A Mixture is read-only after NewMixture, so concurrent
// evaluations are safe.
type Mixture struct {
	k       int
	rows    []float64 // non-empty bins only, bins-major
	n       []float64 // their counts
	colSum  []float64 // S_k over all bins
	lnFactN float64   // Σ ln n_i!
}

// NewMixture prepares templates (bins-major, length len(counts)·nTemplates)
// against counts. The slices are copied, so the caller may reuse them.
func NewMixture(templates []float64, nTemplates int, counts []float64) *Mixture {
	checkMixture(nTemplates, templates, counts)
	k := nTemplates
	m := &Mixture{k: k, colSum: make([]float64, k)}
	nonEmpty := 0
	for _, n := range counts {
		if n != 0 {
			nonEmpty++
		}
	}
	m.rows = make([]float64, 0, nonEmpty*k)
	m.n = make([]float64, 0, nonEmpty)
	for i, n := range counts {
		row := templates[i*k : i*k+k]
		floats.Add(m.colSum, row)
		if n == 0 {
			continue
		}
		m.rows = append(m.rows, row...)
		m.n = append(m.n, n)
	}
	m.lnFactN = sumLnFactorial(m.n)
	return m
}

// SetTemplates replaces the templates (bins-major, the same length as
// before) for the same counts, reusing the Mixture's buffers: for fits in
// which the templates move with a parameter. It allocates nothing.
func (m *Mixture) SetTemplates(templates, counts []float64) {
	k := m.k
	checkMixture(k, templates, counts)
	clear(m.colSum)
	r := 0
	for i, n := range counts {
		row := templates[i*k : i*k+k]
		floats.Add(m.colSum, row)
		if n == 0 {
			continue
		}
		copy(m.rows[r*k:(r+1)*k], row)
		r++
	}
}

// NumTemplates returns K, the length of the weight vector.
func (m *Mixture) NumTemplates() int { return m.k }

// NumNonEmpty returns the number of non-empty data bins the Mixture kept.
func (m *Mixture) NumNonEmpty() int { return len(m.n) }

// LogL returns the Poisson log-likelihood of the prepared data at weights.
func (m *Mixture) LogL(weights []float64) float64 {
	if len(weights) != m.k {
		panic("stats: Mixture.LogL weights length mismatch")
	}
	var buf [mixtureBlock]float64
	s := mixtureBlocks(nil, weights, m.rows, m.n, buf[:], false)
	return s - floats.Dot(weights, m.colSum) - m.lnFactN
}

// LogLGrad returns LogL(weights) and writes the gradient into grad. It
// allocates nothing. Outside the domain (some non-empty bin with μ ≤ 0) the
// value is −Inf and grad is NaN.
func (m *Mixture) LogLGrad(grad, weights []float64) float64 {
	if len(weights) != m.k || len(grad) != m.k {
		panic("stats: Mixture.LogLGrad length mismatch")
	}
	for j, c := range m.colSum {
		grad[j] = -c
	}
	var buf [mixtureBlock]float64
	s := mixtureBlocks(grad, weights, m.rows, m.n, buf[:], false)
	return s - floats.Dot(weights, m.colSum) - m.lnFactN
}
