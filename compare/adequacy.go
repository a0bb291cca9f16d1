package compare

import (
	"context"
	"fmt"
	"math"
	"sort"
)

// Adequacy is the absolute goodness of fit of a fitted model: does it
// describe the catalog at all, before any preference between models?
//
// The statistic is the deviance against the saturated model (one free
// mean per bin),
//
//	D = 2 Σ_i [n_i ln(n_i/μ̂_i) − (n_i − μ̂_i)],
//
// μ̂ the fitted expectation the likelihood scores (with the profiled
// template-noise factors). With many sparse bins D does not follow χ² with
// bins − parameters degrees of freedom, so it is calibrated by the
// parametric bootstrap: each replicate catalog, drawn from a fitted model
// and refitted, gives a D* of a model that is right by construction
// (McCullagh & Nelder 1989, Generalized Linear Models, §4.4.3 on the
// deviance as a goodness-of-fit statistic; the bootstrap calibration is
// common practice).
//
// The dispersion φ̂ = D/mean(D*) (at least 1) says by how much the catalog
// scatters about the model beyond counting noise; quasi-likelihood divides
// likelihood ratios by it and widens intervals by √φ̂ (McCullagh & Nelder
// 1989, §9.2.4) [memory]. Excess = D − mean(D*) is that misfit in units of
// 2 ln L, the scale on which a burst's likelihood ratio is measured.
type Adequacy struct {
	Deviance      float64 `json:"deviance"`
	ReplicateMean float64 `json:"replicate_mean"`
	ReplicateSD   float64 `json:"replicate_sd"`
	// PValue is (1 + #{D* ≥ D})/(1 + B) when some replicate reaches D;
	// when none does it is the normal tail 1 − Φ((D − mean D*)/sd D*),
	// which, unlike 1/(1 + B), does not stop at the number of replicates
	// (a deviance is a sum over many bins, so its bootstrap distribution
	// is close to normal). PValueNormal keeps the normal tail always.
	PValue       float64 `json:"p_value"`
	PValueNormal float64 `json:"p_value_normal"`
	Exceeded     int     `json:"replicates_exceeding"` // #{D* ≥ D}
	Dispersion   float64 `json:"dispersion"`           // φ̂ = max(1, D/mean(D*))
	Excess       float64 `json:"excess"`               // D − mean(D*)
	Replicates   int     `json:"replicates"`
	// Regions splits D and mean(D*) by color column, period band and
	// (3-D comparisons) height band, largest excess first: where the misfit
	// lives.
	Regions []RegionMisfit `json:"regions"`
}

// RegionMisfit is the deviance of one part of the comparison space.
type RegionMisfit struct {
	Axis     string  `json:"axis"` // "color", "period" or "height"
	Lo       float64 `json:"lo"`   // B−V (mag), period (d) or |z| (pc)
	Hi       float64 `json:"hi"`
	Stars    float64 `json:"stars"`
	Deviance float64 `json:"deviance"`
	Expected float64 `json:"expected"` // mean D* of the region
	Excess   float64 `json:"excess"`
}

// Adequate reports whether the model passes at level alpha: more than a
// fraction alpha of the model's own replicates reach its deviance. With
// fewer than 1/alpha replicates a model can never fail; callers should
// ask for enough.
func (a Adequacy) Adequate(alpha float64) bool { return a.PValue > alpha }

// deviance writes each bin's Poisson contribution 2[n ln(n/μ) − (n − μ)] into per
// (if not nil) and returns the sum. A bin with data and μ ≤ 0 contributes
// +Inf.
func deviance(n, mu, per []float64) float64 {
	var s float64
	for i, m := range mu {
		var d float64
		switch {
		case n[i] == 0:
			d = 2 * m
		case !(m > 0):
			d = math.Inf(1)
		default:
			d = 2 * (n[i]*math.Log(n[i]/m) - (n[i] - m))
		}
		if per != nil {
			per[i] = d
		}
		s += d
	}
	return s
}

// region is a set of comparison bins.
type region struct {
	axis   string
	lo, hi float64
	bins   []int
}

// periodBands is how many bands the period axis is split into for the
// misfit report.
const periodBands = 6

// misfitRegions returns the color columns, period bands and (when the
// space has several) height bands of sp.
func misfitRegions(sp Space) []region {
	var out []region
	nc, np, nz := sp.NumColor(), sp.NumLogPeriod(), sp.NumHeight()
	for c := range nc {
		r := region{axis: "color", lo: sp.ColorEdges[c], hi: sp.ColorEdges[c+1]}
		for i := range sp.NumBins() {
			if cc, _, _ := sp.Split(i); cc == c {
				r.bins = append(r.bins, i)
			}
		}
		out = append(out, r)
	}
	bands := min(periodBands, np)
	for b := range bands {
		p0, p1 := b*np/bands, (b+1)*np/bands
		r := region{axis: "period", lo: math.Pow(10, sp.LogPeriodEdges[p0]), hi: math.Pow(10, sp.LogPeriodEdges[p1])}
		for i := range sp.NumBins() {
			if _, p, _ := sp.Split(i); p >= p0 && p < p1 {
				r.bins = append(r.bins, i)
			}
		}
		out = append(out, r)
	}
	if nz > 1 {
		for z := range nz {
			r := region{axis: "height", lo: sp.HeightEdgesPc[z], hi: sp.HeightEdgesPc[z+1]}
			for i := range sp.NumBins() {
				if _, _, zz := sp.Split(i); zz == z {
					r.bins = append(r.bins, i)
				}
			}
			out = append(out, r)
		}
	}
	return out
}

// regionSums returns Σ per over each region's bins.
func regionSums(regs []region, per []float64) []float64 {
	out := make([]float64, len(regs))
	for r, reg := range regs {
		for _, i := range reg.bins {
			out[r] += per[i]
		}
	}
	return out
}

// devianceRecord is one fit's deviance, whole and by region.
type devianceRecord struct {
	total   float64
	regions []float64
}

// newAdequacy calibrates the data's deviance record against replicates.
func newAdequacy(data devianceRecord, reps []devianceRecord, regs []region, counts []float64) Adequacy {
	a := Adequacy{Deviance: data.total, Replicates: len(reps)}
	var s, s2 float64
	ge := 0
	for _, r := range reps {
		s += r.total
		s2 += r.total * r.total
		if r.total >= data.total {
			ge++
		}
	}
	b := float64(len(reps))
	a.Exceeded = ge
	if b > 0 {
		a.ReplicateMean = s / b
		a.ReplicateSD = math.Sqrt(math.Max(0, s2/b-a.ReplicateMean*a.ReplicateMean))
		a.PValue = (1 + float64(ge)) / (1 + b)
		a.PValueNormal = normalUpperTail(a.Deviance, a.ReplicateMean, a.ReplicateSD)
		if ge == 0 && a.ReplicateSD > 0 {
			a.PValue = math.Min(a.PValue, a.PValueNormal)
		}
	} else {
		a.ReplicateMean, a.PValue, a.PValueNormal = math.NaN(), math.NaN(), math.NaN()
	}
	a.Excess = a.Deviance - a.ReplicateMean
	a.Dispersion = 1
	if a.ReplicateMean > 0 && a.Deviance > a.ReplicateMean {
		a.Dispersion = a.Deviance / a.ReplicateMean
	}
	for r, reg := range regs {
		m := RegionMisfit{Axis: reg.axis, Lo: reg.lo, Hi: reg.hi, Deviance: data.regions[r]}
		for _, i := range reg.bins {
			m.Stars += counts[i]
		}
		for _, rep := range reps {
			m.Expected += rep.regions[r]
		}
		if b > 0 {
			m.Expected /= b
		}
		m.Excess = m.Deviance - m.Expected
		a.Regions = append(a.Regions, m)
	}
	sort.SliceStable(a.Regions, func(i, j int) bool { return a.Regions[i].Excess > a.Regions[j].Excess })
	return a
}

// Describe writes the worst regions in words.
func (r RegionMisfit) Describe() string {
	switch r.Axis {
	case "color":
		return fmt.Sprintf("B−V %.2f–%.2f", r.Lo, r.Hi)
	case "period":
		return fmt.Sprintf("periods %.3g–%.3g d", r.Lo, r.Hi)
	}
	return fmt.Sprintf("|z| %g–%g pc", r.Lo, r.Hi)
}

// GoFOptions control GoodnessOfFit.
type GoFOptions struct {
	Replicates int    // bootstrap replicates (0: 200)
	Seed       uint64 // replicate i draws from a stream of (Seed, i)
	Workers    int
	Starts     int  // starts of each replicate's refit (0: 2)
	Refit      bool // refit the model's free parameters to every replicate (as fit f was fitted to the data)
	Nuisance   *Nuisance
	Progress   func(done, total int)
}

// GoodnessOfFit calibrates the deviance of model m at fit f (the data's
// fit, or the model as written) by the parametric bootstrap: replicates
// drawn from f, refitted when opts.Refit (nuisance parameters on f's
// expansion), each giving the deviance of a model that is right by
// construction. See Adequacy.
func GoodnessOfFit(ctx context.Context, like *Likelihood, m HistoryModel, f FitResult, opts GoFOptions) (Adequacy, error) {
	if opts.Replicates <= 0 {
		opts.Replicates = 200
	}
	if opts.Starts <= 0 {
		opts.Starts = 2
	}
	regs := misfitRegions(like.Space())
	data, err := fitDeviance(like, f, regs)
	if err != nil {
		return Adequacy{}, err
	}
	mu := like.Expected(f.Weights, nil)
	reps := make([]devianceRecord, opts.Replicates)
	like.markShared()
	err = parallelReplicates(ctx, opts.Replicates, opts.Workers, opts.Progress, func(i int, counts []float64) error {
		drawLikeMock(counts, mu, like, replicateStream(opts.Seed, i))
		l, err := like.withCounts(counts, false)
		if err != nil {
			return err
		}
		r := f
		if opts.Refit && m.Dim()+opts.Nuisance.Dim() > 0 {
			if r, err = refitAt(l, m, opts.Nuisance, f.morph, FitOptions{Starts: opts.Starts, Seed: opts.Seed, Init: [][]float64{f.Theta}}, f.Nuisance); err != nil {
				return fmt.Errorf("compare: goodness-of-fit replicate %d: %w", i, err)
			}
		}
		reps[i], err = fitDeviance(l, r, regs)
		return err
	}, len(mu))
	if err != nil {
		return Adequacy{}, err
	}
	return newAdequacy(data, reps, regs, like.Counts()), nil
}
