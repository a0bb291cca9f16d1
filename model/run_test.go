package model

import (
	"context"
	"errors"
	"math"
	"math/rand/v2"
	"runtime"
	"slices"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/disk"
	"spinpop/model/spin"
	"spinpop/model/spots"
)

// testPopulation builds, by hand, a population like the base example
// scenario: a cone toward (197°, −34°) out to 1.5 kpc, nBins equal age bins
// over 10 Gyr of constant star formation, Kroupa masses, the Barnes (2007)
// law, spots, binaries with some tidal locking, a metallicity spread and a
// dust layer. The numbers are test settings, not physics claims.
func testPopulation(tb testing.TB, nBins int) *Population {
	tb.Helper()
	rel, err := DwarfSequence()
	require.NoError(tb, err)
	imf, err := NewIMF(NameKroupa2001, 0.2, 1.4)
	require.NoError(tb, err)
	edges := make([]float64, nBins+1)
	for k := range edges {
		edges[k] = 10 * float64(k) / float64(nBins)
	}
	avr := disk.AVR{Sigma10Kms: 25, Tau1Gyr: 0.5, Beta: 0.45}
	mixes := make([]disk.Mixture, nBins)
	for k := range mixes {
		mixes[k], err = avr.BinMixture(edges[k], edges[k+1], 4)
		require.NoError(tb, err)
	}
	sun := disk.DefaultSun()
	smp, err := disk.NewMixtureSampler(disk.Cone{LDeg: 197, BDeg: -34, RadiusDeg: 8, DistMaxPc: 1500}, sun,
		disk.Sheet{SheetSigmaKms: 20, SurfaceDensityMsunPc2: 70}, disk.DefaultRadial(), mixes, disk.SamplerOptions{})
	require.NoError(tb, err)
	prob := make([]float64, nBins)
	for k := range prob {
		prob[k] = (edges[k+1] - edges[k]) * smp.BinIntegral(k) // constant rate
	}
	dust := disk.DefaultDustLayer()
	amp := spots.DefaultAmplitudeModel()
	det := spots.DefaultDetection()
	det.BaselineD = 1000
	p := &Population{
		BinProb:   prob,
		Age:       func(k int, r *rand.Rand) float64 { return edges[k] + r.Float64()*(edges[k+1]-edges[k]) },
		Place:     smp,
		Dust:      dust.FromSun(sun).AV,
		IMF:       imf,
		Relations: rel,
		Law:       spin.Barnes2007(),
		Turnover:  spin.Wright2018,
		Spots:     &amp,
		Evolved:   true,
		Binaries:  Binaries{FractionScale: 1, MassRatioMin: 0.1, TidalLockFraction: 0.05, TidalLockMaxD: 7},
		Metals:    Metallicity{SigmaDex: 0.1, ColorPerDex: 0.2, AbsMagPerDex: 0.5},
		Survey:    Survey{Band: BandV, BrightLimitMag: 10, FaintLimitMag: 16.5, Detect: det, Recovery: spots.DefaultRecoveryOptions()},
		Cuts:      Cuts{BVMin: 0.45, BVMax: 1.6, MSBandBrightMag: 0.4, MSBandFaintMag: 0.4, PeriodMinD: 0.05, PeriodMaxD: 400},
	}
	require.NoError(tb, p.Prepare())
	return p
}

// chunkColumns returns every column of c as bit patterns, so that NaNs
// compare equal to themselves.
func chunkColumns(c *Chunk) [][]uint64 {
	var cols [][]uint64
	for _, s := range [][]float64{c.AgeGyr, c.MassMsun, c.CompanionMsun, c.FeH, c.TeffK, c.BV, c.VKs, c.AbsMagV,
		c.AbsMagBand, c.LDeg, c.BDeg, c.DistPc, c.ZPc, c.AV, c.AppMag, c.ObsBV, c.ObsAbsMag, c.PeriodD,
		c.MeasPeriodD, c.Rossby, c.AmpPpm, c.NoisePpm, c.DetectProb} {
		col := make([]uint64, c.N)
		for i := range col {
			col[i] = math.Float64bits(s[i])
		}
		cols = append(cols, col)
	}
	bins, flags := make([]uint64, c.N), make([]uint64, c.N)
	for i := range bins {
		bins[i], flags[i] = uint64(c.AgeBin[i]), uint64(c.Flags[i])
	}
	return append(cols, bins, flags)
}

// runColumns runs a small population with the given number of workers and
// returns every column of every chunk, in chunk order.
func runColumns(t *testing.T, p *Population, workers int) [][][]uint64 {
	var out [][][]uint64
	err := RunChunks(context.Background(), 42, 23000, 2048, workers, p.Fill, func(c *Chunk) error {
		out = append(out, chunkColumns(c))
		return nil
	})
	require.NoError(t, err)
	return out
}

// The same seed must give the same stars, bit for bit, whatever the number
// of workers and of threads (GOMAXPROCS 1 or 2; workers 0 means one per
// thread): each chunk has its own stream, and nothing of an earlier chunk
// (chunk memory is reused) may leak into a later one. Common practice, no
// source.
func TestRunChunksSameForAnyWorkerCount(t *testing.T) {
	p := testPopulation(t, 6)
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(1))
	one := runColumns(t, p, 1)
	require.Len(t, one, 12)
	assert.Len(t, one[11][0], 23000-11*2048, "last chunk holds the remainder")
	for _, run := range []struct{ procs, workers int }{{1, 2}, {2, 0}, {2, 1}, {2, 3}} {
		runtime.GOMAXPROCS(run.procs)
		other := runColumns(t, p, run.workers)
		require.Equal(t, len(one), len(other))
		for i := range one {
			for j := range one[i] {
				require.True(t, slices.Equal(one[i][j], other[i][j]), "GOMAXPROCS %d, %d workers: chunk %d column %d differs", run.procs, run.workers, i, j)
			}
		}
	}
	// Different chunks draw different stars.
	assert.False(t, slices.Equal(one[0][1], one[1][1][:len(one[0][1])]))
}

// Fill must not read what a previous chunk left behind: filling into a
// chunk full of garbage gives the same stars as filling a fresh one.
func TestFillIgnoresStaleChunk(t *testing.T) {
	p := testPopulation(t, 4)
	fresh := NewChunk(3000)
	p.Fill(fresh, ChunkStream(3, 5))
	dirty := NewChunk(3000)
	p.Fill(dirty, ChunkStream(99, 1))
	for _, s := range [][]float64{dirty.AgeGyr, dirty.LDeg, dirty.BDeg, dirty.DistPc, dirty.ZPc, dirty.PeriodD, dirty.MeasPeriodD} {
		for i := range s {
			s[i] = math.Inf(-1)
		}
	}
	for i := range dirty.Flags {
		dirty.Flags[i] = ^Flag(0)
		dirty.AgeBin[i] = -1
	}
	p.Fill(dirty, ChunkStream(3, 5))
	a, b := chunkColumns(fresh), chunkColumns(dirty)
	for j := range a {
		require.True(t, slices.Equal(a[j], b[j]), "column %d", j)
	}
}

// toyPlacer places a star of bin k at x uniform in [0, 1) (returned as the
// distance) and keeps it with probability accept[k](x), like the radial
// rejection of disk.Sampler.
type toyPlacer struct{ accept []func(x float64) float64 }

func (t toyPlacer) Draw(k int, r *rand.Rand) (lDeg, bDeg, dPc, zPc float64, ok bool) {
	x := r.Float64()
	return 0, 0, x, 0, r.Float64() < t.accept[k](x)
}

// The bin-major placement must draw the joint (bin, position) law that the
// population defines: P(k, x) ∝ BinProb[k] · a_k(x) with x uniform, that is
// P(k) ∝ BinProb[k] ∫a_k and x | k with density a_k(x)/∫a_k. The bins'
// acceptance rates differ (1/2, 1/3, 1), so a scheme that redrew only the
// position would give P(k) = BinProb instead: the χ² test below rejects
// that by tens of standard deviations. Exact integrals; KS and χ² critical
// values from standard statistical tables (Pearson 1900; Kolmogorov 1933).
func TestFillJointDrawIsExact(t *testing.T) {
	base := testPopulation(t, 2)
	acc := []func(float64) float64{
		func(x float64) float64 { return x },     // ∫ = 1/2, x | k has density 2x
		func(x float64) float64 { return x * x }, // ∫ = 1/3, density 3x²
		func(x float64) float64 { return 1 },     // ∫ = 1, uniform
	}
	cdf := []func(float64) float64{
		func(x float64) float64 { return x * x },
		func(x float64) float64 { return x * x * x },
		func(x float64) float64 { return x },
	}
	p := *base
	p.BinProb = []float64{0.5, 0.3, 0.2}
	p.Place = toyPlacer{accept: acc}
	p.Age = func(k int, r *rand.Rand) float64 { return 1 + float64(k) }
	require.NoError(t, p.Prepare())

	const n = 60000
	c := NewChunk(n)
	p.Fill(c, ChunkStream(11, 0))
	xs := make([][]float64, 3)
	for i := range n {
		k := c.AgeBin[i]
		require.Equal(t, 1+float64(k), c.AgeGyr[i], "age drawn for the kept bin")
		xs[k] = append(xs[k], c.DistPc[i])
	}
	want := []float64{0.5 / 2, 0.3 / 3, 0.2 * 1}
	sum := want[0] + want[1] + want[2]
	chi2 := 0.0
	for k := range want {
		e := n * want[k] / sum
		o := float64(len(xs[k]))
		chi2 += (o - e) * (o - e) / e
	}
	assert.Less(t, chi2, 13.82, "χ² with 2 degrees of freedom, 0.999 quantile")
	for k := range xs {
		d := ksDistance(xs[k], cdf[k])
		// 0.999 critical value of the one-sample KS statistic, 1.95/√n.
		assert.Less(t, d, 1.95/math.Sqrt(float64(len(xs[k]))), "bin %d positions", k)
	}
}

// ksDistance is the one-sample Kolmogorov–Smirnov statistic of x against cdf.
func ksDistance(x []float64, cdf func(float64) float64) float64 {
	s := slices.Clone(x)
	slices.Sort(s)
	n := float64(len(s))
	d := 0.0
	for i, v := range s {
		f := cdf(v)
		d = math.Max(d, math.Max(f-float64(i)/n, float64(i+1)/n-f))
	}
	return d
}

func TestFillAllocatesNothing(t *testing.T) {
	p := testPopulation(t, 4)
	c := NewChunk(4096)
	r := ChunkStream(1, 2)
	p.Fill(c, r) // warm the scratch pool
	assert.Zero(t, testing.AllocsPerRun(5, func() { p.Fill(c, r) }))
}

// BenchmarkFill makes and observes stars of a population like the base
// example on one goroutine; ns/op is per star.
func BenchmarkFill(b *testing.B) {
	p := testPopulation(b, 40)
	const size = 32768
	c := NewChunk(size)
	r := ChunkStream(1, 0)
	b.ReportAllocs()
	b.ResetTimer()
	for done := 0; done < b.N; done += c.N {
		c.grow(min(size, b.N-done))
		p.Fill(c, r)
	}
}

// The color scatter is a Gaussian of the set σ about the mean sequence,
// in the intrinsic and the observed color alike, for every star inside
// the magnitude limits; without it, or outside them, a single star of
// solar metallicity has exactly its mass's color.
func TestColorScatter(t *testing.T) {
	for _, sigma := range []float64{0, 0.05} {
		p := testPopulation(t, 4)
		p.Binaries.FractionScale = 0
		p.Metals.SigmaDex = 0
		p.ColorScatterMag = sigma
		require.NoError(t, p.Prepare())
		var n int
		var s1, s2 float64
		err := RunChunks(context.Background(), 3, 300000, 8192, 2, p.Fill, func(c *Chunk) error {
			for i := 0; i < c.N; i++ {
				require.InDelta(t, ebvPerAV*c.AV[i], c.ObsBV[i]-c.BV[i], 1e-12)
				pt, ok := p.Relations.At(c.MassMsun[i])
				require.True(t, ok)
				d := c.BV[i] - pt.BV
				if sigma == 0 || c.Flags[i]&FlagInMagRange == 0 {
					require.Equal(t, pt.BV, c.BV[i])
					continue
				}
				n++
				s1 += d
				s2 += d * d
			}
			return nil
		})
		require.NoError(t, err)
		if sigma == 0 {
			continue
		}
		require.Greater(t, n, 20000)
		mean := s1 / float64(n)
		sd := math.Sqrt(s2/float64(n) - mean*mean)
		assert.InDelta(t, 0, mean, 1e-3, "σ %g", sigma)
		assert.InDelta(t, sigma, sd, 0.02*sigma, "σ %g", sigma)
	}
}

// Chunks reach visit in chunk order, each exactly once, when there are
// many more chunks than slots in the in-flight ring and workers finish out
// of order (fill sleeps a random few microseconds). Common practice, no
// source.
func TestRunChunksRingKeepsOrder(t *testing.T) {
	const chunks = 2000
	next := 0
	fill := func(c *Chunk, r *rand.Rand) {
		c.N = 1
		c.AgeGyr[0] = float64(c.Index)
		for range r.IntN(2000) { // uneven work, so chunks finish out of order
			runtime.Gosched()
		}
	}
	for _, workers := range []int{1, 3, 8} {
		next = 0
		err := RunChunks(context.Background(), 7, chunks, 1, workers, fill, func(c *Chunk) error {
			require.Equal(t, next, c.Index, "%d workers: chunk out of order", workers)
			require.Equal(t, float64(next), c.AgeGyr[0], "%d workers: chunk %d carries another chunk's stars", workers, next)
			next++
			return nil
		})
		require.NoError(t, err)
		assert.Equal(t, chunks, next, "%d workers: every chunk visited once", workers)
	}
}

// A run of a near-maximal star count must start with memory independent of
// its number of chunks: before the ring, RunChunks made one channel per
// chunk up front, which panicked (makeslice) near the int64 maximum and
// took 2 GB at 10¹² stars. Here visit stops the run after a few chunks.
func TestRunChunksHugeRunStartsFlat(t *testing.T) {
	stop := errors.New("enough")
	for _, n := range []int64{math.MaxInt64, 1e15, 1e12} {
		seen := 0
		var before, after runtime.MemStats
		runtime.GC()
		runtime.ReadMemStats(&before)
		err := RunChunks(context.Background(), 1, n, 1, 2, func(c *Chunk, _ *rand.Rand) { c.N = 1 }, func(c *Chunk) error {
			seen++
			if seen == 10 {
				return stop
			}
			return nil
		})
		runtime.ReadMemStats(&after)
		require.ErrorIs(t, err, stop, "n = %d", n)
		assert.Equal(t, 10, seen)
		// A few chunks of one star and a ring of four slots: far below a
		// megabyte. One channel per chunk would be ≥ 96 bytes × n.
		assert.Less(t, after.TotalAlloc-before.TotalAlloc, uint64(1<<20), "n = %d: allocated at start", n)
	}
}

// NumChunks must not overflow near the int64 maximum.
func TestNumChunksNearMaxInt64(t *testing.T) {
	assert.Equal(t, int(math.MaxInt64/2+1), NumChunks(math.MaxInt64, 2))
	assert.Equal(t, int(math.MaxInt64), NumChunks(math.MaxInt64, 1))
	assert.Equal(t, 3, NumChunks(5, 2))
}

// ChunkBytesPerStar must match what a chunk actually allocates (measured
// by the runtime's allocation counter), since run memory is estimated
// from it.
func TestChunkBytesPerStarMatchesAllocation(t *testing.T) {
	const n = 1 << 16
	var before, after runtime.MemStats
	runtime.ReadMemStats(&before)
	c := NewChunk(n)
	runtime.ReadMemStats(&after)
	got := float64(after.TotalAlloc-before.TotalAlloc) / n
	assert.InEpsilon(t, float64(ChunkBytesPerStar()), got, 0.02, "allocated %.1f bytes per star", got)
	runtime.KeepAlive(c)
}
