package compare

import (
	"bytes"
	"context"
	"encoding/binary"
	"errors"
	"math"
	"os"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/stat/distuv"

	"spinpop/model"
	"spinpop/sfh"
)

var tplEdges = []float64{0, 0.3, 0.6, 0.9, 1.5, 2.5, 4, 6, 8, 10}

func tplSpace(t testing.TB) Space {
	sp, err := NewSpace(0.45, 1.6, 8, 1, 60, 10, []float64{0, 100, 200, 400, 800})
	require.NoError(t, err)
	return sp
}

// piecewiseHistory forms stars at a constant rate inside each template
// bin, so a direct simulation draws ages inside a bin exactly as the
// templates do and the comparison tests the method, not the bin resolution.
func piecewiseHistory(t testing.TB, rates []float64) *sfh.History {
	h, err := sfh.New(10, []sfh.Part{{Name: "steps", Component: sfh.Piecewise{EdgesGyr: tplEdges, Rates: rates}, Weight: 1}})
	require.NoError(t, err)
	return h
}

// Σ_k w_k T_k predicts a direct simulation of the same history, absolutely:
// with D_k the template stars drawn in bin k, a direct run of N stars
// expects N Σ_k w_k T_ki / Σ_k w_k D_k in bin i. The χ² of the direct
// counts against that prediction, with the variance of both simulations
// (Poisson data plus Σ_k (N w_k/Σ w D)² T_ki from the templates), must
// be consistent with its degrees of freedom.
// Common practice, no source: Pearson χ² goodness of fit; bins with a
// prediction below 5 are pooled out; threshold p > 0.001.
func TestTemplatesPredictDirectSimulation(t *testing.T) {
	hist := piecewiseHistory(t, []float64{4, 0.5, 2, 1, 1, 1, 1.5, 1, 0.5})
	world := newTestWorld(t, hist, tplEdges)
	sp := tplSpace(t)
	const nStars = 400_000
	tpl, err := BuildTemplates(context.Background(), world.pop, world.binIntegrals(), tplEdges, sp, TemplateOptions{Stars: nStars, Seed: 1, ChunkStars: 16384, Workers: 2})
	require.NoError(t, err)
	assert.Equal(t, int64(nStars), tpl.StarsDrawn)

	direct := make([]float64, sp.NumBins())
	err = model.RunChunks(context.Background(), 2, nStars, 16384, 2, world.pop.Fill, func(c *model.Chunk) error {
		for i := 0; i < c.N; i++ {
			if c.Flags[i].Selected() {
				if j := sp.Index(c.ObsBV[i], c.MeasPeriodD[i], c.ZPc[i]); j >= 0 {
					direct[j]++
				}
			}
		}
		return nil
	})
	require.NoError(t, err)

	w := hist.BinWeights(tplEdges)
	var wd float64
	for k, d := range tpl.DrawnPerBin {
		wd += w[k] * float64(d)
	}
	scale := nStars / wd
	mu := tpl.Expected(w, nil)
	var chi2 float64
	dof := 0
	var sumD, sumMu float64
	for i := range mu {
		var varT float64
		for k := range w {
			varT += w[k] * w[k] * tpl.Counts[k*sp.NumBins()+i]
		}
		m := scale * mu[i]
		if m < 5 {
			continue
		}
		d := direct[i] - m
		chi2 += d * d / (m + scale*scale*varT)
		dof++
		sumD += direct[i]
		sumMu += m
	}
	p := distuv.ChiSquared{K: float64(dof)}.Survival(chi2)
	t.Logf("χ² = %.1f for %d bins (p = %.3f); direct %.0f stars vs predicted %.0f", chi2, dof, p, sumD, sumMu)
	require.Greater(t, dof, 100)
	assert.Greater(t, p, 0.001)
	// The totals agree within their Poisson noise too (3.5σ).
	assert.InDelta(t, sumD, sumMu, 3.5*math.Sqrt(2*sumD))
}

// The same seed gives the same templates for any number of workers.
// Common practice, no source.
func TestBuildTemplatesDeterministic(t *testing.T) {
	world := newTestWorld(t, piecewiseHistory(t, []float64{1, 1, 1, 1, 1, 1, 1, 1, 1}), tplEdges)
	sp := tplSpace(t)
	opts := TemplateOptions{Stars: 60_000, Seed: 9, ChunkStars: 4096, Workers: 1}
	a, err := BuildTemplates(context.Background(), world.pop, world.binIntegrals(), tplEdges, sp, opts)
	require.NoError(t, err)
	opts.Workers = 2
	var last int64
	opts.Progress = func(done, total int64) { last = done; assert.Equal(t, int64(60_000), total) }
	b, err := BuildTemplates(context.Background(), world.pop, world.binIntegrals(), tplEdges, sp, opts)
	require.NoError(t, err)
	assert.Equal(t, a.Counts, b.Counts)
	assert.Equal(t, a.DrawnPerBin, b.DrawnPerBin)
	assert.Equal(t, int64(60_000), last)
	// The population handed in is not modified.
	assert.Equal(t, world.hist.BinWeights(tplEdges)[0]*world.sampler.BinIntegral(0), world.pop.BinProb[0])

	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	_, err = BuildTemplates(ctx, world.pop, world.binIntegrals(), tplEdges, sp, opts)
	assert.True(t, errors.Is(err, context.Canceled))

	_, err = BuildTemplates(context.Background(), world.pop, world.binIntegrals()[:3], tplEdges, sp, opts)
	assert.ErrorContains(t, err, "one per bin")
}

func TestTemplatesSaveLoadAndCache(t *testing.T) {
	tpl := randomTemplates(t, 4, 3, 5, 2, 4, 1)
	tpl.Key = "abc123"
	var buf bytes.Buffer
	require.NoError(t, tpl.Save(&buf))
	back, err := LoadTemplates(bytes.NewReader(buf.Bytes()))
	require.NoError(t, err)
	assert.Equal(t, tpl, back)

	// A changed version is refused with a message that says what to do.
	bad := append([]byte(nil), buf.Bytes()...)
	binary.LittleEndian.PutUint32(bad[8:12], TemplateFormatVersion+1)
	_, err = LoadTemplates(bytes.NewReader(bad))
	assert.ErrorContains(t, err, "rebuilt")
	// A flipped byte fails the checksum; a short file is truncated.
	bad = append([]byte(nil), buf.Bytes()...)
	bad[40] ^= 1
	_, err = LoadTemplates(bytes.NewReader(bad))
	assert.ErrorContains(t, err, "checksum")
	_, err = LoadTemplates(bytes.NewReader(buf.Bytes()[:buf.Len()-5]))
	assert.ErrorContains(t, err, "truncated")
	_, err = LoadTemplates(bytes.NewReader([]byte("hello, this is not a template file")))
	assert.ErrorContains(t, err, "magic")

	dir := t.TempDir()
	builds := 0
	build := func() (*Templates, error) { builds++; c := *tpl; return &c, nil }
	got, reused, err := Cached(dir, "k1", build)
	require.NoError(t, err)
	assert.False(t, reused)
	assert.Equal(t, "k1", got.Key)
	got2, reused, err := Cached(dir, "k1", build)
	require.NoError(t, err)
	assert.True(t, reused)
	assert.Equal(t, got.Counts, got2.Counts)
	assert.Equal(t, 1, builds)
	// A damaged file is rebuilt, not trusted.
	path := filepath.Join(dir, "k1.tpl")
	raw, err := os.ReadFile(path)
	require.NoError(t, err)
	require.NoError(t, os.WriteFile(path, raw[:len(raw)/2], 0o644))
	_, reused, err = Cached(dir, "k1", build)
	require.NoError(t, err)
	assert.False(t, reused)
	assert.Equal(t, 2, builds)
	entries, err := os.ReadDir(dir)
	require.NoError(t, err)
	assert.Len(t, entries, 1, "no temporary files left behind")
	_, _, err = Cached(dir, "../evil", build)
	assert.ErrorContains(t, err, "contains")
}

func TestCollapse2DAndExpected(t *testing.T) {
	tpl := randomTemplates(t, 3, 4, 5, 3, 4, 2)
	c := tpl.Collapse2D()
	assert.Equal(t, 1, c.Space.NumHeight())
	w := []float64{0.2, 0.5, 0.3}
	assert.InDeltaSlice(t, tpl.Space.Marginal2D(tpl.Expected(w, nil)), c.Expected(w, nil), 1e-9)
	var a, b float64
	for _, v := range tpl.Totals() {
		a += v
	}
	for _, v := range c.Totals() {
		b += v
	}
	assert.Equal(t, a, b)
}
