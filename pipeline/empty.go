package pipeline

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"math"

	"spinpop/model"
	"spinpop/scenarios"
)

// stepKeys are the scenario keys that decide each selection step: where
// to look when a step keeps no star.
var stepKeys = map[string]string{
	"generated":       "run.stars_generated",
	"dwarf":           "the ages and masses that stay dwarfs (history, imf.mass_min_msun/mass_max_msun, stars.evolution)",
	"magnitude_range": "survey.bright_limit_mag/faint_limit_mag against the field's distances (survey.field.distance_min_pc/distance_max_pc), dust",
	"color_range":     "cuts.b_v_min/b_v_max",
	"main_sequence":   "cuts.ms_band_bright_mag/ms_band_faint_mag/ms_band_dereddened",
	"period_detected": "the survey's detection (survey.noise_*, cadence_d, baseline_d, min_cycles, detection_snr) and the spin-down law's calibrated range",
	"period_window":   "cuts.period_min_d/period_max_d (by default 2 × survey.cadence_d and survey.baseline_d / survey.min_cycles)",
}

// EmptySelection says that a scenario's survey and cuts kept no star, and
// at which step the last ones went. It is an InputError's content: the
// scenario, not the run, is at fault.
type EmptySelection struct {
	// What kept no star: "the catalog", "the templates", ...
	What string
	// Counts are the stars left after each selection step.
	Counts []StepCount
}

// Emptied returns the first step that kept no star and the stars before
// it ("" and 0 when the selection is not empty).
func Emptied(counts []StepCount) (step string, before int64) {
	for i, c := range counts {
		if c.Stars == 0 {
			if i > 0 {
				before = counts[i-1].Stars
			}
			return c.Step, before
		}
	}
	return "", 0
}

func (e *EmptySelection) Error() string {
	step, before := Emptied(e.Counts)
	what := e.What
	if what == "" {
		what = "the catalog"
	}
	if step == "" {
		return fmt.Sprintf("%s is empty", what)
	}
	if step == "generated" {
		return fmt.Sprintf("%s is empty: run.stars_generated draws no star", what)
	}
	gen := e.Counts[0].Stars
	if gen < 1000 {
		// So few stars that any survey would likely keep none.
		return fmt.Sprintf("%s is empty: only %d stars were generated (run.stars_generated), and the %s step removed the last %d; raise run.stars_generated", what, gen, step, before)
	}
	return fmt.Sprintf("the scenario's survey and cuts select no star for %s: of %d stars generated, the %s step removed the last %d (look at %s)", what, gen, step, before, stepKeys[step])
}

// IsEmptySelection reports whether err is, or wraps, an *EmptySelection.
func IsEmptySelection(err error) bool {
	var e *EmptySelection
	return errors.As(err, &e)
}

// EmptyReport is what a command's JSON report holds when the selection is
// empty: no result, the reason, and the selection table.
type EmptyReport struct {
	Outcome string      `json:"outcome"` // "empty_selection"
	Message string      `json:"message"`
	Step    string      `json:"emptied_at_step"`
	Counts  []StepCount `json:"counts"`
}

// Report is e as JSON for a report file.
func (e *EmptySelection) Report() EmptyReport {
	step, _ := Emptied(e.Counts)
	return EmptyReport{Outcome: "empty_selection", Message: e.Error(), Step: step, Counts: e.Counts}
}

// MarshalJSON writes a median that does not exist (no star to take it
// of) as null, which JSON can hold, rather than NaN, which it cannot.
func (a AgeMedians) MarshalJSON() ([]byte, error) {
	return json.Marshal(struct {
		Generated *float64 `json:"generated_dwarfs"`
		Catalog   *float64 `json:"catalog"`
	}{finitePtr(a.Generated), finitePtr(a.Catalog)})
}

// finitePtr is x, or nil (JSON null) when x is NaN or infinite.
func finitePtr(x float64) *float64 {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return nil
	}
	return &x
}

// SelectionCounts runs the scenario for n stars (its run.stars_generated
// replaced), keeping nothing but the stars left after each selection step:
// the table that says where a selection lost its stars.
func SelectionCounts(ctx context.Context, res *scenarios.Resolved, source string, n int64, workers int) ([]StepCount, error) {
	r := *res
	r.Scenario.Run.StarsGenerated = max(n, 1)
	sim, err := Simulate(ctx, &r, SimulateOptions{Source: source, Workers: workers})
	if err != nil {
		return nil, err
	}
	return sim.Manifest.Counts, nil
}

func empty(x []float64) bool {
	for _, v := range x {
		if v != 0 {
			return false
		}
	}
	return true
}

// StepCounts is a tally's selection table.
func StepCounts(t *model.Tally) []StepCount {
	out := make([]StepCount, len(model.Steps))
	for i, name := range model.Steps {
		out[i] = StepCount{name, t.StepCounts[i]}
	}
	return out
}

func sum(x []float64) float64 {
	s := 0.0
	for _, v := range x {
		s += v
	}
	return s
}
