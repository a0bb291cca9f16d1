package model

import "math"

// Step names the selection steps in the order a star meets them. Counts
// are cumulative: a star counted at a step passed every step before it.
var Steps = []string{"generated", "dwarf", "magnitude_range", "color_range", "main_sequence", "period_detected", "period_window"}

// Tally accumulates what a run needs to summarise and plot, chunk by chunk,
// in memory independent of the number of stars. Merge order is chunk
// order, so sums are bit-identical for any worker count.
type Tally struct {
	StepCounts []int64 // len(Steps)

	AgeEdgesGyr  []float64
	AgeGenerated []int64 // per age bin, all generated dwarfs
	AgeSelected  []int64 // per age bin, stars in the final catalog
	AgeEligible  []int64 // per age bin, dwarfs passing the magnitude, color and main-sequence cuts
	AgeDetected  []int64 // per age bin, of AgeEligible those with a detected period

	// Period–color density of catalog stars.
	ColorEdges  []float64
	LogPerEdges []float64
	PeriodColor [][]int64 // [color bin][log-period bin]
	// |z| of catalog stars.
	AbsZEdgesPc []float64
	AbsZ        []int64

	// Per color bin (ColorEdges), dwarfs inside the magnitude limits, the
	// color cut and the main-sequence band, and of those the ones whose
	// period was detected: the survey's detection efficiency by color.
	ColorEligible []int64
	ColorDetected []int64

	Binaries, Evolved, Aliased int64
	// OutsideLaw counts dwarfs that pass the magnitude, color and
	// main-sequence cuts but lie outside the spin-down law's calibrated
	// range, so they have no period.
	OutsideLaw int64
}

// NewTally prepares empty histograms on the given edges.
func NewTally(ageEdges, colorEdges, logPerEdges, absZEdges []float64) *Tally {
	t := &Tally{
		StepCounts:    make([]int64, len(Steps)),
		AgeEdgesGyr:   ageEdges,
		AgeGenerated:  make([]int64, len(ageEdges)-1),
		AgeSelected:   make([]int64, len(ageEdges)-1),
		AgeEligible:   make([]int64, len(ageEdges)-1),
		AgeDetected:   make([]int64, len(ageEdges)-1),
		ColorEdges:    colorEdges,
		LogPerEdges:   logPerEdges,
		AbsZEdgesPc:   absZEdges,
		AbsZ:          make([]int64, len(absZEdges)-1),
		ColorEligible: make([]int64, len(colorEdges)-1),
		ColorDetected: make([]int64, len(colorEdges)-1),
	}
	t.PeriodColor = make([][]int64, len(colorEdges)-1)
	for i := range t.PeriodColor {
		t.PeriodColor[i] = make([]int64, len(logPerEdges)-1)
	}
	return t
}

// Add counts the stars of one chunk.
func (t *Tally) Add(c *Chunk) {
	for i := 0; i < c.N; i++ {
		f := c.Flags[i]
		t.StepCounts[0]++
		if f&FlagGone != 0 {
			continue
		}
		k := c.AgeBin[i]
		t.AgeGenerated[k]++
		step := 1
		for _, need := range []Flag{FlagInMagRange, FlagInColorRange, FlagOnMainSeq, FlagDetected, FlagInPeriodWindow} {
			if f&need == 0 || (need == FlagDetected && f&FlagOutsideLaw != 0) {
				break
			}
			t.StepCounts[step+1]++
			step++
		}
		t.StepCounts[1]++
		// Detection efficiency among stars a catalog could hold: those
		// passing the magnitude, color and main-sequence cuts. Stars outside
		// the law's range count as undetected: the survey sees them, the
		// model gives them no period.
		const eligible = FlagInMagRange | FlagInColorRange | FlagOnMainSeq
		if f&eligible == eligible {
			t.AgeEligible[k]++
			det := f&FlagDetected != 0
			if det {
				t.AgeDetected[k]++
			}
			if ci := BinIndex(t.ColorEdges, c.ObsBV[i]); ci >= 0 {
				t.ColorEligible[ci]++
				if det {
					t.ColorDetected[ci]++
				}
			}
			if f&FlagOutsideLaw != 0 {
				t.OutsideLaw++ // would have been in the catalog but for the law's range
			}
		}
		if !f.Selected() {
			continue
		}
		t.AgeSelected[k]++
		if f&FlagBinary != 0 {
			t.Binaries++
		}
		if f&FlagEvolved != 0 {
			t.Evolved++
		}
		if f&(FlagHalfAlias|FlagDoubleAlias) != 0 {
			t.Aliased++
		}
		ci := BinIndex(t.ColorEdges, c.ObsBV[i])
		pi := BinIndex(t.LogPerEdges, math.Log10(c.MeasPeriodD[i]))
		if ci >= 0 && pi >= 0 {
			t.PeriodColor[ci][pi]++
		}
		if zi := BinIndex(t.AbsZEdgesPc, math.Abs(c.ZPc[i])); zi >= 0 {
			t.AbsZ[zi]++
		}
	}
}

// Selected is the number of stars in the final catalog.
func (t *Tally) Selected() int64 { return t.StepCounts[len(Steps)-1] }

// BinIndex returns the index of the half-open bin [e_i, e_i+1) holding x
// (the last bin is closed), or -1 outside the edges or for NaN. edges must
// increase.
func BinIndex(edges []float64, x float64) int {
	n := len(edges) - 1
	if n < 1 || !(x >= edges[0] && x <= edges[n]) {
		return -1
	}
	lo, hi := 0, n
	for hi-lo > 1 {
		mid := (lo + hi) / 2
		if x >= edges[mid] {
			lo = mid
		} else {
			hi = mid
		}
	}
	return lo
}
