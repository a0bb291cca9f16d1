package stats

import "math"

// lnFactTable holds ln n! for small integer n so that likelihoods over
// histograms of integer counts avoid a Lgamma call per bin.
const lnFactN = 1024 // a power of two

var lnFactTable [lnFactN]float64

func init() {
	for n := 2; n < len(lnFactTable); n++ {
		lnFactTable[n] = lnFactTable[n-1] + math.Log(float64(n))
	}
}

// LnFactorial returns ln Γ(n+1), which is ln n! for integer n. Integer n
// below 1024 come from a table; other n, including non-integer weighted
// counts, use math.Lgamma. n must be ≥ 0.
func LnFactorial(n float64) float64 {
	if i := int(n); float64(i) == n && uint(i) < lnFactN {
		return lnFactTable[i]
	}
	return lnGammaPlusOne(n)
}

// sumLnFactorial returns Σ ln n_i!, the data-only term of a Poisson
// likelihood, with the table lookup written out for the hot loop.
func sumLnFactorial(n []float64) float64 {
	var s float64
	for _, v := range n {
		if i := int(v); float64(i) == v && uint(i) < lnFactN {
			s += lnFactTable[i]
		} else {
			s += lnGammaPlusOne(v)
		}
	}
	return s
}

func lnGammaPlusOne(n float64) float64 {
	v, _ := math.Lgamma(n + 1)
	return v
}

// poissonTerm is n ln μ − μ − ln n! with the convention 0·ln 0 = 0, so an
// empty bin contributes −μ and a non-empty bin with μ = 0 contributes −Inf.
func poissonTerm(n, mu float64) float64 {
	if n == 0 {
		return -mu
	}
	return n*math.Log(mu) - mu - LnFactorial(n)
}

// PoissonLogL returns the binned Poisson log-likelihood
//
//	ln L = Σ_i [n_i ln μ_i − μ_i − ln n_i!]
//
// of counts n given expectations mu. Empty bins contribute −μ_i (the n ln μ
// term is taken as zero, also when μ_i = 0); a bin with n_i > 0 and μ_i = 0
// makes ln L = −Inf. Counts need not be integers (ln n! is ln Γ(n+1)),
// which lets weighted histograms be scored, but they must be ≥ 0.
func PoissonLogL(mu, n []float64) float64 {
	if len(mu) != len(n) {
		panic("stats: PoissonLogL length mismatch")
	}
	var s float64
	for i, ni := range n {
		s += poissonTerm(ni, mu[i])
	}
	return s
}

// MultinomialLogL returns the log-probability of counts n under a
// multinomial with N = Σ n_i trials and cell probabilities p_i = μ_i/Σμ:
//
//	ln L = ln N! − Σ ln n_i! + Σ n_i ln p_i.
//
// It is the likelihood to use when the model's normalisation is free: the
// profile of the Poisson likelihood over an overall scale s (μ → sμ, best
// s = N/Σμ) is ProfiledPoissonLogL = MultinomialLogL + N ln N − N − ln N!,
// a constant that does not depend on the model, so both rank models the
// same. The counts must be integers for the multinomial to be a
// probability; non-integer counts are evaluated through ln Γ.
func MultinomialLogL(mu, n []float64) float64 {
	if len(mu) != len(n) {
		panic("stats: MultinomialLogL length mismatch")
	}
	var total, nTotal float64
	for i, m := range mu {
		total += m
		nTotal += n[i]
	}
	s := LnFactorial(nTotal)
	lnTotal := math.Log(total)
	for i, ni := range n {
		if ni == 0 {
			continue
		}
		s += ni*(math.Log(mu[i])-lnTotal) - LnFactorial(ni)
	}
	return s
}

// ProfiledPoissonLogL returns the Poisson log-likelihood maximised over a
// free overall scale of mu: max_s Σ [n ln(sμ) − sμ − ln n!], reached at
// s = Σn/Σμ. It differs from MultinomialLogL by N ln N − N − ln N!, which
// depends on the data only. It also returns the best scale.
func ProfiledPoissonLogL(mu, n []float64) (logL, scale float64) {
	if len(mu) != len(n) {
		panic("stats: ProfiledPoissonLogL length mismatch")
	}
	var total, nTotal float64
	for i, m := range mu {
		total += m
		nTotal += n[i]
	}
	scale = nTotal / total
	lnScale := math.Log(scale)
	for i, ni := range n {
		if ni == 0 {
			continue
		}
		logL += ni*(math.Log(mu[i])+lnScale) - LnFactorial(ni)
	}
	return logL - nTotal, scale
}

// PearsonResiduals writes (n_i − μ_i)/√μ_i into dst and returns it. A bin
// with μ_i = 0 gets 0 when n_i = 0 and +Inf otherwise. If dst is nil a new
// slice is made.
func PearsonResiduals(dst, mu, n []float64) []float64 {
	if len(mu) != len(n) {
		panic("stats: PearsonResiduals length mismatch")
	}
	if dst == nil {
		dst = make([]float64, len(n))
	}
	if len(dst) != len(n) {
		panic("stats: PearsonResiduals dst length mismatch")
	}
	for i, ni := range n {
		m := mu[i]
		switch {
		case m > 0:
			dst[i] = (ni - m) / math.Sqrt(m)
		case ni == 0:
			dst[i] = 0
		default:
			dst[i] = math.Inf(1)
		}
	}
	return dst
}
