package stats

import "math"

// Barlow–Beeston "lite": template statistical noise with one nuisance
// parameter per bin.
//
// Barlow & Beeston (1993, Comput. Phys. Commun. 77, 219) give every
// template in every bin its own nuisance parameter for the finite
// simulation behind it. Conway (2011, "Incorporating nuisance parameters in
// likelihoods for multisource spectra", arXiv:1103.0354) keeps one nuisance
// per bin: the bin's total expectation m_i = Σ_k w_k T_ki is scaled by β_i,
// and β_i is constrained by a Gaussian of width equal to the relative
// simulation uncertainty of m_i. What is implemented here, bin by bin:
//
//	σ_i² = Σ_k w_k² V_ki                 variance of m_i from the templates' noise,
//	                                      V_ki the variance of T_ki (V = T for raw
//	                                      simulated counts);
//	N_eff,i = m_i²/σ_i²                   the bin's effective template count;
//	δ_i² = σ_i²/m_i² = 1/N_eff,i          relative variance;
//	ℓ_i(β) = n_i ln(β m_i) − β m_i − ln n_i! − (β − 1)²/(2 δ_i²).
//
// ∂ℓ_i/∂β = 0 gives n_i/β − m_i − (β − 1)/δ_i² = 0, i.e. the quadratic
//
//	β² + (m_i δ_i² − 1) β − n_i δ_i² = 0,
//
// whose non-negative root is the profiled β̂_i:
//
//	β̂_i = [−b + √(b² + 4 n_i δ_i²)]/2,  b = m_i δ_i² − 1,
//
// evaluated as 2 n_i δ_i²/(b + √(b² + 4 n_i δ_i²)) when b > 0 to avoid
// cancellation. For n_i = 0 the root is max(0, 1 − m_i δ_i²). The profiled
// bin log-likelihood is ℓ_i(β̂_i). A bin with σ_i = 0 (exact template) has
// β̂_i = 1 and reduces to the plain Poisson term; a bin with m_i = 0 has no
// template to scale and also keeps the plain Poisson term. The Gaussian
// prior on β is Conway's choice; it lets β go negative in principle but the
// root above is always ≥ 0.

// BBLiteBin returns the profiled scale factor β̂ and the profiled log-
// likelihood ℓ(β̂) of one bin with observed count n, template expectation
// m and template variance varM (see the package comment above).
func BBLiteBin(n, m, varM float64) (beta, logL float64) {
	if !(varM > 0) || !(m > 0) {
		return 1, poissonTerm(n, m)
	}
	d2 := varM / (m * m)
	b := m*d2 - 1
	c := n * d2
	if b > 0 {
		beta = 2 * c / (b + math.Sqrt(b*b+4*c))
	} else {
		beta = (-b + math.Sqrt(b*b+4*c)) / 2
	}
	dev := beta - 1
	logL = -beta*m - dev*dev/(2*d2)
	if n != 0 {
		logL += n*math.Log(beta*m) - LnFactorial(n)
	}
	return beta, logL
}

// EffectiveCount returns N_eff = m²/σ², the number of unweighted simulated
// stars that would carry the same relative noise as a bin with expectation
// m and variance varM. It is +Inf for varM = 0.
func EffectiveCount(m, varM float64) float64 {
	return m * m / varM
}

// BBLiteLogL returns Σ_i ℓ_i(β̂_i) for a template mixture: templates and
// variances are bins-major (length len(counts)·len(weights)), as in
// MixtureLogL. variances holds Var T_ki; for templates that are raw counts
// of simulated stars pass the templates themselves. If betas is non-nil it
// receives β̂_i. It allocates nothing.
func BBLiteLogL(betas, weights, templates, variances, counts []float64) float64 {
	k := len(weights)
	checkMixture(k, templates, counts)
	if len(variances) != len(templates) {
		panic("stats: BBLiteLogL variances length mismatch")
	}
	if betas != nil && len(betas) != len(counts) {
		panic("stats: BBLiteLogL betas length mismatch")
	}
	var s float64
	for i, n := range counts {
		row := templates[i*k : i*k+k]
		vrow := variances[i*k : i*k+k]
		var m, v float64
		for j, w := range weights {
			m += w * row[j]
			v += w * w * vrow[j]
		}
		beta, l := BBLiteBin(n, m, v)
		if betas != nil {
			betas[i] = beta
		}
		s += l
	}
	return s
}
