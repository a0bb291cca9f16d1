package main

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math"

	"spinpop/pipeline"
)

func runSequence(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("sequence", "sequence SCENARIO [--set key=value]... [--json]",
		"Measure where the scenario's catalog's main sequence lies against the model's relation table:\n"+
			"per color column, the median of M_V less the table's M_V at each star's color, in the catalog\n"+
			"and in the model's own catalog stars drawn through the same cuts (the band widened to ±1 mag),\n"+
			"and the difference as a shift of the table in M_V (> 0 fainter). Prints the [stars] keys that\n"+
			"move the table there; add them to the scenario and compare again. Any shift the scenario\n"+
			"gives already is set aside: the shift is measured from the table as published.", stdout)
	asJSON := fs.Bool("json", false, "print the columns and the keys as JSON")
	pos, err := parseInterleaved(fs, args)
	if err != nil {
		return err
	}
	path, err := oneScenarioArg(pos, "sequence")
	if err != nil {
		return err
	}
	res, err := loadScenario(path, scenarioSets(fs))
	if err != nil {
		return err
	}
	progress := func(msg string) { fmt.Fprintln(stderr, "spinpop:", msg) }
	sh, err := pipeline.MeasureSequenceShift(context.Background(), res, path, progress)
	if err != nil {
		return err
	}
	if *asJSON {
		return writeSequenceJSON(stdout, sh)
	}
	writeSequenceText(stdout, sh)
	return nil
}

// sequenceConvergedMag is the largest last-round move a shift is quoted
// as measured without a caution: below the medians' own noise (a few
// hundredths of a magnitude for the columns' usual counts).
const sequenceConvergedMag = 0.03

func writeSequenceText(w io.Writer, sh *pipeline.SequenceShift) {
	// What could mislead comes first.
	if sh.MaxLastMove > sequenceConvergedMag {
		fmt.Fprintf(w, "Caution: the last round still moved a column's shift by %.3f mag; the shift is near, not at, where\n"+
			"the medians agree. Run again with these keys in the scenario and add the shifts printed then.\n\n", sh.MaxLastMove)
	}
	skipped := 0
	for _, c := range sh.Columns {
		if c.NotMeasured != "" {
			skipped++
		}
	}
	if skipped > 0 {
		fmt.Fprintf(w, "Note: %d of %d color columns are not measured (below); the shift there is interpolated between\n"+
			"the measured columns, or that of the nearest one beyond them.\n\n", skipped, len(sh.Columns))
	}
	fmt.Fprintln(w, "Main sequence of the catalog against the model's (median M_V − table's M_V, mag; > 0 fainter):")
	fmt.Fprintf(w, "%-13s %8s %8s %9s %9s %8s\n", "B-V", "catalog", "model", "cat. med", "mod. med", "shift")
	for _, c := range sh.Columns {
		fmt.Fprintf(w, "%5.3f–%5.3f %8d %8d %9s %9s %8s", c.BVLo, c.BVHi, c.DataStars, c.ModelStars,
			signed(c.DataMedian), signed(c.ModelMedian), signed(c.Shift))
		if c.NotMeasured != "" {
			fmt.Fprintf(w, "  not measured: %s", c.NotMeasured)
		}
		fmt.Fprintln(w)
	}
	fmt.Fprintln(w, "\nThe model's medians are those at the shift below (binaries, Malmquist bias and dust sit in both")
	fmt.Fprintln(w, "medians and cancel as far as the model has them right). Add to the scenario:")
	fmt.Fprintln(w)
	fmt.Fprint(w, sh.TOML())
}

// signed formats a magnitude with its sign, or "–" for none.
func signed(x float64) string {
	if math.IsNaN(x) {
		return "–"
	}
	return fmt.Sprintf("%+.3f", x)
}

func writeSequenceJSON(w io.Writer, sh *pipeline.SequenceShift) error {
	num := func(x float64) *float64 {
		if math.IsNaN(x) {
			return nil
		}
		return &x
	}
	type column struct {
		BVLo        float64  `json:"b_v_lo"`
		BVHi        float64  `json:"b_v_hi"`
		DataStars   int      `json:"catalog_stars"`
		ModelStars  int      `json:"model_stars"`
		DataMedian  *float64 `json:"catalog_median_mag"`
		ModelMedian *float64 `json:"model_median_mag"`
		Shift       *float64 `json:"shift_mag"`
		LastMove    *float64 `json:"last_move_mag"`
		NotMeasured string   `json:"not_measured,omitempty"`
	}
	out := struct {
		Columns     []column  `json:"columns"`
		BV          []float64 `json:"sequence_shift_b_v"`
		Mag         []float64 `json:"sequence_shift_mag"`
		MaxLastMove float64   `json:"max_last_move_mag"`
	}{BV: sh.BV, Mag: sh.Mag, MaxLastMove: sh.MaxLastMove}
	for _, c := range sh.Columns {
		out.Columns = append(out.Columns, column{c.BVLo, c.BVHi, c.DataStars, c.ModelStars,
			num(c.DataMedian), num(c.ModelMedian), num(c.Shift), num(c.LastMove), c.NotMeasured})
	}
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(out)
}
