package model

import (
	"bytes"
	"context"
	"encoding/binary"
	"encoding/json"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// catalogBytes appends every column of the chunk's catalog stars, bit
// for bit, as a catalog writer would write their rows.
func catalogBytes(b *bytes.Buffer, c *Chunk) {
	var w [8]byte
	for i := 0; i < c.N; i++ {
		if !c.Flags[i].Selected() {
			continue
		}
		for _, col := range [][]float64{c.AgeGyr, c.MassMsun, c.CompanionMsun, c.BV, c.ObsBV, c.AppMag, c.DistPc,
			c.LDeg, c.BDeg, c.ZPc, c.PeriodD, c.MeasPeriodD, c.Rossby, c.AmpPpm} {
			binary.LittleEndian.PutUint64(w[:], math.Float64bits(col[i]))
			b.Write(w[:])
		}
		binary.LittleEndian.PutUint64(w[:], uint64(c.Flags[i]))
		b.Write(w[:])
	}
}

func testTally() *Tally {
	return NewTally([]float64{0, 1, 2, 4, 10}, []float64{0.4, 0.8, 1.2, 1.6}, []float64{-1, 0, 1, 2, 3}, []float64{0, 100, 300, 1000})
}

// A run split into parts by chunk ranges, the parts run in any order and
// their tallies passed through files (JSON), merges into the tally and
// catalog of the one-machine run, byte for byte: chunk streams depend
// only on (seed, chunk index). Common practice, no source.
func TestSplitRunMergesToTheWholeRun(t *testing.T) {
	p := testPopulation(t, 4)
	const seed, nStars, chunkStars = 11, 50_000, 4096
	ctx := context.Background()

	wholeTally, wholeCat := testTally(), new(bytes.Buffer)
	require.NoError(t, RunChunks(ctx, seed, nStars, chunkStars, 2, p.Fill, func(c *Chunk) error {
		wholeTally.Add(c)
		catalogBytes(wholeCat, c)
		return nil
	}))
	require.Positive(t, wholeTally.Selected(), "the test needs catalog stars")

	n := NumChunks(nStars, chunkStars)
	assert.Equal(t, 13, n) // 50000 / 4096 = 12.2
	ranges := SplitChunks(n, 4)
	require.Equal(t, []ChunkRange{{0, 4}, {4, 7}, {7, 10}, {10, 13}}, ranges)

	// Run the parts out of order, as array tasks finish.
	type part struct {
		r     ChunkRange
		tally []byte
		cat   []byte
	}
	var parts []part
	for _, i := range []int{2, 0, 3, 1} {
		tl, cat := testTally(), new(bytes.Buffer)
		require.NoError(t, RunChunkRange(ctx, seed, nStars, chunkStars, ranges[i], 1, p.Fill, func(c *Chunk) error {
			require.True(t, c.Index >= ranges[i].First && c.Index < ranges[i].Last)
			tl.Add(c)
			catalogBytes(cat, c)
			return nil
		}))
		js, err := json.Marshal(tl)
		require.NoError(t, err)
		parts = append(parts, part{ranges[i], js, cat.Bytes()})
	}

	got := make([]ChunkRange, len(parts))
	for i, pt := range parts {
		got[i] = pt.r
	}
	order, err := ChunkOrder(got, n)
	require.NoError(t, err)
	merged, cat := testTally(), new(bytes.Buffer)
	for _, i := range order {
		var tl Tally
		require.NoError(t, json.Unmarshal(parts[i].tally, &tl))
		require.NoError(t, merged.Merge(&tl))
		cat.Write(parts[i].cat)
	}
	assert.True(t, bytes.Equal(wholeCat.Bytes(), cat.Bytes()), "catalog differs from the one-machine run")
	wantJSON, _ := json.Marshal(wholeTally)
	gotJSON, _ := json.Marshal(merged)
	assert.JSONEq(t, string(wantJSON), string(gotJSON))
	assert.Equal(t, wholeTally, merged)
}

func TestChunkOrderFindsGapsAndOverlaps(t *testing.T) {
	order, err := ChunkOrder([]ChunkRange{{5, 9}, {0, 5}, {9, 10}}, 10)
	require.NoError(t, err)
	assert.Equal(t, []int{1, 0, 2}, order)

	_, err = ChunkOrder([]ChunkRange{{0, 3}, {5, 10}}, 10)
	assert.ErrorContains(t, err, "chunks [3, 5) are in no part")
	_, err = ChunkOrder([]ChunkRange{{0, 6}, {5, 10}}, 10)
	assert.ErrorContains(t, err, "chunks [5, 6) are in more than one part")
	_, err = ChunkOrder([]ChunkRange{{0, 6}}, 10)
	assert.ErrorContains(t, err, "chunks [6, 10) are in no part")
	_, err = ChunkOrder([]ChunkRange{{0, 6}, {6, 12}}, 10)
	assert.ErrorContains(t, err, "part [6, 12) is not a non-empty range within the run's 10 chunks")
}

func TestSplitChunks(t *testing.T) {
	assert.Equal(t, []ChunkRange{{0, 1}, {1, 2}}, SplitChunks(2, 5), "no empty parts")
	assert.Nil(t, SplitChunks(0, 3))
	total := 0
	for _, r := range SplitChunks(1000, 7) {
		assert.InDelta(t, 1000.0/7, float64(r.Len()), 1)
		total += r.Len()
	}
	assert.Equal(t, 1000, total)
	err := RunChunkRange(context.Background(), 1, 100, 10, ChunkRange{5, 11}, 1, nil, nil)
	assert.ErrorContains(t, err, "not within the run's 10 chunks")
}

func TestTallyMergeRefusesOtherEdges(t *testing.T) {
	a := NewTally([]float64{0, 1}, []float64{0, 1}, []float64{0, 1}, []float64{0, 1})
	b := NewTally([]float64{0, 2}, []float64{0, 1}, []float64{0, 1}, []float64{0, 1})
	assert.Error(t, a.Merge(b))
	c := NewTally([]float64{0, 1}, []float64{0, 1}, []float64{0, 1}, []float64{0, 1})
	c.AbsZ = nil // as from a damaged file
	assert.ErrorContains(t, a.Merge(c), "do not match its bin edges")
}
