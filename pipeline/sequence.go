package pipeline

import (
	"context"
	"errors"
	"fmt"
	"math"
	"slices"
	"sort"

	"spinpop/assemble"
	"spinpop/compare"
	"spinpop/compare/stats"
	"spinpop/model"
	"spinpop/scenarios"
)

// Where a catalog's main sequence lies against the model's.
//
// In a magnitude-limited field the distance a star of a given color is seen
// to — and so the heights it reaches, and the ages it is drawn from —
// depends on its absolute magnitude. A catalog whose dwarfs sit 0.2 mag
// fainter than the relation table at some color (another metallicity,
// another photometric system, another table) holds a younger mix in that
// color's column than the model gives it, and a fit makes up the difference
// with the burst's age and the law's coefficients (README, "The relations:
// most of the rest"). The catalog's own parallaxes say where its sequence
// lies, so spinpop measures it: per color column, the median of M_V less
// the table's M_V at the star's color, in the catalog and in the model's
// own catalog stars drawn through the same cuts, and the table is moved
// by the difference (stars.sequence_shift_*). Binaries, Malmquist bias and
// dust sit in both medians alike, so they cancel to the extent the model
// has them right.

// SequenceMaxGapMag is the largest first difference of medians measured
// as a shift: beyond it the band cuts one side of the catalog's stars
// (the usual band is ±0.4 mag), the median no longer says where their
// sequence lies, and the column is not used (a table that departs that
// far does not describe those stars).
const SequenceMaxGapMag = 0.3

// SequenceMinStars is the fewest stars a column needs, in the catalog and
// in the model, for its median to be used (its median is then known to
// about 1.25 σ/√n ≈ 0.03 mag for a 0.25 mag spread).
const SequenceMinStars = 100

// SequenceMaxSlope is the steepest sequence (mag of M_V per mag of B−V
// across a column) whose place is measured: where the table drops faster
// (the M dwarfs' B−V saturates near 1.5), a color error of 0.02 mag moves
// a star's residual by over 0.2 mag, the medians follow the colors'
// errors rather than the sequence's place, and a shift there does not
// converge (on the demo catalog, spinpop's own, the 1.50–1.55 column's
// moved 0.23 mag in its second round with a window of ±1 mag).
const SequenceMaxSlope = 10.0

// SequenceModelStars is the number of the model's catalog stars drawn for
// its medians in each round.
const SequenceModelStars = 100_000

// sequenceRounds is the number of rounds: the shift measured at no
// shift, then corrected at the shift found (the band, the columns' mixes
// and the catalog's stars inside the band move with it), and once more;
// the last correction says how near the one before came.
const sequenceRounds = 3

// SequenceColumn is one color column's measurement.
type SequenceColumn struct {
	BVLo         float64
	BVHi         float64
	DataStars    int
	ModelStars   int
	DataMedian   float64 // catalog: median M_V − table's M_V at its color
	ModelMedian  float64 // the model's, at the shift of the last round
	Shift        float64 // the measured shift (NaN: not measured)
	LastMove     float64 // what the last round changed
	NotMeasured  string
	ColumnCenter float64
}

// SequenceShift is where a catalog's main sequence lies against the
// model's relation table.
type SequenceShift struct {
	Columns []SequenceColumn
	// BV and Mag are the nodes for stars.sequence_shift_b_v and
	// stars.sequence_shift_mag: the measured columns' centres and shifts.
	BV  []float64
	Mag []float64
	// MaxLastMove is the largest change the last round made to a measured
	// column: how far from converged the shift is.
	MaxLastMove float64
}

// place is the shift as a comparison's summary gives it (nil for none).
func (s *SequenceShift) place() *SequencePlace {
	if s == nil {
		return nil
	}
	n := 0
	for _, c := range s.Columns {
		if c.NotMeasured == "" {
			n++
		}
	}
	return &SequencePlace{BV: s.BV, Mag: s.Mag, MaxLastMove: s.MaxLastMove, Columns: n, OfColumns: len(s.Columns)}
}

// TOML is the shift as the [stars] keys a scenario takes.
func (s *SequenceShift) TOML() string {
	f := func(x []float64, digits int) string {
		out := "["
		for i, v := range x {
			if i > 0 {
				out += ", "
			}
			out += fmt.Sprintf("%.*f", digits, v)
		}
		return out + "]"
	}
	return fmt.Sprintf("[stars]\nsequence_shift_b_v = %s\nsequence_shift_mag = %s\n", f(s.BV, 3), f(s.Mag, 3))
}

// MeasureSequenceShift measures where the scenario's catalog's main
// sequence lies against the relation table as published (any shift the
// scenario gives is set aside): per color column of the comparison, the
// median residual of the catalog's stars from the table minus the
// model's, both through the scenario's cuts, its main-sequence band
// included. The band is centred on the sequence as moved so far, in data
// and model alike, so each round compares the same window of both; a
// catalog cut already by a band about another sequence cannot be
// measured beyond that band. progress, if not nil, hears of each round.
func MeasureSequenceShift(ctx context.Context, res *scenarios.Resolved, source string, progress func(string)) (*SequenceShift, error) {
	if res.Scenario.Data.File == "" {
		return nil, RequireData(res, source)
	}
	s0 := res.Scenario
	s0.Stars.SequenceShiftBV, s0.Stars.SequenceShiftMag = nil, nil
	table, err := assemble.Relations(&s0)
	if err != nil {
		return nil, err
	}
	space, err := assemble.Space(&s0)
	if err != nil {
		return nil, InputError{fmt.Errorf("%s: %w", source, err)}
	}
	nc := space.NumColor()
	column := func(bv float64) int {
		e := space.ColorEdges
		if !(bv >= e[0] && bv < e[len(e)-1]) {
			return -1
		}
		return sort.Search(len(e), func(i int) bool { return e[i] > bv }) - 1 // e[k] ≤ bv < e[k+1]
	}

	out := &SequenceShift{Columns: make([]SequenceColumn, nc)}
	shift := make([]float64, nc) // per column, the shift so far
	for c := range out.Columns {
		lo, hi := space.ColorEdges[c], space.ColorEdges[c+1]
		out.Columns[c] = SequenceColumn{BVLo: lo, BVHi: hi, ColumnCenter: space.ColorCenter(c), Shift: math.NaN(), LastMove: math.NaN()}
		mLo, okLo := table.AbsMagVAtBV(lo)
		mHi, okHi := table.AbsMagVAtBV(hi)
		switch slope := (mHi - mLo) / (hi - lo); {
		case !okLo || !okHi:
			out.Columns[c].NotMeasured = "the table does not reach across this column"
		case slope > SequenceMaxSlope:
			out.Columns[c].NotMeasured = fmt.Sprintf("the sequence drops %.0f mag per mag of B−V here, more than %g: a color's error moves M_V too far to read its place", slope, SequenceMaxSlope)
		}
	}
	for round := range sequenceRounds {
		s := s0
		s.Stars.SequenceShiftBV, s.Stars.SequenceShiftMag = nodes(out.Columns, shift)
		b, err := Build(&s, source)
		if err != nil {
			return nil, err
		}
		// Residuals from the sequence as moved so far: the band's centre.
		resid := func(bv, absV float64) (float64, bool) {
			ms, ok := b.Relations.AbsMagVAtBV(bv)
			return absV - ms, ok
		}
		spec := dataSpec(res)
		spec.Cuts, spec.Relations, spec.Dust = assemble.Cuts(&s), b.Relations, b.Population.Dust
		obs, err := compare.ReadObserved(spec, space, nil)
		if err != nil {
			return nil, InputError{fmt.Errorf("%s: %w", source, err)}
		}
		data := make([][]float64, nc)
		for _, st := range obs.Stars {
			if c := column(st.ColumnBV); c >= 0 {
				if d, ok := resid(st.BV, st.AbsMagV); ok {
					data[c] = append(data[c], d)
				}
			}
		}
		mod, err := modelResiduals(ctx, &s, b, SequenceModelStars, func(bv, av, absV float64) (int, float64, bool) {
			c := column(space.AxisColor(bv, av))
			if c < 0 {
				return 0, 0, false
			}
			d, ok := resid(bv, absV)
			return c, d, ok
		}, nc)
		if err != nil {
			return nil, err
		}
		if progress != nil {
			progress(fmt.Sprintf("sequence: round %d of %d, %d catalog and %d model stars", round+1, sequenceRounds, len(obs.Stars), SequenceModelStars))
		}
		for c := range out.Columns {
			col := &out.Columns[c]
			col.DataStars, col.ModelStars = len(data[c]), len(mod[c])
			col.DataMedian, col.ModelMedian = median(data[c]), median(mod[c])
			switch {
			case col.NotMeasured != "":
			case col.DataStars < SequenceMinStars || col.ModelStars < SequenceMinStars:
				col.NotMeasured = fmt.Sprintf("fewer than %d stars (catalog %d, model %d)", SequenceMinStars, col.DataStars, col.ModelStars)
			case math.Abs(col.DataMedian-col.ModelMedian) > SequenceMaxGapMag && round == 0:
				col.NotMeasured = fmt.Sprintf("the catalog's median lies %+.2f mag from the model's, beyond ±%g: the table does not describe these stars", col.DataMedian-col.ModelMedian, SequenceMaxGapMag)
			}
			if col.NotMeasured != "" {
				continue
			}
			move := col.DataMedian - col.ModelMedian
			shift[c] = math.Max(-scenarios.MaxSequenceShiftMag, math.Min(scenarios.MaxSequenceShiftMag, shift[c]+move))
			col.Shift, col.LastMove = shift[c], move
		}
	}
	out.BV, out.Mag = nodes(out.Columns, shift)
	// To the thousandth (of a magnitude), as TOML prints them, so that the
	// keys pasted into a scenario move the table exactly as
	// compare.measure_sequence did (+ 0 turns −0 into 0).
	for i := range out.Mag {
		out.BV[i] = math.Round(out.BV[i]*1000) / 1000
		out.Mag[i] = math.Round(out.Mag[i]*1000)/1000 + 0
	}
	if len(out.BV) == 0 {
		return nil, InputError{fmt.Errorf("%s: no color column holds %d catalog and model stars inside the main-sequence band: the shift cannot be measured", source, SequenceMinStars)}
	}
	for _, col := range out.Columns {
		if col.NotMeasured == "" {
			out.MaxLastMove = math.Max(out.MaxLastMove, math.Abs(col.LastMove))
		}
	}
	return out, nil
}

// nodes lists the measured columns' centres and shifts.
func nodes(cols []SequenceColumn, shift []float64) (bv, mag []float64) {
	for c, col := range cols {
		if col.NotMeasured == "" && !math.IsNaN(col.Shift) {
			bv, mag = append(bv, col.ColumnCenter), append(mag, shift[c])
		}
	}
	return bv, mag
}

// modelResiduals draws the model's first n catalog stars (in chunk order,
// so the same on any number of workers) and sorts each one's residual
// into its column: at(bv, av, absV) gives the column and residual of a
// star of observed color bv, extinction av and M_V (extinction in), or
// false to leave it out.
func modelResiduals(ctx context.Context, s *scenarios.Scenario, b *assemble.Built, n int, at func(bv, av, absV float64) (int, float64, bool), nc int) ([][]float64, error) {
	out := make([][]float64, nc)
	kept := 0
	errDone := errors.New("enough")
	err := model.RunChunks(ctx, s.Run.Seed, s.Run.StarsGenerated*MockDrawFactor, s.Run.ChunkStars, defaultWorkers(), b.Population.Fill,
		func(ch *model.Chunk) error {
			for i := 0; i < ch.N; i++ {
				if !ch.Flags[i].Selected() {
					continue
				}
				c, d, ok := at(ch.ObsBV[i], ch.AV[i], ch.ObsAbsMag[i])
				if !ok {
					continue
				}
				out[c] = append(out[c], d)
				if kept++; kept == n {
					return errDone
				}
			}
			return nil
		})
	if err != nil && !errors.Is(err, errDone) {
		return nil, err
	}
	return out, nil
}

// median is the sample median by the project's one quantile rule
// (stats.QuantileSorted; NaN for none).
func median(x []float64) float64 {
	s := slices.Clone(x)
	slices.Sort(s)
	return stats.QuantileSorted(s, 0.5)
}
