package compare

import (
	"fmt"
	"math"

	"spinpop/compare/stats"
)

// Normalisation and template-noise choices of LikeOptions.
const (
	NormFree           = "free"
	NormAbsolute       = "absolute"
	NoiseBarlowBeeston = "barlow-beeston-lite"
	NoiseIgnore        = "ignore"
)

// LikeOptions choose the likelihood.
type LikeOptions struct {
	// Normalisation is "free" (default): the overall number of stars is a
	// free parameter, profiled out analytically — the multinomial
	// likelihood of the histogram's shape, reported as the Poisson
	// likelihood at the best scale — or "absolute": μ_i = MassScale Σ_k
	// w_k T_ki exactly.
	Normalisation string
	// TemplateNoise is "barlow-beeston-lite" (default) or "ignore". The
	// templates are counts of simulated stars, Poisson themselves, so a
	// mixture bin m_i = Σ_k w_k T_ki carries variance Σ_k w_k² T_ki; the
	// Barlow–Beeston-lite treatment (stats.BBLiteBin; Conway 2011) gives
	// every bin one scale factor β_i, constrained by that variance and
	// profiled out.
	TemplateNoise string
	// Use3D compares in color × log period × |z|; otherwise the heights are
	// summed and the comparison is in the (color, period) plane.
	Use3D bool
	// MassScale, for absolute normalisation, is the number of catalogue
	// stars one template star stands for when the weights are the
	// history's bin mass fractions: μ_i = MassScale Σ_k w_k T_ki.
	MassScale float64
}

func (o *LikeOptions) fill() error {
	if o.Normalisation == "" {
		o.Normalisation = NormFree
	}
	if o.TemplateNoise == "" {
		o.TemplateNoise = NoiseBarlowBeeston
	}
	switch o.Normalisation {
	case NormFree:
	case NormAbsolute:
		if !(o.MassScale > 0) || math.IsInf(o.MassScale, 0) {
			return fmt.Errorf("compare: absolute normalisation needs MassScale > 0 (catalogue stars per template star at unit total mass), got %g", o.MassScale)
		}
	default:
		return fmt.Errorf("compare: normalisation %q: want %q or %q", o.Normalisation, NormFree, NormAbsolute)
	}
	switch o.TemplateNoise {
	case NoiseBarlowBeeston, NoiseIgnore:
	default:
		return fmt.Errorf("compare: template noise %q: want %q or %q", o.TemplateNoise, NoiseBarlowBeeston, NoiseIgnore)
	}
	return nil
}

// Likelihood scores histories, as age-bin weights, against one histogram
// of counts in the comparison space. It is not safe for concurrent use (it
// owns scratch space); WithCounts makes an independent one for other data
// that shares the templates.
//
// Free normalisation. With μ_i = s m_i, m_i = Σ_k w_k T_ki, the Poisson
// log-likelihood Σ_i [n_i ln μ_i − μ_i − ln n_i!] is largest at s = N/M,
// M = Σ_i m_i, where it equals the multinomial log-likelihood plus a
// constant of the data (stats.MultinomialLogL, ProfiledPoissonLogL). LogL
// returns that profiled value, and its gradient follows from the envelope
// theorem: ∂/∂w_k = Σ_i (n_i/m_i − N/M) T_ki.
//
// Template noise (Barlow–Beeston lite). Each bin's expectation becomes
// β_i s m_i with a Gaussian constraint on β_i of relative width
// δ_i = √(Σ_k w_k² T_ki)/m_i; the β_i are profiled bin by bin in closed
// form (stats.BBLiteBin) and, with free normalisation, jointly with s by a
// secant iteration on s = N/Σ_i β_i m_i. The gradient is taken with β and s
// held at their optimum (envelope theorem: their own derivatives vanish
// there), differentiating the constraint through δ_i(w).
type Likelihood struct {
	opts     LikeOptions
	space    Space
	k, nb    int
	rows     []float64 // bins-major templates, rows[i*k+j] = T_ji; shared, read-only
	colSum   []float64 // S_k = Σ_i T_ki
	n        []float64
	nTot     float64
	lnFactN  float64 // Σ ln n_i!
	mix      *stats.Mixture
	free, bb bool

	// scratch
	w2, ws, m, v, a, b, h []float64
	t, tLog               []float64 // β_i μ_i of each bin, and a copy stats.LogTerms may overwrite
	r, c                  []float64 // see bbPrepare
}

// NewLikelihood prepares the comparison of tpl against counts: 3-D
// counts (len tpl.Space.NumBins()) always, or 2-D counts
// (NumColorPeriod) when opts.Use3D is false. Data stars in bins where no
// template star fell make every history impossible; that is an error
// naming the first such bin.
func NewLikelihood(tpl *Templates, counts []float64, opts LikeOptions) (*Likelihood, error) {
	if tpl == nil {
		return nil, fmt.Errorf("compare: NewLikelihood needs templates")
	}
	if err := opts.fill(); err != nil {
		return nil, err
	}
	if err := tpl.check(); err != nil {
		return nil, err
	}
	t := tpl
	if !opts.Use3D && tpl.Space.NumHeight() > 1 {
		t = tpl.Collapse2D()
	}
	if opts.Use3D && tpl.Space.NumHeight() == 1 {
		return nil, fmt.Errorf("compare: a 3-D comparison needs templates with |z| bins; these have none (give height edges to the space)")
	}
	nb, nk := t.Space.NumBins(), t.NumAgeBins()
	switch {
	case len(counts) == nb:
	case !opts.Use3D && len(counts) == tpl.Space.NumBins():
		counts = tpl.Space.Marginal2D(counts)
	default:
		want := fmt.Sprintf("%d", nb)
		if !opts.Use3D && tpl.Space.NumBins() != nb {
			want = fmt.Sprintf("%d (2-D) or %d (3-D)", nb, tpl.Space.NumBins())
		}
		return nil, fmt.Errorf("compare: %d data counts for a comparison space of %s bins", len(counts), want)
	}
	l := &Likelihood{opts: opts, space: t.Space, k: nk, nb: nb}
	l.rows = make([]float64, nb*nk)
	l.colSum = make([]float64, nk)
	for j := range nk {
		for i, v := range t.Counts[j*nb : (j+1)*nb] {
			l.rows[i*nk+j] = v
			l.colSum[j] += v
		}
	}
	l.free = opts.Normalisation == NormFree
	l.bb = opts.TemplateNoise == NoiseBarlowBeeston
	if err := l.setCounts(counts); err != nil {
		return nil, err
	}
	return l, nil
}

// WithCounts returns a Likelihood for other counts (same layout as the
// receiver's: NumBins values) that shares the templates.
func (l *Likelihood) WithCounts(counts []float64) (*Likelihood, error) {
	if len(counts) != l.nb {
		return nil, fmt.Errorf("compare: %d counts for a comparison space of %d bins", len(counts), l.nb)
	}
	c := &Likelihood{opts: l.opts, space: l.space, k: l.k, nb: l.nb, rows: l.rows, colSum: l.colSum, free: l.free, bb: l.bb}
	if err := c.setCounts(counts); err != nil {
		return nil, err
	}
	return c, nil
}

func (l *Likelihood) setCounts(counts []float64) error {
	l.n = append([]float64(nil), counts...)
	l.nTot, l.lnFactN = 0, 0
	empty, firstEmpty := 0, -1
	for i, n := range l.n {
		if !(n >= 0) || math.IsInf(n, 0) {
			return fmt.Errorf("compare: count %g in bin %d; counts must be finite and ≥ 0", n, i)
		}
		l.nTot += n
		l.lnFactN += stats.LnFactorial(n)
		if n > 0 {
			row := l.rows[i*l.k : (i+1)*l.k]
			s := 0.0
			for _, v := range row {
				s += v
			}
			if s == 0 {
				empty++
				if firstEmpty < 0 {
					firstEmpty = i
				}
			}
		}
	}
	if empty > 0 {
		c, p, z := l.space.Split(firstEmpty)
		return fmt.Errorf("compare: the data have stars in %d bins where no template star fell (first: B−V %.3g–%.3g, log10 P %.3g–%.3g, |z| %g–%g pc); simulate more template stars, widen the bins or narrow the comparison space",
			empty, l.space.ColorEdges[c], l.space.ColorEdges[c+1], l.space.LogPeriodEdges[p], l.space.LogPeriodEdges[p+1], l.space.HeightEdgesPc[z], l.space.HeightEdgesPc[z+1])
	}
	if l.free && !(l.nTot > 0) {
		return fmt.Errorf("compare: the data hold no stars in the comparison space; a free normalisation has nothing to fit")
	}
	l.mix = stats.NewMixture(l.rows, l.k, l.n)
	l.w2, l.ws, l.h = make([]float64, l.k), make([]float64, l.k), make([]float64, l.k)
	l.m, l.v, l.a, l.b = make([]float64, l.nb), make([]float64, l.nb), make([]float64, l.nb), make([]float64, l.nb)
	l.t, l.tLog = make([]float64, l.nb), make([]float64, l.nb)
	l.r, l.c = make([]float64, l.nb), make([]float64, l.nb)
	return nil
}

// NumAgeBins returns the length of the weight vector.
func (l *Likelihood) NumAgeBins() int { return l.k }

// NumBins returns the number of comparison bins.
func (l *Likelihood) NumBins() int { return l.nb }

// Space returns the comparison space (heights collapsed unless Use3D).
func (l *Likelihood) Space() Space { return l.space }

// Counts returns the data counts (aliased; do not modify).
func (l *Likelihood) Counts() []float64 { return l.n }

// N returns the number of data stars.
func (l *Likelihood) N() float64 { return l.nTot }

// Options returns the options in force (defaults filled in).
func (l *Likelihood) Options() LikeOptions { return l.opts }

// LogL returns the log-likelihood of the data for age-bin weights w.
func (l *Likelihood) LogL(weights []float64) float64 {
	return l.LogLGrad(weights, nil)
}

// LogLGrad returns the log-likelihood and, if grad is not nil, writes its
// gradient with respect to the weights into grad. It allocates nothing.
// Outside the domain (a non-empty bin with zero expectation) it returns
// −Inf and, if grad is not nil, fills it with NaN.
func (l *Likelihood) LogLGrad(weights, grad []float64) float64 {
	if len(weights) != l.k || (grad != nil && len(grad) != l.k) {
		panic(fmt.Sprintf("compare: Likelihood got %d weights (gradient %d) for %d age bins", len(weights), len(grad), l.k))
	}
	if l.bb {
		return l.bbLogL(weights, grad)
	}
	return l.poissonLogL(weights, grad)
}

// poissonLogL is the likelihood with exact templates.
func (l *Likelihood) poissonLogL(w, grad []float64) float64 {
	if !l.free {
		c := l.opts.MassScale
		for j, v := range w {
			l.ws[j] = c * v
		}
		var s float64
		if grad == nil {
			s = l.mix.LogL(l.ws)
		} else {
			s = l.mix.LogLGrad(grad, l.ws)
			for j := range grad {
				grad[j] *= c
			}
		}
		return s
	}
	var s float64
	if grad == nil {
		s = l.mix.LogL(w)
	} else {
		s = l.mix.LogLGrad(grad, w)
	}
	var mTot float64
	for j, v := range w {
		mTot += v * l.colSum[j]
	}
	if math.IsInf(s, -1) || !(mTot > 0) {
		if grad != nil {
			for j := range grad {
				grad[j] = math.NaN()
			}
		}
		return math.Inf(-1)
	}
	// Σ n ln μ − M − Σ ln n! at s = 1, moved to the best scale N/M.
	n := l.nTot
	if grad != nil {
		f := 1 - n/mTot
		for j := range grad {
			grad[j] += f * l.colSum[j]
		}
	}
	return s + mTot + n*math.Log(n/mTot) - n
}

// bbRoot returns the profiled β of one bin (see stats.BBLiteBin), the
// positive root of β² + bβ − c = 0 with b = μδ² − 1 and c = nδ² ≥ 0, and
// D = √(b² + 4c) = 2β + b, computed without cancellation.
func bbRoot(b, c float64) (beta, d float64) {
	d = math.Sqrt(b*b + 4*c)
	if b > 0 {
		return 2 * c / (b + d), d
	}
	return (d - b) / 2, d
}

// bbPrepare sets, for every bin with template noise (m_i > 0, v_i > 0),
// r_i = v_i/m_i and c_i = n_i v_i/m_i², so that at scale s the bin's
// b = s r_i − 1 and c = c_i (δ_i² = v_i/m_i²); r_i = 0 marks a bin
// without template noise.
func (l *Likelihood) bbPrepare() {
	for i, m := range l.m {
		v := l.v[i]
		if !(m > 0) || !(v > 0) {
			l.r[i], l.c[i] = 0, 0
			continue
		}
		r := v / m
		l.r[i], l.c[i] = r, l.n[i]*r/m
	}
}

// bbLogL is the Barlow–Beeston-lite likelihood.
func (l *Likelihood) bbLogL(w, grad []float64) float64 {
	for j, v := range w {
		l.w2[j] = v * v
	}
	mixMoments(l.rows, l.k, w, l.w2, l.m, l.v)
	l.bbPrepare()
	scale := l.opts.MassScale
	if l.free {
		var ok bool
		if scale, ok = l.bbScale(); !ok {
			return l.outside(grad)
		}
	}
	var s float64
	for i, n := range l.n {
		m, r := l.m[i], l.r[i]
		if !(r > 0) {
			// No template noise to profile: the plain Poisson term.
			if n > 0 && !(m > 0) {
				return l.outside(grad)
			}
			mu := scale * m
			s -= mu
			l.t[i] = mu // n ln μ, added below
			l.a[i], l.b[i] = -scale, 0
			if n > 0 {
				l.a[i] += n / m
			}
			continue
		}
		mu := scale * m
		beta, _ := bbRoot(scale*r-1, l.c[i])
		dev := beta - 1
		q := dev * dev / r // (β − 1)²/(m δ²) = (β − 1)² m/v
		s += -beta*mu - 0.5*q*m
		l.t[i] = beta * mu // n ln βμ, added below
		if grad != nil {
			l.a[i] = -beta*scale - q
			if n > 0 {
				l.a[i] += n / m
			}
			l.b[i] = 0.5 * q / r
		}
	}
	s += l.sumNLog()
	s -= l.lnFactN
	if grad != nil {
		mixGradient(l.rows, l.k, l.a, l.b, grad, l.h)
		for j := range grad {
			grad[j] += 2 * w[j] * l.h[j]
		}
	}
	return s
}

// sumNLog returns Σ_{n_i≠0} n_i ln t_i, by the mixture's vectorised pass
// where it takes the values (they are positive wherever n_i ≠ 0).
func (l *Likelihood) sumNLog() float64 {
	copy(l.tLog, l.t)
	if s, _, ok := stats.LogTerms(l.tLog, l.n, 0); ok {
		return s
	}
	var s float64
	for i, n := range l.n {
		if n > 0 {
			s += n * math.Log(l.t[i])
		}
	}
	return s
}

func (l *Likelihood) outside(grad []float64) float64 {
	for j := range grad {
		grad[j] = math.NaN()
	}
	return math.Inf(-1)
}

// bbScale solves s Σ_i β_i(s) m_i = N for the free normalisation by
// Newton's method from s₀ = N/Σ m_i (the β = 1 answer), which is already
// close: β departs from 1 only by the templates' relative noise.
// Differentiating β² + (s r − 1)β − c = 0 gives dβ/ds = −r β/D. A step
// below 1e−6 of s leaves an error of order its square, so the loop stops
// there without evaluating again.
func (l *Likelihood) bbScale() (float64, bool) {
	var mTot float64
	for _, m := range l.m {
		mTot += m
	}
	if !(mTot > 0) {
		return 0, false
	}
	s := l.nTot / mTot
	for range 40 {
		var sum, dsum float64
		for i, m := range l.m {
			r := l.r[i]
			if !(r > 0) {
				sum += m
				continue
			}
			beta, d := bbRoot(s*r-1, l.c[i])
			sum += beta * m
			if d > 0 {
				dsum -= r * beta / d * m
			}
		}
		next := s - (s*sum-l.nTot)/(sum+s*dsum)
		if !(next > 0) || math.IsInf(next, 0) {
			next = l.nTot / sum // the fixed-point step, if Newton's fails
		}
		if math.Abs(next-s) <= 1e-6*next {
			return next, !math.IsNaN(next)
		}
		s = next
	}
	return s, !math.IsNaN(s)
}

// Scale returns the normalisation in force at weights: N/Σ m_i for a free
// normalisation (the plain-Poisson best scale), MassScale otherwise.
func (l *Likelihood) Scale(weights []float64) float64 {
	if !l.free {
		return l.opts.MassScale
	}
	var mTot float64
	for j, v := range weights {
		mTot += v * l.colSum[j]
	}
	return l.nTot / mTot
}

// Expected writes the expected counts s Σ_k w_k T_ki in the comparison
// space into dst (resliced or reallocated to NumBins) and returns it; s is
// Scale(weights), so with free normalisation the total matches the data.
func (l *Likelihood) Expected(weights, dst []float64) []float64 {
	if cap(dst) < l.nb {
		dst = make([]float64, l.nb)
	}
	dst = dst[:l.nb]
	s := l.Scale(weights)
	for i := range dst {
		row := l.rows[i*l.k : (i+1)*l.k]
		var m float64
		for j, v := range row {
			m += v * weights[j]
		}
		dst[i] = s * m
	}
	return dst
}

// PearsonResiduals returns (n_i − μ_i)/√μ_i per comparison bin, with μ the
// expected counts of Expected (template noise not included).
func (l *Likelihood) PearsonResiduals(weights []float64) []float64 {
	mu := l.Expected(weights, nil)
	return stats.PearsonResiduals(nil, mu, l.n)
}
