package model

import (
	"math"
	"math/rand/v2"
	"sort"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/integrate/quad"
	"gonum.org/v1/gonum/stat"
)

// integrateLog integrates f over [a, b] in ln m with Gauss–Legendre
// quadrature, split at the given break masses so each piece is smooth.
func integrateLog(f func(m float64) float64, a, b float64, breaks ...float64) float64 {
	edges := []float64{a}
	for _, x := range breaks {
		if x > a && x < b {
			edges = append(edges, x)
		}
	}
	edges = append(edges, b)
	sum := 0.0
	for i := 1; i < len(edges); i++ {
		sum += quad.Fixed(func(t float64) float64 {
			m := math.Exp(t)
			return f(m) * m
		}, math.Log(edges[i-1]), math.Log(edges[i]), 200, nil, 0)
	}
	return sum
}

func TestNewIMFRejectsBadRanges(t *testing.T) {
	for _, name := range []string{NameKroupa2001, NameChabrier2003} {
		for _, c := range []struct{ lo, hi float64 }{
			{0, 1}, {-0.1, 1}, {1, 1}, {2, 1}, {math.NaN(), 1}, {0.1, math.Inf(1)},
		} {
			_, err := NewIMF(name, c.lo, c.hi)
			require.Error(t, err, "%s [%g, %g]", name, c.lo, c.hi)
			assert.Contains(t, err.Error(), "mass range", "the error names the range")
		}
	}
	_, err := NewIMF("salpeter", 0.1, 1)
	require.Error(t, err)
	assert.Contains(t, err.Error(), NameKroupa2001, "the error lists the valid names")

	f, err := NewIMF(" Kroupa2001 ", 0.1, 1)
	require.NoError(t, err)
	assert.Equal(t, NameKroupa2001, f.Name())
}

// testIMFs covers ranges that use one, two and three segments, ranges in
// either tail of the lognormal, and a range above every break.
func testIMFs(t *testing.T) []IMF {
	t.Helper()
	specs := []struct {
		name   string
		lo, hi float64
	}{
		{NameKroupa2001, 0.01, 100},
		{NameKroupa2001, 0.1, 1.6},
		{NameKroupa2001, 0.02, 0.07},
		{NameKroupa2001, 1, 10},
		{NameChabrier2003, 0.01, 100},
		{NameChabrier2003, 0.1, 1.6},
		{NameChabrier2003, 0.5, 0.95},    // upper tail of the lognormal only
		{NameChabrier2003, 0.001, 0.003}, // lower tail only
		{NameChabrier2003, 2, 20},        // power law only
	}
	var out []IMF
	for _, s := range specs {
		f, err := NewIMF(s.name, s.lo, s.hi)
		require.NoError(t, err)
		out = append(out, f)
	}
	return out
}

func imfRange(f IMF) (float64, float64) {
	return f.(interface{ MassRange() (float64, float64) }).MassRange()
}

// The PDF integrates to 1, the CDF is its integral, and MeanMass is the
// first moment — each checked by independent numerical quadrature.
func TestIMFNormalisationCDFAndMean(t *testing.T) {
	breaks := []float64{0.08, 0.5, 1}
	for _, f := range testIMFs(t) {
		lo, hi := imfRange(f)
		total := integrateLog(f.PDF, lo, hi, breaks...)
		assert.InDelta(t, 1, total, 1e-9, "%s [%g, %g]: ∫PDF", f.Name(), lo, hi)
		mean := integrateLog(func(m float64) float64 { return m * f.PDF(m) }, lo, hi, breaks...)
		assert.InEpsilon(t, mean, f.MeanMass(), 1e-9, "%s [%g, %g]: mean mass", f.Name(), lo, hi)
		for _, u := range []float64{0.13, 0.5, 0.77} {
			m := lo * math.Pow(hi/lo, u)
			want := integrateLog(f.PDF, lo, m, breaks...)
			assert.InDelta(t, want, f.CDF(m), 1e-9, "%s [%g, %g]: CDF(%g)", f.Name(), lo, hi, m)
		}
		assert.Equal(t, 0.0, f.CDF(lo))
		assert.Equal(t, 1.0, f.CDF(hi))
		assert.Equal(t, 0.0, f.PDF(lo*0.99))
		assert.Equal(t, 0.0, f.PDF(hi*1.01))
	}
}

// Samples follow the CDF: Kolmogorov–Smirnov distance below the 0.1 %
// critical value 1.95/√n, and the sample mean matches MeanMass.
func TestIMFSampleFollowsCDF(t *testing.T) {
	const n = 200000
	for i, f := range testIMFs(t) {
		r := rand.New(rand.NewPCG(7, uint64(i)))
		lo, hi := imfRange(f)
		xs := make([]float64, n)
		for j := range xs {
			xs[j] = f.Sample(r)
			require.True(t, xs[j] >= lo && xs[j] <= hi, "%s sample %g outside [%g, %g]", f.Name(), xs[j], lo, hi)
		}
		sort.Float64s(xs)
		d := 0.0
		for j, x := range xs {
			c := f.CDF(x)
			d = math.Max(d, math.Max(math.Abs(c-float64(j)/n), math.Abs(c-float64(j+1)/n)))
		}
		assert.Less(t, d, 1.95/math.Sqrt(n), "%s [%g, %g]: KS distance", f.Name(), lo, hi)
		mean, std := stat.MeanStdDev(xs, nil)
		assert.InDelta(t, f.MeanMass(), mean, 5*std/math.Sqrt(n), "%s [%g, %g]: sample mean", f.Name(), lo, hi)
	}
}

func TestIMFSampleIsReproducibleAndAllocationFree(t *testing.T) {
	for _, f := range testIMFs(t) {
		a := rand.New(rand.NewPCG(1, 2))
		b := rand.New(rand.NewPCG(1, 2))
		for range 1000 {
			require.Equal(t, f.Sample(a), f.Sample(b))
		}
		allocs := testing.AllocsPerRun(1000, func() { f.Sample(a) })
		assert.Zero(t, allocs, "%s Sample allocates", f.Name())
	}
}

// Kroupa (2001) eq. 2: the CDF at the breaks equals the analytic integrals
// of the continuous broken power law.
func TestKroupaCDFAtBreaks(t *testing.T) {
	const lo, hi = 0.01, 100.0
	f, err := NewKroupa2001(lo, hi)
	require.NoError(t, err)
	// Source: Kroupa (2001), MNRAS 322, 231, eq. 2 — α = 0.3, 1.3, 2.3,
	// breaks 0.08 and 0.5 M☉; coefficients from continuity.
	a0 := 1.0
	a1 := a0 * 0.08 // 0.08^(1.3−0.3)
	a2 := a1 * 0.5  // 0.5^(2.3−1.3)
	n0 := a0 * (math.Pow(0.08, 0.7) - math.Pow(lo, 0.7)) / 0.7
	n1 := a1 * (math.Pow(0.08, -0.3) - math.Pow(0.5, -0.3)) / 0.3
	n2 := a2 * (math.Pow(0.5, -1.3) - math.Pow(hi, -1.3)) / 1.3
	tot := n0 + n1 + n2
	assert.InDelta(t, n0/tot, f.CDF(0.08), 1e-12)
	assert.InDelta(t, (n0+n1)/tot, f.CDF(0.5), 1e-12)
	// Continuity of dN/dm at the breaks.
	for _, m := range []float64{0.08, 0.5} {
		assert.InEpsilon(t, f.PDF(m*(1-1e-9)), f.PDF(m*(1+1e-9)), 1e-7, "PDF jumps at %g", m)
	}
}

// Sampled slopes: a weighted straight-line fit to log(dN/dm) against log m
// in each segment recovers α. With ~10⁵ stars per segment the statistical
// error of the fit is ~0.01; the tolerance 0.03 is three times that.
func TestKroupaSampledSlopes(t *testing.T) {
	const n = 1000000
	f, err := NewKroupa2001(0.01, 100)
	require.NoError(t, err)
	r := rand.New(rand.NewPCG(2001, 1))
	xs := make([]float64, n)
	for i := range xs {
		xs[i] = f.Sample(r)
	}
	// Source: Kroupa (2001), MNRAS 322, 231, eq. 2.
	for _, seg := range []struct{ lo, hi, alpha float64 }{
		{0.01, 0.08, 0.3},
		{0.08, 0.5, 1.3},
		{0.5, 20, 2.3}, // above 20 M☉ the counts are too few to fit
	} {
		const bins = 10
		counts := make([]float64, bins)
		w := math.Log10(seg.hi/seg.lo) / bins
		for _, m := range xs {
			if m < seg.lo || m >= seg.hi {
				continue
			}
			counts[int(math.Log10(m/seg.lo)/w)]++
		}
		var lx, ly, wt []float64
		for i, c := range counts {
			if c == 0 {
				continue
			}
			a := seg.lo * math.Pow(10, float64(i)*w)
			b := a * math.Pow(10, w)
			lx = append(lx, math.Log10(math.Sqrt(a*b)))
			ly = append(ly, math.Log10(c/(b-a)))
			wt = append(wt, c) // var(log c) ∝ 1/c
		}
		// The bin-centre approximation biases a power law's log-log slope by
		// nothing: ∫ over a log bin of m^−α is exactly proportional to the
		// geometric centre's m^−α times the bin's width in m.
		_, slope := stat.LinearRegression(lx, ly, wt, false)
		assert.InDelta(t, -seg.alpha, slope, 0.03, "slope on [%g, %g]", seg.lo, seg.hi)
	}
}

// Chabrier (2003), PASP 115, 763, Table 1: the single-star lognormal has
// amplitude 0.158 and the power law above 1 M☉ amplitude 4.43e−2 (both per
// dex), i.e. continuity at 1 M☉ [memory of the table; tolerance 1 % covers
// the three printed digits].
func TestChabrierContinuityMatchesPublishedAmplitude(t *testing.T) {
	f, err := NewChabrier2003(0.01, 100)
	require.NoError(t, err)
	below, above := f.PDF(1-1e-9), f.PDF(1+1e-9)
	assert.InEpsilon(t, below, above, 1e-7, "PDF jumps at 1 M☉")
	// dN/dlog m = m ln10 dN/dm: the ratio of that at 1 M☉ to the
	// lognormal's peak value is A_powerlaw/A_lognormal.
	peak := f.PDF(0.079) * 0.079
	assert.InEpsilon(t, 4.43e-2/0.158, above/peak, 0.01)
}

// Source: Chabrier (2003), PASP 115, 763, Table 1 — m_c = 0.079 M☉,
// σ = 0.69. Sampling 10⁶ masses over 0.01–1 M☉, the histogram of log10 m
// in 0.05-dex bins peaks at log10 0.079 within one bin width. The curve is
// flat near its top (neighbouring bins differ by 0.3 % while Poisson noise
// is 0.6 %), so the peak is located by a weighted parabola fit to the log
// counts — exact for a lognormal — rather than by the noisiest single bin;
// its width must give σ back too.
func TestChabrierSampledPeak(t *testing.T) {
	const n = 1000000
	const binDex = 0.05
	f, err := NewIMF(NameChabrier2003, 0.01, 1)
	require.NoError(t, err)
	r := rand.New(rand.NewPCG(2003, 1))
	const bins = 40 // −2 … 0 in log10 m
	counts := make([]float64, bins)
	for range n {
		i := int((math.Log10(f.Sample(r)) + 2) / binDex)
		counts[min(i, bins-1)]++
	}
	var xs, ys, ws []float64
	for i, c := range counts {
		xs = append(xs, -2+(float64(i)+0.5)*binDex)
		ys = append(ys, math.Log(c))
		ws = append(ws, c)
	}
	_, b, c := fitParabola(xs, ys, ws)
	peak := -b / (2 * c)
	sigma := math.Sqrt(-1 / (2 * c))
	assert.InDelta(t, math.Log10(0.079), peak, binDex, "peak of the log-mass histogram")
	assert.InDelta(t, 0.69, sigma, 0.02, "width of the log-mass histogram")
}

// fitParabola is the weighted least-squares fit y ≈ a + b x + c x².
func fitParabola(x, y, w []float64) (a, b, c float64) {
	var s [5]float64 // Σ w xᵏ
	var t [3]float64 // Σ w xᵏ y
	for i := range x {
		p := w[i]
		for k := 0; k < 5; k++ {
			s[k] += p
			if k < 3 {
				t[k] += p * y[i]
			}
			p *= x[i]
		}
	}
	// Solve the 3×3 normal equations by Cramer's rule.
	det3 := func(m [3][3]float64) float64 {
		return m[0][0]*(m[1][1]*m[2][2]-m[1][2]*m[2][1]) -
			m[0][1]*(m[1][0]*m[2][2]-m[1][2]*m[2][0]) +
			m[0][2]*(m[1][0]*m[2][1]-m[1][1]*m[2][0])
	}
	m := [3][3]float64{{s[0], s[1], s[2]}, {s[1], s[2], s[3]}, {s[2], s[3], s[4]}}
	d := det3(m)
	sol := [3]float64{}
	for k := 0; k < 3; k++ {
		mk := m
		for i := 0; i < 3; i++ {
			mk[i][k] = t[i]
		}
		sol[k] = det3(mk) / d
	}
	return sol[0], sol[1], sol[2]
}

func BenchmarkIMFSample(b *testing.B) {
	for _, name := range []string{NameKroupa2001, NameChabrier2003} {
		f, err := NewIMF(name, 0.08, 2)
		require.NoError(b, err)
		b.Run(name, func(b *testing.B) {
			r := rand.New(rand.NewPCG(1, 2))
			s := 0.0
			for b.Loop() {
				s += f.Sample(r)
			}
			_ = s
		})
		b.Run(name+"/rejection", func(b *testing.B) {
			ms := f.(massSampler)
			r := rand.New(rand.NewPCG(1, 2))
			s := 0.0
			for b.Loop() {
				s += ms.sampleByRejection(r)
			}
			_ = s
		})
	}
}

// rejectionIMFs adds to testIMFs a range around the peak of the
// lognormal's dN/dm (at 10^(μ − σ² ln10) ≈ 0.0063 M☉), where the rejection
// bounds need the mode.
func rejectionIMFs(t *testing.T) []IMF {
	c, err := NewChabrier2003(0.002, 0.05)
	require.NoError(t, err)
	return append(testIMFs(t), c)
}

// The population's rejection sampler must follow the same CDF as Sample
// (same KS criterion and mean check as TestIMFSampleFollowsCDF), including
// ranges where dN/dm rises, and must not allocate.
func TestIMFSampleByRejectionFollowsCDF(t *testing.T) {
	const n = 200000
	for i, f := range rejectionIMFs(t) {
		ms, ok := f.(massSampler)
		require.True(t, ok, f.Name())
		require.True(t, ms.rejectionReady(), f.Name())
		r := rand.New(rand.NewPCG(8, uint64(i)))
		lo, hi := imfRange(f)
		xs := make([]float64, n)
		for j := range xs {
			xs[j] = ms.sampleByRejection(r)
			require.True(t, xs[j] >= lo && xs[j] <= hi, "%s sample %g outside [%g, %g]", f.Name(), xs[j], lo, hi)
		}
		sort.Float64s(xs)
		d := 0.0
		for j, x := range xs {
			c := f.CDF(x)
			d = math.Max(d, math.Max(math.Abs(c-float64(j)/n), math.Abs(c-float64(j+1)/n)))
		}
		assert.Less(t, d, 1.95/math.Sqrt(n), "%s [%g, %g]: KS distance", f.Name(), lo, hi)
		mean, std := stat.MeanStdDev(xs, nil)
		assert.InDelta(t, f.MeanMass(), mean, 5*std/math.Sqrt(n), "%s [%g, %g]: sample mean", f.Name(), lo, hi)
		assert.Zero(t, testing.AllocsPerRun(1000, func() { ms.sampleByRejection(r) }), f.Name())
	}
}

// The rejection is exact only if every interval's bounds bracket dN/dm
// over it: checked on a fine grid inside each interval.
func TestIMFRejectionBoundsBracketPDF(t *testing.T) {
	for _, f := range rejectionIMFs(t) {
		var p *imfPieces
		switch g := f.(type) {
		case *Kroupa2001:
			p = &g.imfPieces
		case *Chabrier2003:
			p = &g.imfPieces
		}
		require.NotNil(t, p)
		covered := 0.0
		for _, iv := range p.table.intervals {
			s := &p.seg[iv.seg]
			require.True(t, iv.loMsun >= s.lo && iv.loMsun+iv.widthMsun <= s.hi*(1+1e-15), "interval inside its segment")
			for j := 0; j <= 50; j++ {
				v := s.pdf(iv.loMsun + iv.widthMsun*float64(j)/50)
				require.True(t, v <= iv.upper && v >= iv.lower, "%s at %g: %g not in [%g, %g]", f.Name(), iv.loMsun, v, iv.lower, iv.upper)
			}
			covered += iv.widthMsun
		}
		lo, hi := imfRange(f)
		assert.InEpsilon(t, hi-lo, covered, 1e-12, "%s: intervals tile the range", f.Name())
	}
}
