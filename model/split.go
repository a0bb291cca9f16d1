package model

import (
	"fmt"
	"slices"
	"strings"
)

// Split runs. A very large run is cut into contiguous chunk ranges, each
// run on its own machine (RunChunkRange), and the parts' results merged in
// chunk order. Since chunk i draws only from ChunkStream(seed, i), the
// merged tally equals the one-machine run's exactly, and catalog parts
// concatenated in chunk order give the one-machine catalog byte for byte.

// ChunkRange is the chunks [First, Last) of a run.
type ChunkRange struct {
	First int `json:"first"`
	Last  int `json:"last"`
}

// Len is the number of chunks in the range.
func (r ChunkRange) Len() int { return r.Last - r.First }

func (r ChunkRange) String() string { return fmt.Sprintf("[%d, %d)", r.First, r.Last) }

// NumChunks is the number of chunks of a run of nStars stars in chunks of
// chunkStars (the last one may be partial).
func NumChunks(nStars int64, chunkStars int) int {
	if nStars <= 0 || chunkStars <= 0 {
		return 0
	}
	// Divide first: nStars + chunkStars - 1 overflows near the int64 maximum.
	n := nStars / int64(chunkStars)
	if nStars%int64(chunkStars) != 0 {
		n++
	}
	return int(n)
}

// SplitChunks cuts nChunks chunks into at most parts contiguous ranges
// whose sizes differ by at most one chunk, in chunk order. There are never
// empty ranges: fewer chunks than parts give one range per chunk.
func SplitChunks(nChunks, parts int) []ChunkRange {
	if nChunks <= 0 || parts <= 0 {
		return nil
	}
	parts = min(parts, nChunks)
	out := make([]ChunkRange, parts)
	size, extra := nChunks/parts, nChunks%parts
	first := 0
	for i := range out {
		n := size
		if i < extra {
			n++
		}
		out[i] = ChunkRange{first, first + n}
		first += n
	}
	return out
}

// ChunkOrder returns the order in which parts covering the given ranges
// must be merged (indices into ranges, by First), after checking that the
// ranges tile [0, nChunks) exactly: no chunk missing, none twice. Its
// error lists what is wrong, so that a user knows which parts to rerun.
func ChunkOrder(ranges []ChunkRange, nChunks int) ([]int, error) {
	order := make([]int, len(ranges))
	for i := range order {
		order[i] = i
	}
	slices.SortStableFunc(order, func(a, b int) int { return ranges[a].First - ranges[b].First })
	var problems []string
	next := 0
	for _, i := range order {
		r := ranges[i]
		switch {
		case r.First < 0 || r.Last <= r.First || r.Last > nChunks:
			problems = append(problems, fmt.Sprintf("part %s is not a non-empty range within the run's %d chunks", r, nChunks))
			continue
		case r.First > next:
			problems = append(problems, fmt.Sprintf("chunks %s are in no part", ChunkRange{next, r.First}))
		case r.First < next:
			problems = append(problems, fmt.Sprintf("chunks %s are in more than one part", ChunkRange{r.First, min(next, r.Last)}))
		}
		next = max(next, r.Last)
	}
	if next < nChunks {
		problems = append(problems, fmt.Sprintf("chunks %s are in no part", ChunkRange{next, nChunks}))
	}
	if len(problems) > 0 {
		return nil, fmt.Errorf("model: the parts do not make up the run: %s", strings.Join(problems, "; "))
	}
	return order, nil
}

// Merge adds the counts of o, a tally on the same edges, to t. Counts are
// integers, so the sum is exact; merging parts in chunk order keeps the
// rule that everything is merged in chunk order.
func (t *Tally) Merge(o *Tally) error {
	if !slices.Equal(t.AgeEdgesGyr, o.AgeEdgesGyr) || !slices.Equal(t.ColorEdges, o.ColorEdges) ||
		!slices.Equal(t.LogPerEdges, o.LogPerEdges) || !slices.Equal(t.AbsZEdgesPc, o.AbsZEdgesPc) {
		return fmt.Errorf("model: cannot merge tallies on different bin edges (parts of different scenarios?)")
	}
	if !t.shapeOK() || !o.shapeOK() {
		return fmt.Errorf("model: cannot merge a tally whose counts do not match its bin edges (a damaged part file?)")
	}
	add := func(dst, src []int64) {
		for i := range dst {
			dst[i] += src[i]
		}
	}
	add(t.StepCounts, o.StepCounts)
	add(t.AgeGenerated, o.AgeGenerated)
	add(t.AgeSelected, o.AgeSelected)
	add(t.AgeEligible, o.AgeEligible)
	add(t.AgeDetected, o.AgeDetected)
	for i := range t.PeriodColor {
		add(t.PeriodColor[i], o.PeriodColor[i])
	}
	add(t.AbsZ, o.AbsZ)
	add(t.ColorEligible, o.ColorEligible)
	add(t.ColorDetected, o.ColorDetected)
	t.Binaries += o.Binaries
	t.Evolved += o.Evolved
	t.Aliased += o.Aliased
	t.OutsideLaw += o.OutsideLaw
	return nil
}

// shapeOK reports whether every count slice has the length its edges
// imply, as NewTally makes them; a tally read back from a file may not.
func (t *Tally) shapeOK() bool {
	nAge, nColor, nPer, nZ := len(t.AgeEdgesGyr)-1, len(t.ColorEdges)-1, len(t.LogPerEdges)-1, len(t.AbsZEdgesPc)-1
	if nAge < 0 || nColor < 0 || nPer < 0 || nZ < 0 || len(t.StepCounts) != len(Steps) {
		return false
	}
	for _, c := range []struct{ got, want int }{
		{len(t.AgeGenerated), nAge}, {len(t.AgeSelected), nAge}, {len(t.AgeEligible), nAge}, {len(t.AgeDetected), nAge},
		{len(t.PeriodColor), nColor}, {len(t.AbsZ), nZ}, {len(t.ColorEligible), nColor}, {len(t.ColorDetected), nColor},
	} {
		if c.got != c.want {
			return false
		}
	}
	for _, row := range t.PeriodColor {
		if len(row) != nPer {
			return false
		}
	}
	return true
}
