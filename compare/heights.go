package compare

import (
	"errors"
	"fmt"
	"math"
	"slices"

	"spinpop/compare/stats"
)

// HeightHypothesis is one history's prediction of the young fraction.
type HeightHypothesis struct {
	Name     string
	Fraction []float64 // predicted young fraction per |z| bin (NaN where nothing is predicted)
	// LogL is the binomial log-likelihood of the observed young counts,
	// Σ_z ln C(n_z, y_z) + y_z ln f_z + (n_z − y_z) ln(1 − f_z).
	LogL float64
}

// HeightResult is the young fraction of the catalog against |z|, with
// what each hypothesis predicts.
type HeightResult struct {
	ZEdgesPc    []float64
	SplitAgeGyr float64
	// YoungCell marks the (color, period) cells counted as young (period
	// below the split gyrochrone at the cell's centre color); Classified
	// marks the cells the gyrochrone reaches at all. Both are in
	// NumColorPeriod order, for plotting the split.
	YoungCell, Classified []bool
	Young, Total          []int              // data counts per |z| bin
	Fraction              []float64          // Young/Total (NaN when Total is 0)
	Lo68, Hi68            []float64          // Wilson 68 % interval of Fraction
	Hypotheses            []HeightHypothesis // sorted by name
}

// HeightCheck splits the comparison plane at the gyrochrone of
// splitAgeGyr — gyro(bv) gives its period at color bv, ok false where the
// law has none — and compares the young fraction of the catalog in each
// |z| bin with the fraction each hypothesis (name → age-bin weights)
// predicts through the 3-D templates. A young disk population is thinner
// than an old one, so the young fraction must fall with height; a burst
// changes how fast. Cells are classified at their centres: a cell the
// gyrochrone crosses is counted whole on one side, in data and model
// alike, so the comparison stays fair at the price of a blurred split.
func HeightCheck(tpl *Templates, obs *Observed, splitAgeGyr float64, gyro func(bv float64) (periodD float64, ok bool), hypotheses map[string][]float64) (*HeightResult, error) {
	preds := make(map[string]Prediction, len(hypotheses))
	for n, w := range hypotheses {
		preds[n] = Prediction{Templates: tpl, Weights: w}
	}
	return HeightCheckFits(tpl, obs, splitAgeGyr, gyro, preds, false)
}

// Prediction is what a fitted model expects: its templates (its own, when
// it was fitted with nuisance parameters) and its age-bin weights.
type Prediction struct {
	Templates *Templates
	Weights   []float64
}

// PredictionOf is fit f's prediction: its own templates, or base for a fit
// without nuisance parameters.
func PredictionOf(f FitResult, base *Templates) Prediction {
	t := f.Templates
	if t == nil {
		t = base
	}
	return Prediction{Templates: t, Weights: f.Weights}
}

// HeightCheckFits is HeightCheck with each hypothesis' own templates.
// tpl gives the space. With perColor, each hypothesis' color columns are
// scaled to the catalog's counts before the young fraction is taken, as a
// likelihood conditional on color predicts it.
func HeightCheckFits(tpl *Templates, obs *Observed, splitAgeGyr float64, gyro func(bv float64) (periodD float64, ok bool), hypotheses map[string]Prediction, perColor bool) (*HeightResult, error) {
	if tpl == nil || obs == nil || gyro == nil {
		return nil, errors.New("compare: HeightCheck needs templates, an observed catalog and a gyrochrone")
	}
	sp := tpl.Space
	nz := sp.NumHeight()
	if nz < 2 {
		return nil, fmt.Errorf("compare: the height check needs at least two |z| bins; the space has %d", nz)
	}
	if len(obs.Counts) != sp.NumBins() {
		return nil, fmt.Errorf("compare: observed counts have %d bins, the templates' space %d; bin both in the same space", len(obs.Counts), sp.NumBins())
	}
	ncp := sp.NumColorPeriod()
	res := &HeightResult{
		ZEdgesPc:    append([]float64(nil), sp.HeightEdgesPc...),
		SplitAgeGyr: splitAgeGyr,
		YoungCell:   make([]bool, ncp),
		Classified:  make([]bool, ncp),
		Young:       make([]int, nz),
		Total:       make([]int, nz),
		Fraction:    make([]float64, nz),
		Lo68:        make([]float64, nz),
		Hi68:        make([]float64, nz),
	}
	np := sp.NumLogPeriod()
	for c := range sp.NumColor() {
		pSplit, ok := gyro(sp.ColorCenter(c))
		if !ok || !(pSplit > 0) {
			continue
		}
		for p := range np {
			res.Classified[c*np+p] = true
			res.YoungCell[c*np+p] = sp.PeriodCenterD(p) < pSplit
		}
	}
	young, total := splitCounts(sp, res, obs.Counts)
	for z := range nz {
		res.Young[z], res.Total[z] = int(math.Round(young[z])), int(math.Round(total[z]))
		res.Fraction[z], res.Lo68[z], res.Hi68[z] = math.NaN(), math.NaN(), math.NaN()
		if res.Total[z] > 0 {
			res.Fraction[z] = float64(res.Young[z]) / float64(res.Total[z])
			lo, hi, err := stats.WilsonInterval(res.Young[z], res.Total[z], 0.6827)
			if err != nil {
				return nil, err
			}
			res.Lo68[z], res.Hi68[z] = lo, hi
		}
	}
	names := make([]string, 0, len(hypotheses))
	for n := range hypotheses {
		names = append(names, n)
	}
	slices.Sort(names)
	for _, name := range names {
		pr := hypotheses[name]
		w, t := pr.Weights, pr.Templates
		if t == nil {
			t = tpl
		}
		if len(w) != t.NumAgeBins() || !t.Space.Equal(sp) {
			return nil, fmt.Errorf("compare: hypothesis %q has %d weights for %d age bins (or templates in another space)", name, len(w), t.NumAgeBins())
		}
		mu := t.Expected(w, nil)
		if perColor {
			scaleColumns(sp, mu, obs.Counts)
		}
		my, mt := splitCounts(sp, res, mu)
		h := HeightHypothesis{Name: name, Fraction: make([]float64, nz)}
		for z := range nz {
			f := math.NaN()
			if mt[z] > 0 {
				f = my[z] / mt[z]
			}
			h.Fraction[z] = f
			h.LogL += binomialLogL(res.Young[z], res.Total[z], f)
		}
		res.Hypotheses = append(res.Hypotheses, h)
	}
	return res, nil
}

// scaleColumns scales each color column of the 3-D expectation mu to the
// data's count in that column.
func scaleColumns(sp Space, mu, data []float64) {
	per := sp.NumLogPeriod() * sp.NumHeight()
	for c := range sp.NumColor() {
		var m, n float64
		for i := c * per; i < (c+1)*per; i++ {
			m += mu[i]
			n += data[i]
		}
		f := 0.0
		if m > 0 {
			f = n / m
		}
		for i := c * per; i < (c+1)*per; i++ {
			mu[i] *= f
		}
	}
}

// splitCounts sums 3-D counts into young and classified totals per |z| bin.
func splitCounts(sp Space, res *HeightResult, counts []float64) (young, total []float64) {
	nz := sp.NumHeight()
	young, total = make([]float64, nz), make([]float64, nz)
	for j, ok := range res.Classified {
		if !ok {
			continue
		}
		for z := range nz {
			v := counts[j*nz+z]
			total[z] += v
			if res.YoungCell[j] {
				young[z] += v
			}
		}
	}
	return young, total
}

// binomialLogL is ln P(y | n, f); 0 for n = 0, −Inf where f cannot
// produce y (f = 0 with y > 0, f = 1 with y < n, or f undefined).
func binomialLogL(y, n int, f float64) float64 {
	if n == 0 {
		return 0
	}
	if math.IsNaN(f) {
		return math.Inf(-1)
	}
	lc := stats.LnFactorial(float64(n)) - stats.LnFactorial(float64(y)) - stats.LnFactorial(float64(n-y))
	var s float64
	if y > 0 {
		if f <= 0 {
			return math.Inf(-1)
		}
		s += float64(y) * math.Log(f)
	}
	if n-y > 0 {
		if f >= 1 {
			return math.Inf(-1)
		}
		s += float64(n-y) * math.Log1p(-f)
	}
	return lc + s
}
