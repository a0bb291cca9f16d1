package pipeline

import (
	"fmt"

	"spinpop/scenarios"
)

// BurstAgeBins says how finely the age bins cover the burst's free ages.
// A template assumes a constant rate inside its age bin, so a burst
// narrower than its bin can sit anywhere in it for the same likelihood:
// its fitted age is no finer than the bin. With bins 0.12–0.22 Gyr wide
// from 1 to 2 Gyr (the default until issue 8 made them 0.05 Gyr up to
// 3 Gyr) the independent check's narrow old bursts came out at either end
// of one bin (docs/independent-check.md, trial M, and the README's check).
type BurstAgeBins struct {
	AgeMinGyr float64 `json:"age_min_gyr"` // the burst age's free range
	AgeMaxGyr float64 `json:"age_max_gyr"`
	// NarrowestGyr and WidestGyr are the widths of the narrowest and the
	// widest age bin that overlaps that range.
	NarrowestGyr float64 `json:"narrowest_bin_gyr"`
	WidestGyr    float64 `json:"widest_bin_gyr"`
}

// burstAgeBins finds the bins of edges that overlap the free range of
// history.<part>.age_gyr; nil when that age is not free.
func burstAgeBins(edges []float64, free []scenarios.FreeParam, part string) *BurstAgeBins {
	path := "history." + part + ".age_gyr"
	for _, f := range free {
		if f.Path != path {
			continue
		}
		b := &BurstAgeBins{AgeMinGyr: f.Min, AgeMaxGyr: f.Max}
		for k := 0; k+1 < len(edges); k++ {
			lo, hi := edges[k], edges[k+1]
			if hi <= f.Min || lo >= f.Max {
				continue
			}
			w := hi - lo
			if b.WidestGyr == 0 || w < b.NarrowestGyr {
				b.NarrowestGyr = w
			}
			b.WidestGyr = max(b.WidestGyr, w)
		}
		if b.WidestGyr == 0 {
			return nil // the range lies outside the bins: the scenario's checks say so
		}
		return b
	}
	return nil
}

// Line is the line of output that states it ("" for nil).
func (b *BurstAgeBins) Line() string {
	if b == nil {
		return ""
	}
	width := fmt.Sprintf("%.3g Gyr", b.NarrowestGyr)
	if b.WidestGyr-b.NarrowestGyr > 1e-9 {
		width = fmt.Sprintf("%.3g–%.3g Gyr", b.NarrowestGyr, b.WidestGyr)
	}
	return fmt.Sprintf("age bins over the burst's free ages (%g–%g Gyr): %s wide; a fitted burst age is no finer than its bin (disk.age_bin_edges_gyr)", b.AgeMinGyr, b.AgeMaxGyr, width)
}
