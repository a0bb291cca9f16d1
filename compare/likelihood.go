package compare

import (
	"fmt"
	"math"
	"strings"

	"spinpop/compare/stats"
)

// Normalisation and template-noise choices of LikeOptions.
const (
	NormFree     = "free"
	NormAbsolute = "absolute"
	// NormPerColor profiles one free scale per B−V column: the likelihood
	// of the period (and height) distribution within each color column,
	// conditional on how many stars the column holds. The IMF, the relation
	// table and any selection in color alone drop out of it.
	NormPerColor = "per-color"
	// NormPerColorHeight profiles one scale per (B−V, |z|) cell: the
	// period distribution within each cell. It needs a 3-D comparison.
	NormPerColorHeight = "per-color-height"

	NoiseBarlowBeeston = "barlow-beeston-lite"
	NoiseIgnore        = "ignore"
)

// Normalisations lists the Normalisation values, for messages.
var Normalisations = []string{NormFree, NormAbsolute, NormPerColor, NormPerColorHeight}

// LikeOptions choose the likelihood.
type LikeOptions struct {
	// Normalisation is "free" (default): the overall number of stars is a
	// free parameter, profiled out analytically — the multinomial
	// likelihood of the histogram's shape, reported as the Poisson
	// likelihood at the best scale — or "absolute": μ_i = MassScale Σ_k
	// w_k T_ki exactly; or "per-color" / "per-color-height": one free scale
	// per color column (per color × height cell), i.e. the likelihood
	// conditional on the number of stars in each column (cell).
	Normalisation string
	// TemplateNoise is "barlow-beeston-lite" (default) or "ignore". The
	// templates are counts of simulated stars, Poisson themselves, so a
	// mixture bin m_i = Σ_k w_k T_ki carries variance Σ_k w_k² T_ki (or
	// Σ_k w_k² V_ki when the templates carry their own variances); the
	// Barlow–Beeston-lite treatment (stats.BBLiteBin; Conway 2011) gives
	// every bin one scale factor β_i, constrained by that variance and
	// profiled out.
	TemplateNoise string
	// Use3D compares in color × log period × |z|; otherwise the heights are
	// summed and the comparison is in the (color, period) plane.
	Use3D bool
	// MassScale, for absolute normalisation, is the number of catalog
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
	case NormFree, NormPerColor:
	case NormPerColorHeight:
		if !o.Use3D {
			return fmt.Errorf("compare: normalisation %q needs the 3-D comparison (heights compared); use %q in the (color, period) plane", NormPerColorHeight, NormPerColor)
		}
	case NormAbsolute:
		if !(o.MassScale > 0) || math.IsInf(o.MassScale, 0) {
			return fmt.Errorf("compare: absolute normalisation needs MassScale > 0 (catalog stars per template star at unit total mass), got %g", o.MassScale)
		}
	default:
		return fmt.Errorf("compare: normalisation %q: want one of %s", o.Normalisation, quoteList(Normalisations))
	}
	switch o.TemplateNoise {
	case NoiseBarlowBeeston, NoiseIgnore:
	default:
		return fmt.Errorf("compare: template noise %q: want %q or %q", o.TemplateNoise, NoiseBarlowBeeston, NoiseIgnore)
	}
	return nil
}

// quoteList writes "a", "b" or "c".
func quoteList(xs []string) string {
	var b strings.Builder
	for i, x := range xs {
		switch {
		case i == 0:
		case i == len(xs)-1:
			b.WriteString(" or ")
		default:
			b.WriteString(", ")
		}
		fmt.Fprintf(&b, "%q", x)
	}
	return b.String()
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
// Per-color normalisation is the same with one scale s_g = N_g/M_g per
// group g of bins (a color column, or a color × height cell): the
// product of one multinomial per group, the likelihood of the period
// distribution within each column given the column's count. Groups
// without data stars contribute nothing.
//
// Template noise (Barlow–Beeston lite). Each bin's expectation becomes
// β_i s m_i with a Gaussian constraint on β_i of relative width
// δ_i = √v_i/m_i, v_i = Σ_k w_k² V_ki (V = T for templates of raw counts);
// each bin with data also carries −½ ln(1 + n_i δ_i²), the Laplace
// approximation's term for integrating β_i out rather than maximising over
// it (Tierney & Kadane 1986): profiling alone rewards a history that makes
// its own prediction noisier (weight piled into one age bin raises δ_i and
// lets β_i absorb whatever the data hold there). The β_i are profiled bin
// by bin in closed form (stats.BBLiteBin) and,
// with free normalisation, jointly with each group's s by Newton's method on
// s = N_g/Σ_{i∈g} β_i m_i. The gradient is taken with β and s held at
// their optimum (envelope theorem: their own derivatives vanish there),
// differentiating the constraint through δ_i(w).
type Likelihood struct {
	opts       LikeOptions
	space      Space
	k, nb      int
	rows       []float64 // bins-major templates, rows[i*k+j] = T_ji; shared read-only unless owned
	varRows    []float64 // bins-major template variances; aliases rows for raw counts
	owned      bool      // rows and varRows belong to this Likelihood (SetTemplates may overwrite them)
	sharedSums bool      // colSum and grpSum are shared with another Likelihood (WithCounts)
	colSum     []float64 // S_k = Σ_i T_ki
	n          []float64
	nTot       float64
	lnFactN    float64 // Σ ln n_i!
	mix        *stats.Mixture
	free       bool // scales are profiled (every normalisation but absolute)
	bb         bool

	// Groups of bins that share one free scale: group[i] for bin i (nil:
	// one group of all bins), grpSum[g*k+j] = Σ_{i∈g} T_ji, nG[g] = Σ_{i∈g} n_i.
	ng     int
	group  []int32
	grpSum []float64
	nG     []float64
	scales []float64 // the scale of each group at the last evaluation

	// scratch
	w2, ws, m, v, a, b, h []float64
	t, tLog               []float64 // β_i μ_i of each bin, and a copy stats.LogTerms may overwrite
	r, c                  []float64 // see bbPrepare
	mG, sumG, dsumG       []float64 // per-group M_g and Newton sums
	fresh                 []bool    // per-group: converged
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
	if opts.Use3D && tpl.Space.NumHeight() == 1 {
		return nil, fmt.Errorf("compare: a 3-D comparison needs templates with |z| bins; these have none (give height edges to the space)")
	}
	t := tpl
	if !opts.Use3D && tpl.Space.NumHeight() > 1 {
		t = tpl.Collapse2D()
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
	l := &Likelihood{opts: opts, space: t.Space, k: nk, nb: nb, owned: true}
	l.free = opts.Normalisation != NormAbsolute
	l.bb = opts.TemplateNoise == NoiseBarlowBeeston
	l.setGroups()
	l.rows = make([]float64, nb*nk)
	if t.Var != nil {
		l.varRows = make([]float64, nb*nk)
	}
	l.loadRows(t)
	if err := l.setCounts(counts, true); err != nil {
		return nil, err
	}
	return l, nil
}

// setGroups assigns every bin its normalisation group.
func (l *Likelihood) setGroups() {
	sp := l.space
	switch l.opts.Normalisation {
	case NormPerColor:
		l.ng = sp.NumColor()
	case NormPerColorHeight:
		l.ng = sp.NumColor() * sp.NumHeight()
	default:
		l.ng, l.group = 1, nil
		return
	}
	l.group = make([]int32, l.nb)
	for i := range l.group {
		c, _, z := sp.Split(i)
		g := c
		if l.opts.Normalisation == NormPerColorHeight {
			g = c*sp.NumHeight() + z
		}
		l.group[i] = int32(g)
	}
}

// groupOf returns bin i's normalisation group.
func (l *Likelihood) groupOf(i int) int {
	if l.group == nil {
		return 0
	}
	return int(l.group[i])
}

// loadRows copies t (the comparison's space, k-major) into the bins-major
// rows, and its variances into varRows, and sums the columns.
func (l *Likelihood) loadRows(t *Templates) {
	nb, nk := l.nb, l.k
	for j := range nk {
		for i, v := range t.Counts[j*nb : (j+1)*nb] {
			l.rows[i*nk+j] = v
		}
	}
	if t.Var != nil {
		for j := range nk {
			for i, v := range t.Var[j*nb : (j+1)*nb] {
				l.varRows[i*nk+j] = v
			}
		}
	} else {
		l.varRows = l.rows
	}
	l.sumColumns()
}

// sumColumns sets colSum and grpSum from rows.
func (l *Likelihood) sumColumns() {
	nk := l.k
	if len(l.colSum) != nk {
		l.colSum = make([]float64, nk)
	}
	if len(l.grpSum) != l.ng*nk {
		l.grpSum = make([]float64, l.ng*nk)
	}
	clear(l.colSum)
	clear(l.grpSum)
	for i := range l.nb {
		row := l.rows[i*nk : (i+1)*nk]
		g := l.grpSum[l.groupOf(i)*nk : (l.groupOf(i)+1)*nk]
		for j, v := range row {
			l.colSum[j] += v
			g[j] += v
		}
	}
}

// WithCounts returns a Likelihood for other counts (same layout as the
// receiver's: NumBins values) that shares the templates.
func (l *Likelihood) WithCounts(counts []float64) (*Likelihood, error) {
	return l.withCounts(counts, true)
}

// withCounts is WithCounts; check false skips the test for data in bins
// without template stars (a mock of a fit whose own templates differ from
// the ones the receiver holds now).
func (l *Likelihood) withCounts(counts []float64, check bool) (*Likelihood, error) {
	if len(counts) != l.nb {
		return nil, fmt.Errorf("compare: %d counts for a comparison space of %d bins", len(counts), l.nb)
	}
	c := &Likelihood{opts: l.opts, space: l.space, k: l.k, nb: l.nb, rows: l.rows, varRows: l.varRows,
		colSum: l.colSum, free: l.free, bb: l.bb, ng: l.ng, group: l.group, grpSum: l.grpSum}
	c.sharedSums = true
	if l.owned || !l.sharedSums {
		l.markShared()
	}
	if err := c.setCounts(counts, check); err != nil {
		return nil, err
	}
	return c, nil
}

// markShared records that the receiver's templates are shared from now on,
// so that either side copies them before writing. Parallel code that
// makes copies with withCounts calls it first, so that the copies only
// read the receiver.
func (l *Likelihood) markShared() { l.owned, l.sharedSums = false, true }

// SetTemplates replaces the templates (same space, heights and age bins as
// the ones the Likelihood was made with; the data stay). Used when the
// templates depend on parameters that a fit moves. Bins with data and no
// template star are allowed here: the likelihood is then −Inf wherever the
// history cannot reach them, which a fit treats as outside the domain.
func (l *Likelihood) SetTemplates(tpl *Templates) error {
	if err := tpl.check(); err != nil {
		return err
	}
	t := tpl
	if !l.opts.Use3D && tpl.Space.NumHeight() > 1 {
		t = tpl.Collapse2D()
	}
	if t.NumAgeBins() != l.k || !t.Space.Equal(l.space) {
		return fmt.Errorf("compare: SetTemplates: templates of %d age bins in another space; want %d age bins in the likelihood's space", t.NumAgeBins(), l.k)
	}
	l.own(t.Var != nil)
	l.loadRows(t)
	l.mix.SetTemplates(l.rows, l.n)
	return nil
}

// setRows makes rows (and varRows, nil for raw counts) the templates,
// bins-major; the Likelihood reads the slices from now on and never
// writes them.
func (l *Likelihood) setRows(rows, varRows []float64) {
	if l.sharedSums {
		l.colSum, l.grpSum, l.sharedSums = nil, nil, false
	}
	l.rows = rows
	l.varRows = varRows
	if varRows == nil {
		l.varRows = rows
	}
	l.owned = false // not ours to overwrite: SetTemplates copies first
	l.sumColumns()
	l.mix.SetTemplates(l.rows, l.n)
}

// rowsOf returns t in the likelihood's bins-major layout (heights summed
// for a 2-D comparison), with its variances (the counts themselves for
// raw counts).
func (l *Likelihood) rowsOf(t *Templates) (rows, varRows []float64, err error) {
	if err := t.check(); err != nil {
		return nil, nil, err
	}
	if !l.opts.Use3D && t.Space.NumHeight() > 1 {
		t = t.Collapse2D()
	}
	if t.NumAgeBins() != l.k || !t.Space.Equal(l.space) {
		return nil, nil, fmt.Errorf("compare: templates of %d age bins in another space; want %d age bins in the likelihood's space", t.NumAgeBins(), l.k)
	}
	nb, nk := l.nb, l.k
	rows = make([]float64, nb*nk)
	for j := range nk {
		for i, v := range t.Counts[j*nb : (j+1)*nb] {
			rows[i*nk+j] = v
		}
	}
	varRows = rows
	if t.Var != nil {
		varRows = make([]float64, nb*nk)
		for j := range nk {
			for i, v := range t.Var[j*nb : (j+1)*nb] {
				varRows[i*nk+j] = v
			}
		}
	}
	return rows, varRows, nil
}

// own gives the Likelihood its own template buffers, so that SetTemplates
// never writes into rows another Likelihood shares.
func (l *Likelihood) own(withVar bool) {
	if !l.owned {
		sepVar := &l.varRows[0] != &l.rows[0]
		l.rows = make([]float64, l.nb*l.k)
		l.varRows = l.rows
		if sepVar {
			l.varRows = make([]float64, l.nb*l.k)
		}
		l.owned = true
	}
	if l.sharedSums {
		l.colSum, l.grpSum, l.sharedSums = nil, nil, false
	}
	if withVar && &l.varRows[0] == &l.rows[0] {
		l.varRows = make([]float64, l.nb*l.k)
	}
}

func (l *Likelihood) setCounts(counts []float64, check bool) error {
	l.n = append([]float64(nil), counts...)
	l.nTot, l.lnFactN = 0, 0
	l.nG = make([]float64, l.ng)
	empty, firstEmpty := 0, -1
	for i, n := range l.n {
		if !(n >= 0) || math.IsInf(n, 0) {
			return fmt.Errorf("compare: count %g in bin %d; counts must be finite and ≥ 0", n, i)
		}
		l.nTot += n
		l.nG[l.groupOf(i)] += n
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
	if empty > 0 && check {
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
	l.mG, l.sumG, l.dsumG = make([]float64, l.ng), make([]float64, l.ng), make([]float64, l.ng)
	l.scales, l.fresh = make([]float64, l.ng), make([]bool, l.ng)
	return nil
}

// reachable reports whether every bin holding data stars has template
// stars, without which every history has likelihood zero.
func (l *Likelihood) reachable() bool {
	for i, n := range l.n {
		if n == 0 {
			continue
		}
		var s float64
		for _, v := range l.rows[i*l.k : (i+1)*l.k] {
			s += v
		}
		if !(s > 0) {
			return false
		}
	}
	return true
}

// reached marks the bins some template star reaches (at the templates in
// use).
func (l *Likelihood) reached() []bool {
	out := make([]bool, l.nb)
	for i := range out {
		for _, v := range l.rows[i*l.k : (i+1)*l.k] {
			if v > 0 {
				out[i] = true
				break
			}
		}
	}
	return out
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

// NumScales returns the number of normalisation parameters the likelihood
// profiles: 0 for an absolute normalisation, 1 for a free one, and the
// number of color columns (or cells) holding data for a per-color one.
// They count as parameters in AIC and BIC.
func (l *Likelihood) NumScales() int {
	if !l.free {
		return 0
	}
	n := 0
	for _, v := range l.nG {
		if v > 0 {
			n++
		}
	}
	return n
}

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

// groupTotals sets mG[g] = Σ_j w_j S_gj.
func (l *Likelihood) groupTotals(w []float64) {
	nk := l.k
	for g := range l.ng {
		row := l.grpSum[g*nk : (g+1)*nk]
		var s float64
		for j, v := range row {
			s += v * w[j]
		}
		l.mG[g] = s
	}
}

// poissonLogL is the likelihood with exact templates.
func (l *Likelihood) poissonLogL(w, grad []float64) float64 {
	if !l.free {
		c := l.opts.MassScale
		for j, v := range w {
			l.ws[j] = c * v
		}
		l.scales[0] = c
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
	if math.IsInf(s, -1) {
		return l.outside(grad)
	}
	// Σ n ln μ − M − Σ ln n! at s = 1, moved to each group's best scale
	// N_g/M_g: + M_g + N_g ln(N_g/M_g) − N_g. A group without data stars
	// takes scale 0 and contributes nothing.
	l.groupTotals(w)
	for g, mg := range l.mG {
		ng := l.nG[g]
		if ng > 0 && !(mg > 0) {
			return l.outside(grad)
		}
		s += mg
		l.scales[g] = 0
		if ng > 0 {
			s += ng*math.Log(ng/mg) - ng
			l.scales[g] = ng / mg
		}
	}
	if grad != nil {
		nk := l.k
		for g, mg := range l.mG {
			f := 1.0
			if l.nG[g] > 0 {
				f = 1 - l.nG[g]/mg
			}
			row := l.grpSum[g*nk : (g+1)*nk]
			for j := range grad {
				grad[j] += f * row[j]
			}
		}
	}
	return s
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
	stats.MatVec(l.rows, l.nb, l.k, w, l.m)
	stats.MatVec(l.varRows, l.nb, l.k, l.w2, l.v)
	l.bbPrepare()
	if l.free {
		if !l.bbScales() {
			return l.outside(grad)
		}
	} else {
		l.scales[0] = l.opts.MassScale
	}
	var s float64
	for i, n := range l.n {
		m, r := l.m[i], l.r[i]
		scale := l.scales[l.groupOf(i)]
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
		l.a[i] = -beta*scale - q
		if n > 0 {
			l.a[i] += n / m
		}
		l.b[i] = 0.5 * q / r
		if n > 0 {
			// Laplace term of integrating β out instead of profiling it:
			// −½ ln(1 + n δ²) at β = 1, with n δ² = c_i. Without it a fit
			// gains from making its own templates noisier — weight piled
			// into one age bin raises δ and lets β absorb any misfit there.
			ci := l.c[i]
			s -= 0.5 * math.Log1p(ci)
			l.a[i] += ci / (m * (1 + ci))
			l.b[i] -= 0.5 * n / (m * m * (1 + ci))
		}
	}
	s += l.sumNLog()
	s -= l.lnFactN
	if grad != nil {
		clear(grad)
		clear(l.h)
		stats.MatTVecAdd(l.rows, l.nb, l.k, l.a, grad)
		stats.MatTVecAdd(l.varRows, l.nb, l.k, l.b, l.h)
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

// bbScales solves s_g Σ_{i∈g} β_i(s_g) m_i = N_g for every group's free
// scale by Newton's method from s₀ = N_g/Σ m_i (the β = 1 answer), which
// is already close: β departs from 1 only by the templates' relative noise.
// Differentiating β² + (s r − 1)β − c = 0 gives dβ/ds = −r β/D. A step
// below 1e−6 of s leaves an error of order its square, so a group stops
// there without evaluating again. A group without data stars has scale 0.
// It returns false if some group with data has no expected stars.
func (l *Likelihood) bbScales() bool {
	clear(l.mG)
	for i, m := range l.m {
		l.mG[l.groupOf(i)] += m
	}
	active := 0
	for g, mg := range l.mG {
		l.fresh[g] = l.nG[g] == 0
		switch {
		case l.nG[g] == 0:
			l.scales[g] = 0
		case !(mg > 0):
			return false
		default:
			l.scales[g] = l.nG[g] / mg
			active++
		}
	}
	for range 40 {
		if active == 0 {
			return true
		}
		clear(l.sumG)
		clear(l.dsumG)
		for i, m := range l.m {
			g := l.groupOf(i)
			if l.fresh[g] {
				continue
			}
			r := l.r[i]
			if !(r > 0) {
				l.sumG[g] += m
				continue
			}
			beta, d := bbRoot(l.scales[g]*r-1, l.c[i])
			l.sumG[g] += beta * m
			if d > 0 {
				l.dsumG[g] -= r * beta / d * m
			}
		}
		for g := range l.scales {
			if l.fresh[g] {
				continue
			}
			s, sum := l.scales[g], l.sumG[g]
			next := s - (s*sum-l.nG[g])/(sum+s*l.dsumG[g])
			if !(next > 0) || math.IsInf(next, 0) {
				next = l.nG[g] / sum // the fixed-point step, if Newton's fails
			}
			if math.IsNaN(next) {
				return false
			}
			if math.Abs(next-s) <= 1e-6*next {
				l.fresh[g] = true
				active--
			}
			l.scales[g] = next
		}
	}
	return true
}

// bbScale is bbScales for a single group, returning its scale: kept for
// the tests that check the free scale is a maximum.
func (l *Likelihood) bbScale() (float64, bool) {
	ok := l.bbScales()
	return l.scales[0], ok
}

// Scale returns the normalisation in force at weights: N/Σ m_i for a free
// normalisation (the plain-Poisson best scale), MassScale otherwise. With
// one scale per color column it returns the data-weighted mean, N/Σ_g M_g
// over the groups that hold data; Expected uses each group's own.
func (l *Likelihood) Scale(weights []float64) float64 {
	if !l.free {
		return l.opts.MassScale
	}
	l.groupTotals(weights)
	var mTot float64
	for g, mg := range l.mG {
		if l.nG[g] > 0 {
			mTot += mg
		}
	}
	return l.nTot / mTot
}

// Expected writes the expected counts s_g Σ_k w_k T_ki in the comparison
// space into dst (resliced or reallocated to NumBins) and returns it; s_g
// is each group's plain-Poisson best scale N_g/M_g (MassScale for an
// absolute normalisation), so with a free normalisation the total of each
// group matches the data's.
func (l *Likelihood) Expected(weights, dst []float64) []float64 {
	if cap(dst) < l.nb {
		dst = make([]float64, l.nb)
	}
	dst = dst[:l.nb]
	stats.MatVec(l.rows, l.nb, l.k, weights, dst)
	if !l.free {
		for i := range dst {
			dst[i] *= l.opts.MassScale
		}
		return dst
	}
	l.groupTotals(weights)
	for i := range dst {
		g := l.groupOf(i)
		s := 0.0
		if l.nG[g] > 0 {
			s = l.nG[g] / l.mG[g]
		}
		dst[i] *= s
	}
	return dst
}

// Fitted writes into dst the expectation the likelihood actually scores at
// weights: Expected for exact templates, β_i s_g m_i with the profiled
// Barlow–Beeston factors otherwise. It is what the deviance compares with
// the data.
func (l *Likelihood) Fitted(weights, dst []float64) []float64 {
	if !l.bb {
		return l.Expected(weights, dst)
	}
	if cap(dst) < l.nb {
		dst = make([]float64, l.nb)
	}
	dst = dst[:l.nb]
	if math.IsInf(l.bbLogL(weights, nil), -1) {
		for i := range dst {
			dst[i] = math.NaN()
		}
		return dst
	}
	copy(dst, l.t)
	return dst
}

// addConstraint adds to per, bin by bin, the Barlow–Beeston-lite
// constraint term of the last Fitted evaluation, (β_i − 1)² m_i/r_i =
// (β_i − 1)²/δ_i² (twice the −½ q m of bbLogL), and returns its sum; 0
// without template noise. A deviance without it would read a fit whose
// per-bin factors absorb the misfit (weight piled into a noisy age bin)
// as one that describes the catalog perfectly.
func (l *Likelihood) addConstraint(per []float64) float64 {
	if !l.bb {
		return 0
	}
	var s float64
	for i, m := range l.m {
		r := l.r[i]
		mu := l.scales[l.groupOf(i)] * m
		if !(r > 0) || !(mu > 0) {
			continue
		}
		dev := l.t[i]/mu - 1
		q := dev * dev * m / r
		per[i] += q
		s += q
	}
	return s
}

// logLFull returns ln L at weights with its gradient with respect to the
// weights (into grad) and to the expectation and variance of each bin in
// template units (into dm and dv, see binDerivatives; dv is zeroed for
// exact templates), in one pass.
func (l *Likelihood) logLFull(weights, grad, dm, dv []float64) float64 {
	v := l.LogLGrad(weights, grad)
	if math.IsInf(v, -1) {
		return v
	}
	if l.bb {
		copy(dm, l.a)
		copy(dv, l.b)
		return v
	}
	clear(dv)
	l.poissonBinDerivs(weights, dm)
	return v
}

// poissonBinDerivs writes ∂ln L/∂m_i of the exact-template likelihood,
// n_i/m_i − s_g(i), with the scales of the last evaluation.
func (l *Likelihood) poissonBinDerivs(weights, dm []float64) {
	stats.MatVec(l.rows, l.nb, l.k, weights, l.m)
	for i, m := range l.m {
		dm[i] = -l.scales[l.groupOf(i)]
		if n := l.n[i]; n > 0 {
			dm[i] += n / m
		}
	}
}

// binDerivatives writes ∂ln L/∂m_i into dm and ∂ln L/∂v_i into dv (nil
// for exact templates, where v plays no part) at weights, with
// m_i = Σ_k w_k T_ki and v_i = Σ_k w_k² V_ki in template units and every
// profiled scale and β held at its optimum (envelope theorem). A change of
// the templates themselves then moves ln L by Σ_i dm_i δm_i + dv_i δv_i.
// It returns ln L.
func (l *Likelihood) binDerivatives(weights, dm, dv []float64) float64 {
	if l.bb {
		v := l.bbLogL(weights, nil)
		copy(dm, l.a)
		if dv != nil {
			copy(dv, l.b)
		}
		return v
	}
	v := l.poissonLogL(weights, nil)
	if dv != nil {
		clear(dv)
	}
	if math.IsInf(v, -1) {
		return v
	}
	l.poissonBinDerivs(weights, dm)
	return v
}

// Groups returns each bin's normalisation group (nil: one group) and the
// data's count in each group: what a mock must hold fixed.
func (l *Likelihood) groups() ([]int32, []float64) { return l.group, l.nG }

// PearsonResiduals returns (n_i − μ_i)/√μ_i per comparison bin, with μ the
// expected counts of Expected (template noise not included).
func (l *Likelihood) PearsonResiduals(weights []float64) []float64 {
	mu := l.Expected(weights, nil)
	return stats.PearsonResiduals(nil, mu, l.n)
}
