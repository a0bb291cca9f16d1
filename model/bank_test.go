package model

import (
	"context"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/model/spin"
	"spinpop/model/spots"
)

// bankGrid is a comparison-like grid: 12 colors, 24 log-period bins from
// 0.5 to 100 d, three height bins.
func bankGrid() Grid {
	g := Grid{HeightEdgesPc: []float64{0, 200, 500, 2000}}
	for i := 0; i <= 12; i++ {
		g.ColorEdges = append(g.ColorEdges, 0.45+1.15*float64(i)/12)
	}
	for i := 0; i <= 24; i++ {
		g.LogPeriodEdges = append(g.LogPeriodEdges, math.Log10(0.5)+math.Log10(200)*float64(i)/24)
	}
	return g
}

// randomTemplates runs p and bins its catalog stars (random detection,
// random recovery) per age bin into g, and collects a bank of the same run.
func randomTemplatesAndBank(t *testing.T, p *Population, g Grid, nStars int64, margin BankMargin) (counts []float64, bank *Bank) {
	t.Helper()
	nk, nb := len(p.BinProb), g.NumBins()
	counts = make([]float64, nk*nb)
	bb, err := NewBankBuilder(p, nk, 7, margin)
	require.NoError(t, err)
	nP, nZ := len(g.LogPeriodEdges)-1, len(g.HeightEdgesPc)-1
	err = RunChunks(context.Background(), 7, nStars, 1<<14, 2, p.Fill, func(c *Chunk) error {
		bb.Add(c)
		for i := 0; i < c.N; i++ {
			if !c.Flags[i].Selected() {
				continue
			}
			bv := c.ObsBV[i]
			if g.Dereddened {
				bv -= EBVPerAV * c.AV[i]
			}
			col := BinIndex(g.ColorEdges, bv)
			per := BinIndex(g.LogPeriodEdges, math.Log10(c.MeasPeriodD[i]))
			z := BinIndex(g.HeightEdgesPc, math.Abs(c.ZPc[i]))
			if col < 0 || per < 0 || z < 0 {
				continue
			}
			counts[int(c.AgeBin[i])*nb+(col*nP+per)*nZ+z]++
		}
		return nil
	})
	require.NoError(t, err)
	return counts, bb.Bank()
}

// chi2PerBin compares counts n with expectations mu of variance
// mu + extra over bins with mu > 5, returning χ²/dof and dof.
func chi2PerBin(n, mu, extraVar []float64) (float64, int) {
	var chi2 float64
	dof := 0
	for i, m := range mu {
		if m <= 5 {
			continue
		}
		v := m
		if extraVar != nil {
			v += extraVar[i]
		}
		d := n[i] - m
		chi2 += d * d / v
		dof++
	}
	return chi2 / float64(dof), dof
}

// The bank's expectation is the generator's own: templates binned from a
// run's random detections and random recovered periods scatter about the
// bank's Observe of the same run's stars as Poisson counts do (χ²/dof near
// 1; a wrong kernel, alias or detection weight gives χ²/dof ≫ 1).
// Common practice, no source: a χ² test of counts against expectations.
func TestBankObserveMatchesGenerator(t *testing.T) {
	p := testPopulation(t, 4)
	g := bankGrid()
	counts, bank := randomTemplatesAndBank(t, p, g, 1_500_000, BankMargin{})
	exp, vars, err := bank.Observe(context.Background(), p, g, ObserveOptions{BaseFractionScale: 1})
	require.NoError(t, err)
	r, dof := chi2PerBin(counts, exp, nil)
	t.Logf("χ²/dof = %.3f over %d bins", r, dof)
	assert.Greater(t, dof, 300)
	assert.Less(t, r, 1.15, "χ²/dof of the generator's templates about the bank's expectation")
	var sn, se float64
	for i := range counts {
		sn += counts[i]
		se += exp[i]
	}
	assert.InDelta(t, se, sn, 4*math.Sqrt(se), "total catalog stars")
	// The variance of a weighted count is below its expectation.
	for i := range vars {
		assert.LessOrEqual(t, vars[i], exp[i]*(1+1e-12)+1e-300)
	}
}

// Re-observing under another spin-down law gives what a run with that law
// gives. The runs differ in their stars (a star outside a law's calibrated
// range draws no detection numbers, which moves the rest of the chunk's
// stream), so each side's noise enters the χ².
func TestBankObserveOtherLaw(t *testing.T) {
	p := testPopulation(t, 4)
	q := *p
	q.Law = spin.MamajekHillenbrand2008()
	require.NoError(t, q.Prepare())
	bankFollowsRun(t, p, &q, 200)
}

// bankFollowsRun checks that the bank of a run of p, re-observed through
// q, gives what a run of q gives (χ²/dof below 1.2 over more than minDof
// bins, each side's noise in the variance), and that the bank observed
// through p does not (χ²/dof above 3). It returns both expectations.
func bankFollowsRun(t *testing.T, p, q *Population, minDof int) (exp, old []float64) {
	t.Helper()
	g := bankGrid()
	_, bank := randomTemplatesAndBank(t, p, g, 1_000_000, BankMargin{})
	counts, _ := randomTemplatesAndBank(t, q, g, 1_000_000, BankMargin{})
	exp, vars, err := bank.Observe(context.Background(), q, g, ObserveOptions{BaseFractionScale: 1})
	require.NoError(t, err)
	r, dof := chi2PerBin(counts, exp, vars)
	t.Logf("χ²/dof = %.3f over %d bins", r, dof)
	assert.Greater(t, dof, minDof)
	assert.Less(t, r, 1.2)
	old, oldVar, err := bank.Observe(context.Background(), p, g, ObserveOptions{BaseFractionScale: 1})
	require.NoError(t, err)
	r2, _ := chi2PerBin(counts, old, oldVar)
	assert.Greater(t, r2, 3.0, "the bank observed as run is not the other run's expectation")
	return exp, old
}

// A changed binary fraction re-weights the stored binaries and single stars
// to what a run with that fraction gives, and a color calibration moves
// stored stars across the color bins and cuts as a run with it does. The
// runs differ in their stars here (the photometry decides which stars
// draw rotation numbers), so each side's noise enters the χ².
func TestBankObserveBinariesAndColor(t *testing.T) {
	p := testPopulation(t, 4)
	g := bankGrid()
	_, bank := randomTemplatesAndBank(t, p, g, 1_500_000, BankMargin{ColorMag: 0.06, BandMag: 0.1})
	cases := map[string]func(q *Population){
		"binary fraction ×0.5": func(q *Population) { q.Binaries.FractionScale = 0.5 },
		"color offset +0.04":   func(q *Population) { q.Survey.Color = ColorCalibration{OffsetMag: 0.04} },
		"color scale 1.04":     func(q *Population) { q.Survey.Color = ColorCalibration{Scale: 1.04} },
	}
	for name, change := range cases {
		q := *p
		change(&q)
		require.NoError(t, q.Prepare())
		counts, _ := randomTemplatesAndBank(t, &q, g, 1_500_000, BankMargin{})
		exp, vars, err := bank.Observe(context.Background(), &q, g, ObserveOptions{BaseFractionScale: 1})
		require.NoError(t, err, name)
		r, dof := chi2PerBin(counts, exp, vars)
		t.Logf("%s: χ²/dof = %.3f over %d bins", name, r, dof)
		assert.Greater(t, dof, 200, name)
		assert.Less(t, r, 1.2, name)
		old, oldVar, err := bank.Observe(context.Background(), p, g, ObserveOptions{BaseFractionScale: 1})
		require.NoError(t, err)
		r2, _ := chi2PerBin(counts, old, oldVar)
		assert.Greater(t, r2, r+0.3, "%s: the change must be visible", name)
	}
}

// The same bank observed with any number of workers gives the same bits;
// a calibration beyond the bank's margins is refused.
func TestBankObserveDeterministicAndGuarded(t *testing.T) {
	p := testPopulation(t, 5)
	g := bankGrid()
	_, bank := randomTemplatesAndBank(t, p, g, 300_000, BankMargin{ColorMag: 0.02})
	a, av, err := bank.Observe(context.Background(), p, g, ObserveOptions{Workers: 1})
	require.NoError(t, err)
	b, bv, err := bank.Observe(context.Background(), p, g, ObserveOptions{Workers: 3})
	require.NoError(t, err)
	assert.Equal(t, a, b)
	assert.Equal(t, av, bv)
	q := *p
	q.Survey.Color = ColorCalibration{OffsetMag: 0.05}
	_, _, err = bank.Observe(context.Background(), &q, g, ObserveOptions{})
	assert.ErrorContains(t, err, "color margin")
	q = *p
	q.Cuts.BVMax += 0.1
	_, _, err = bank.Observe(context.Background(), &q, g, ObserveOptions{})
	assert.ErrorContains(t, err, "color cut")
	q = *p
	q.Cuts.MSBandDereddened = true
	_, _, err = bank.Observe(context.Background(), &q, g, ObserveOptions{})
	assert.ErrorContains(t, err, "dereddened")
}

// A bank whose band is placed with the dust taken out re-cuts its stars
// the same way when the color calibration moves: observed at another
// color offset it matches a run made at that offset (as
// TestBankObserveBinariesAndColor, whose χ² bounds it shares).
func TestBankObserveDereddenedBand(t *testing.T) {
	p := testPopulation(t, 4)
	p.Cuts.MSBandDereddened = true
	require.NoError(t, p.Prepare())
	g := bankGrid()
	q, exp, vars, r := reobservedAtOffset(t, p, g)
	// The band as measured (not dereddened) keeps other stars: a run
	// with it is visibly another catalog.
	u := *q
	u.Cuts.MSBandDereddened = false
	require.NoError(t, u.Prepare())
	other, _ := randomTemplatesAndBank(t, &u, g, 1_500_000, BankMargin{})
	r2, _ := chi2PerBin(other, exp, vars)
	t.Logf("against the band as measured: χ²/dof = %.3f", r2)
	assert.Greater(t, r2, r+0.3, "the dereddened band must change the catalog")
}

// reobservedAtOffset stores the stars of a run of p (with margins) and
// re-observes them at a color zero point 0.04 mag off, q, asserting that
// they fill g as a run made at q does (χ²/dof r < 1.2 over more than 200
// bins); it returns q, the expectation and its variance, and r.
func reobservedAtOffset(t *testing.T, p *Population, g Grid) (q *Population, exp, vars []float64, r float64) {
	t.Helper()
	_, bank := randomTemplatesAndBank(t, p, g, 1_500_000, BankMargin{ColorMag: 0.06, BandMag: 0.1})
	shifted := *p
	shifted.Survey.Color = ColorCalibration{OffsetMag: 0.04}
	require.NoError(t, shifted.Prepare())
	counts, _ := randomTemplatesAndBank(t, &shifted, g, 1_500_000, BankMargin{})
	exp, vars, err := bank.Observe(context.Background(), &shifted, g, ObserveOptions{BaseFractionScale: 1})
	require.NoError(t, err)
	r, dof := chi2PerBin(counts, exp, vars)
	t.Logf("χ²/dof = %.3f over %d bins", r, dof)
	assert.Greater(t, dof, 200)
	assert.Less(t, r, 1.2)
	return &shifted, exp, vars, r
}

// A grid whose columns are colors less the reddening (Grid.Dereddened):
// the stored stars re-observed at another color zero point fill it as a
// run made there does, and the columns differ visibly from the measured
// colors' (the test population's dust layer reddens its far stars).
func TestBankObserveDereddenedAxis(t *testing.T) {
	p := testPopulation(t, 4)
	require.NoError(t, p.Prepare())
	g := bankGrid()
	g.Dereddened = true
	q, exp, vars, r := reobservedAtOffset(t, p, g)
	measured := g
	measured.Dereddened = false
	other, _ := randomTemplatesAndBank(t, q, measured, 1_500_000, BankMargin{})
	r2, _ := chi2PerBin(other, exp, vars)
	t.Logf("against columns of measured color: χ²/dof = %.3f", r2)
	assert.Greater(t, r2, r+0.3, "dereddened columns must hold other stars")
}

// NormalCDF against math.Erfc. Source: Φ(x) = ½ erfc(−x/√2) (Abramowitz &
// Stegun 1964, 26.2.29).
func TestNormalCDF(t *testing.T) {
	worst := 0.0
	for x := -9.0; x <= 9; x += 0.000731 {
		want := 0.5 * math.Erfc(-x/math.Sqrt2)
		worst = math.Max(worst, math.Abs(NormalCDF(x)-want))
	}
	assert.Less(t, worst, 5e-7)
	assert.Equal(t, 0.0, NormalCDF(math.Inf(-1)))
	assert.Equal(t, 1.0, NormalCDF(math.Inf(1)))
	assert.True(t, math.IsNaN(NormalCDF(math.NaN())))
}

// place puts weight w at log10 period lp into fine column col of ob as
// bin does (cloud-in-cell).
func (ob *observer) place(fine []float64, col int, lp, w float64) {
	u := (lp - ob.fineLo) / fineStepDex
	i0 := int(u)
	frac := u - float64(i0)
	fine[col*ob.nF+i0] += w * (1 - frac)
	fine[col*ob.nF+i0+1] += w * frac
}

// The period kernel spreads a star's whole weight over the period bins
// when it lies far from the window's edges, keeps the recovery's width
// (the grid's own spread taken out of the kernel), cuts the weight at a
// window edge where the normal distribution says, and moves half-period
// aliases down by log10 2.
// Source: the normal distribution function; analytic.
func TestSpreadKernel(t *testing.T) {
	p := testPopulation(t, 2)
	p.Survey.Recovery = spots.RecoveryOptions{RelScatter: 0.08}
	g := bankGrid()
	g.LogPeriodEdges = nil
	for i := 0; i <= 200; i++ { // fine comparison bins to measure moments
		g.LogPeriodEdges = append(g.LogPeriodEdges, math.Log10(0.5)+math.Log10(200)*float64(i)/200)
	}
	nP := 200
	b := &Bank{Cuts: p.Cuts}
	run := func(q *Population, lp float64) (total, mean, sd float64) {
		ob := newObserver(b, q, g, ObserveOptions{})
		fine := make([]float64, ob.nC*ob.nZ*ob.nF)
		ob.place(fine, 1*ob.nZ+2, lp, 2.5) // color 1, height 2
		cnt := make([]float64, g.NumBins())
		vr := make([]float64, g.NumBins())
		ob.spread(fine, make([]float64, len(fine)), cnt, vr)
		var s1, s2 float64
		for i, v := range cnt {
			c, per, z := i/(nP*3), (i/3)%nP, i%3
			if v != 0 {
				require.Equal(t, 1, c)
				require.Equal(t, 2, z)
			}
			x := 0.5 * (g.LogPeriodEdges[per] + g.LogPeriodEdges[per+1])
			total += v
			s1 += v * x
			s2 += v * x * x
		}
		mean = s1 / total
		return total, mean, math.Sqrt(s2/total - mean*mean)
	}
	total, mean, sd := run(p, 1.0)
	assert.InDelta(t, 2.5, total, 1e-6)
	assert.InDelta(t, 1.0, mean, 1e-3)
	// Width: the recovery's σ = 0.08/ln 10 dex, plus the comparison bins'
	// own width²/12 in variance.
	w := math.Log10(200) / 200
	assert.InDelta(t, math.Sqrt(math.Pow(0.08/math.Ln10, 2)+w*w/12), sd, 0.002)
	// A window edge at the star's period keeps half of it.
	q := *p
	q.Cuts.PeriodMaxD = 10
	total, _, _ = run(&q, 1.0)
	assert.InDelta(t, 1.25, total, 0.01)
	// All half-period aliases land log10 2 lower.
	q = *p
	q.Survey.Recovery = spots.RecoveryOptions{RelScatter: 0.08, HalfProb: 1}
	_, mean, _ = run(&q, 1.5)
	assert.InDelta(t, 1.5-math.Log10(2), mean, 2e-3)
}

// Intrinsic scatter: the scattered law's periods spread lognormally about
// the law's with the stated width, and a star's deviate is drawn after
// the law's own numbers. Common practice, no source: sample moments.
func TestScatteredLaw(t *testing.T) {
	law := spin.Scattered{Law: spin.Barnes2007(), Dex: 0.08}
	st := spin.Star{MassMsun: 0.9, AgeGyr: 1, BV: 0.8, TeffK: 5200}
	p0, ok := spin.Barnes2007().Period(st, nil)
	require.True(t, ok)
	r := ChunkStream(3, 1)
	var s, s2 float64
	n := 20000
	for range n {
		p, ok := law.Period(st, r)
		require.True(t, ok)
		d := math.Log10(p / p0)
		s += d
		s2 += d * d
	}
	mean, sd := s/float64(n), math.Sqrt(s2/float64(n)-(s/float64(n))*(s/float64(n)))
	assert.InDelta(t, 0, mean, 4*0.08/math.Sqrt(float64(n)))
	assert.InDelta(t, 0.08, sd, 0.003)
	g, ok := GyrochronePeriod(law, st)
	require.True(t, ok)
	assert.Equal(t, p0, g, "gyrochrones are the median")
}

// Re-observing with a search completeness (periods lost beyond what the
// signal-to-noise sees) gives what a run with that completeness gives, and
// is not the expectation without it.
func TestBankObserveSearchCompleteness(t *testing.T) {
	p := testPopulation(t, 4)
	q := *p
	q.Survey.Search = spots.SearchCompleteness{HalfPeriodD: 12, TurnoverPower: 1, Steepness: 6}
	exp, old := bankFollowsRun(t, p, &q, 150)
	var sOld, sNew float64
	for i := range old {
		sOld += old[i]
		sNew += exp[i]
	}
	assert.Less(t, sNew, sOld, "a search that loses periods catalogs fewer stars")
}

// Re-observing with a free-form loss against Rossby number gives what a
// run with it gives, and the templates are linear in each node's value
// (stars count with their detection probability and each lies between two
// nodes): half-way between two values of a node, the expectation is the
// mean of the two. The joint fit's quadratic expansion relies on that to
// be exact in these parameters.
func TestBankObserveRossbyBands(t *testing.T) {
	p := testPopulation(t, 4)
	q := *p
	q.Survey.Search = spots.SearchCompleteness{RossbyBands: []float64{1, 1, 0.7, 0.3, 0.1, 0.05}, TurnoverPower: 1}
	bankFollowsRun(t, p, &q, 150)

	g := bankGrid()
	_, bank := randomTemplatesAndBank(t, p, g, 300_000, BankMargin{})
	at := func(e24 float64) []float64 {
		r := *p
		r.Survey.Search = spots.SearchCompleteness{RossbyBands: []float64{1, 1, 0.7, e24, 0.1, 0.05}, TurnoverPower: 1}
		exp, _, err := bank.Observe(context.Background(), &r, g, ObserveOptions{BaseFractionScale: 1})
		require.NoError(t, err)
		return exp
	}
	lo, mid, hi := at(0.2), at(0.5), at(0.8)
	var moved float64
	for i := range mid {
		assert.InDelta(t, 0.5*(lo[i]+hi[i]), mid[i], 1e-9*(1+hi[i]), "bin %d", i)
		moved += hi[i] - lo[i]
	}
	assert.Greater(t, moved, 1.0, "the 24 d node changes the templates")
}

// The derivatives in search-efficiency nodes from one pass are the
// differences of two re-observations (the counts are linear in a node, so
// the difference quotient is exact up to rounding), including for a node
// at 0, where stars the band factor empties still carry a derivative (the
// 48 d node's holds only such stars: this bank has none beyond 48 d); the
// counts themselves are Observe's.
func TestBankObserveSlopes(t *testing.T) {
	p := testPopulation(t, 4)
	g := bankGrid()
	_, bank := randomTemplatesAndBank(t, p, g, 300_000, BankMargin{})
	centre := []float64{1, 1, 0.7, 0, 0, 0} // stars between 24 and 48 d count for nothing but node 4's derivative
	with := func(bands []float64) *Population {
		r := *p
		r.Survey.Search = spots.SearchCompleteness{RossbyBands: bands, TurnoverPower: 1}
		return &r
	}
	ctx := context.Background()
	nodes := []int{1, 3, 4}
	counts, vars, slopes, err := bank.ObserveSlopes(ctx, with(centre), g, ObserveOptions{BaseFractionScale: 1, BandSlopes: nodes})
	require.NoError(t, err)
	plain, plainVar, err := bank.Observe(ctx, with(centre), g, ObserveOptions{BaseFractionScale: 1})
	require.NoError(t, err)
	assert.Equal(t, plain, counts)
	assert.Equal(t, plainVar, vars)
	require.Len(t, slopes, len(nodes))
	for i, node := range nodes {
		moved := append([]float64(nil), centre...)
		const d = 0.25
		if moved[node] += d; moved[node] > 1 {
			moved[node] -= 2 * d
		}
		other, _, err := bank.Observe(ctx, with(moved), g, ObserveOptions{BaseFractionScale: 1})
		require.NoError(t, err)
		var total float64
		for b := range counts {
			want := (other[b] - counts[b]) / (moved[node] - centre[node])
			assert.InDelta(t, want, slopes[i][b], 1e-9*(1+math.Abs(want)), "node %d, bin %d", node, b)
			total += slopes[i][b]
		}
		assert.Greater(t, total, 1.0, "node %d's derivative holds stars", node)
	}

	// A survey without the band factor is differentiated about bands of 1.
	ones := []float64{1, 1, 1, 1, 1, 1}
	_, _, atOnes, err := bank.ObserveSlopes(ctx, with(ones), g, ObserveOptions{BaseFractionScale: 1, BandSlopes: nodes})
	require.NoError(t, err)
	_, _, lossless, err := bank.ObserveSlopes(ctx, with(nil), g, ObserveOptions{BaseFractionScale: 1, BandSlopes: nodes})
	require.NoError(t, err)
	assert.Equal(t, atOnes, lossless)

	_, _, _, err = bank.ObserveSlopes(ctx, with(centre), g, ObserveOptions{BandSlopes: []int{6}})
	assert.ErrorContains(t, err, "node 6")
	_, _, err = bank.Observe(ctx, with(centre), g, ObserveOptions{BandSlopes: []int{1}})
	assert.ErrorContains(t, err, "ObserveSlopes")
}
