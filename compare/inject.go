package compare

import (
	"context"
	"fmt"
	"math"
	"slices"

	"spinpop/compare/stats"
)

// InjectionSweep sets up an injection–recovery run.
type InjectionSweep struct {
	BurstAgesGyr   []float64 // injected burst ages
	BurstFractions []float64 // injected burst mass fractions
	// Replicates is the number of mock catalogs per (age, fraction) cell,
	// and of smooth-history mocks for the false-alarm rate.
	Replicates int
	// NStars is the size of each mock catalog (free normalisation; with an
	// absolute one the mocks are Poisson with mean MassScale Σ w T and
	// NStars only sizes the layout).
	NStars  int
	Seed    uint64
	Workers int
	// Bootstrap > 0 calibrates each mock's LR by its own parametric
	// bootstrap of that many replicates (BurstTest; costly). Bootstrap = 0
	// calibrates every mock against one null distribution: the LRs of
	// NullMocks catalogs drawn from the true smooth history, computed once.
	// The calibrated null is exact for the sweep's own truth and needs no
	// refit under the fitted smooth history, which the bootstrap replaces
	// by an estimate; it is the default because it is B times cheaper.
	Bootstrap int
	NullMocks int // 0: 200
	// AgeParam and FractionParam name the burst model's age and mass
	// fraction ("" : "burst.age_gyr", "burst.mass_fraction").
	AgeParam, FractionParam string
	Progress                func(done, total int)
}

// InjectionCell is the recovery of one injected (age, fraction).
type InjectionCell struct {
	AgeGyr, Fraction float64
	PValues          []float64 // per mock
	RecoveredAgesGyr []float64 // best-fit burst age per mock
	LRs              []float64
	Detected         int     // mocks with p < 0.01
	DetectionRate    float64 // Detected / replicates
	DetLo68, DetHi68 float64 // Wilson 68 % interval of the rate
	MedianAgeGyr     float64 // median recovered age
	// Coverage68 is the fraction of mocks whose 68 % profile interval of
	// the burst age contains the injected age (nominally 0.68).
	Coverage68 float64
}

// InjectionResult is the outcome of InjectRecover.
type InjectionResult struct {
	Method         string // "calibrated-null" or "bootstrap"
	NullLRs        []float64
	Cells          []InjectionCell // age-major: cell a·len(fractions)+f
	FalseAlarmP    []float64       // p-values of the smooth-history mocks
	FalseAlarmRate float64         // fraction with p < 0.05
	FALo68, FAHi68 float64         // its Wilson 68 % interval
}

// InjectRecover measures what the burst test can find. For each injected
// (age, fraction) it draws sweep.Replicates mock catalogs from the
// templates under the burst model's base history with that burst, fits
// the smooth and burst models to each, and records the recovered age,
// whether the 68 % profile interval covers the truth, and the p-value of
// the likelihood ratio (see InjectionSweep.Bootstrap for how it is
// calibrated); detection is p < 0.01. Mocks drawn from the smooth model's
// base history give the false-alarm rate, the fraction with p < 0.05.
// Each mock has its own random stream of (Seed, role, index): results do
// not depend on Workers. A cancelled ctx returns ctx.Err().
func InjectRecover(ctx context.Context, tpl *Templates, opts LikeOptions, smooth, burst HistoryModel, sweep InjectionSweep) (*InjectionResult, error) {
	if sweep.AgeParam == "" {
		sweep.AgeParam = "burst.age_gyr"
	}
	if sweep.FractionParam == "" {
		sweep.FractionParam = "burst.mass_fraction"
	}
	if sweep.NullMocks <= 0 {
		sweep.NullMocks = 200
	}
	if sweep.Replicates <= 0 || sweep.NStars <= 0 {
		return nil, fmt.Errorf("compare: injection needs Replicates > 0 and NStars > 0, got %d and %d", sweep.Replicates, sweep.NStars)
	}
	if len(sweep.BurstAgesGyr) == 0 || len(sweep.BurstFractions) == 0 {
		return nil, fmt.Errorf("compare: injection needs at least one burst age and one fraction")
	}
	ageIdx := slices.Index(burst.Names(), sweep.AgeParam)
	if ageIdx < 0 {
		return nil, fmt.Errorf("compare: the burst model does not fit %q; free are %v", sweep.AgeParam, burst.Names())
	}
	if err := smooth.Validate(); err != nil {
		return nil, err
	}
	if err := burst.Validate(); err != nil {
		return nil, err
	}
	w0, err := smooth.Base.WithParams(nil)
	if err != nil {
		return nil, err
	}
	wNull := w0.BinWeights(smooth.AgeEdgesGyr)
	layout := tpl
	if !opts.Use3D {
		layout = tpl.Collapse2D()
	}
	base, err := NewLikelihood(tpl, Asimov(layout, wNull, float64(sweep.NStars)), opts)
	if err != nil {
		return nil, err
	}
	free := base.free // every normalisation but the absolute one is profiled

	// Every mock's expected counts.
	type job struct {
		role int // 0 null, 1 false alarm, 2 injected
		cell int
		idx  int
		mu   []float64
	}
	muNull := base.Expected(wNull, nil)
	if !free {
		muNull = scaled(layout.Expected(wNull, nil), base.Options().MassScale)
	}
	var jobs []job
	if sweep.Bootstrap == 0 {
		for i := range sweep.NullMocks {
			jobs = append(jobs, job{role: 0, idx: i, mu: muNull})
		}
	}
	for i := range sweep.Replicates {
		jobs = append(jobs, job{role: 1, idx: i, mu: muNull})
	}
	nf := len(sweep.BurstFractions)
	res := &InjectionResult{Method: "calibrated-null"}
	if sweep.Bootstrap > 0 {
		res.Method = "bootstrap"
	}
	res.Cells = make([]InjectionCell, len(sweep.BurstAgesGyr)*nf)
	for a, age := range sweep.BurstAgesGyr {
		for f, frac := range sweep.BurstFractions {
			c := a*nf + f
			h, err := burst.Base.WithParams(map[string]float64{sweep.AgeParam: age, sweep.FractionParam: frac})
			if err != nil {
				return nil, fmt.Errorf("compare: injected burst (age %g Gyr, fraction %g): %w", age, frac, err)
			}
			w := h.BinWeights(burst.AgeEdgesGyr)
			mu := base.Expected(w, nil)
			if !free {
				mu = scaled(layout.Expected(w, nil), base.Options().MassScale)
			}
			res.Cells[c] = InjectionCell{AgeGyr: age, Fraction: frac}
			for i := range sweep.Replicates {
				jobs = append(jobs, job{role: 2, cell: c, idx: i, mu: mu})
			}
		}
	}

	type outcome struct {
		lr, p, age float64
		covered    bool
	}
	out := make([]outcome, len(jobs))
	base.markShared()
	err = parallelReplicates(ctx, len(jobs), sweep.Workers, sweep.Progress, func(j int, counts []float64) error {
		jb := jobs[j]
		seed := sweep.Seed ^ [3]uint64{0x6e756c6c, 0x66616c73, 0x696e6a65}[jb.role]
		drawLikeMock(counts, jb.mu, base, replicateStream(seed, jb.cell*sweep.Replicates+jb.idx))
		l, err := base.WithCounts(counts)
		if err != nil {
			return err
		}
		var o outcome
		if sweep.Bootstrap > 0 && jb.role > 0 {
			r, err := BurstTest(ctx, l, smooth, burst, TestOptions{Replicates: sweep.Bootstrap, Seed: seed + uint64(j), Workers: 1, NoEvidence: true, NoProfile: jb.role != 2})
			if err != nil {
				return err
			}
			o.lr, o.p, o.age = r.LR, r.PValue, r.Burst.Theta[ageIdx]
			if jb.role == 2 {
				o.covered = r.AgeInterval.Lo68 <= res.Cells[jb.cell].AgeGyr && res.Cells[jb.cell].AgeGyr <= r.AgeInterval.Hi68
			}
		} else {
			f0, err := Fit(l, smooth, FitOptions{Starts: 2, Seed: sweep.Seed})
			if err != nil {
				return err
			}
			f1, err := Fit(l, burst, FitOptions{Starts: 4, Seed: sweep.Seed, Init: nestedStarts(smooth, burst, f0.Theta)})
			if err != nil {
				return err
			}
			o.lr, o.age = math.Max(0, 2*(f1.LogL-f0.LogL)), f1.Theta[ageIdx]
			if jb.role == 2 {
				iv, err := ProfileAuto(l, burst, sweep.AgeParam, f1)
				if err != nil {
					return err
				}
				age := res.Cells[jb.cell].AgeGyr
				o.covered = iv.Lo68 <= age && age <= iv.Hi68
			}
		}
		out[j] = o
		return nil
	}, base.NumBins())
	if err != nil {
		return nil, err
	}

	for j, jb := range jobs {
		if jb.role == 0 {
			res.NullLRs = append(res.NullLRs, out[j].lr)
		}
	}
	pOf := func(o outcome) float64 {
		if sweep.Bootstrap > 0 {
			return o.p
		}
		p, _ := bootstrapP(o.lr, res.NullLRs, sweep.Seed)
		return p
	}
	fa := 0
	for j, jb := range jobs {
		switch jb.role {
		case 1:
			p := pOf(out[j])
			res.FalseAlarmP = append(res.FalseAlarmP, p)
			if p < 0.05 {
				fa++
			}
		case 2:
			c := &res.Cells[jb.cell]
			p := pOf(out[j])
			c.PValues = append(c.PValues, p)
			c.LRs = append(c.LRs, out[j].lr)
			c.RecoveredAgesGyr = append(c.RecoveredAgesGyr, out[j].age)
			if p < 0.01 {
				c.Detected++
			}
			if out[j].covered {
				c.Coverage68++
			}
		}
	}
	r := sweep.Replicates
	res.FalseAlarmRate = float64(fa) / float64(r)
	if res.FALo68, res.FAHi68, err = stats.WilsonInterval(fa, r, 0.6827); err != nil {
		return nil, err
	}
	for c := range res.Cells {
		cell := &res.Cells[c]
		cell.DetectionRate = float64(cell.Detected) / float64(r)
		cell.Coverage68 /= float64(r)
		if cell.DetLo68, cell.DetHi68, err = stats.WilsonInterval(cell.Detected, r, 0.6827); err != nil {
			return nil, err
		}
		ages := append([]float64(nil), cell.RecoveredAgesGyr...)
		slices.Sort(ages)
		cell.MedianAgeGyr = stats.QuantileSorted(ages, 0.5)
	}
	return res, nil
}

func scaled(x []float64, s float64) []float64 {
	for i := range x {
		x[i] *= s
	}
	return x
}
