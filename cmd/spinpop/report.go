package main

import (
	"fmt"
	"io"

	"spinpop/compare"
	"spinpop/internal/outset"
	"spinpop/internal/report"
	"spinpop/pipeline"
	"spinpop/scenarios"
)

// The report.html of every run that writes a folder: see internal/report.

const reportFile = "report.html"

// newReport starts a run's report with what identifies the run.
func newReport(command, title string, res *scenarios.Resolved, source string) *report.Report {
	r := &report.Report{Command: command, Title: title, Version: version}
	r.Scenario.Name = res.Scenario.Name
	r.Scenario.Hash = res.Hash()
	r.Scenario.Canonical = string(res.Canonical())
	r.Scenario.Source = source
	return r
}

// writeReport adds report.html (under prefix) to the output set, with the
// set's figures embedded.
func writeReport(out *outset.Set, prefix string, r *report.Report) error {
	return out.Write(prefix+reportFile, func(w io.Writer) error {
		return r.Write(w, func(name string) ([]byte, error) { return out.ReadStaged(prefix + name) })
	})
}

// reportData describes the compared catalog.
func reportData(d pipeline.DataSummary) *report.Data {
	return &report.Data{File: d.File, SHA256: d.SHA256, Rows: d.Rows, Compared: d.Compared}
}

// adequacyLine says whether one model describes the catalog, with the
// deviance against its own replicates (the goodness of fit of README's
// "Can the verdict be trusted?").
func adequacyLine(name string, a compare.Adequacy) report.Line {
	if a.Replicates == 0 {
		return report.Line{Text: name + ": goodness of fit not calibrated (no bootstrap replicates)", Tone: report.Caution}
	}
	if a.Adequate(compare.AdequacyLevel) {
		return report.Line{Tone: report.Good, Text: fmt.Sprintf("%s describes the catalog: deviance %.1f against %.1f ± %.1f from %d replicates of itself (p = %.3g, dispersion %.2f).",
			name, a.Deviance, a.ReplicateMean, a.ReplicateSD, a.Replicates, a.PValue, a.Dispersion)}
	}
	return report.Line{Tone: report.Bad, Text: fmt.Sprintf("%s does not describe the catalog: deviance %.1f where its own replicates give %.1f ± %.1f (p = %.3g, dispersion %.2f)%s.",
		name, a.Deviance, a.ReplicateMean, a.ReplicateSD, a.PValue, a.Dispersion, compare.WorstRegions(a))}
}

// strengthTone is how a burst test's verdict should be read.
func strengthTone(strength, calibration string) report.Tone {
	switch {
	case strength == "unreliable":
		return report.Bad
	case calibration == "quasi-likelihood":
		return report.Caution
	case strength == "strong":
		return report.Good
	case strength == "none":
		return report.Neutral
	}
	return report.Caution
}

// figures lists a run's figures with their captions, in the order given,
// keeping those among the run's outputs.
func figures(outputs []string, captions map[string]string, order ...string) []report.Figure {
	have := map[string]bool{}
	for _, o := range outputs {
		have[o] = true
	}
	var out []report.Figure
	for _, f := range order {
		if have[f] {
			out = append(out, report.Figure{File: f, Caption: captions[f]})
		}
	}
	return out
}

// otherOutputs are the outputs that are not figures or the report.
func otherOutputs(outputs []string, figs []report.Figure) []string {
	skip := map[string]bool{reportFile: true}
	for _, f := range figs {
		skip[f.File] = true
	}
	var out []string
	for _, o := range outputs {
		if !skip[o] {
			out = append(out, o)
		}
	}
	return out
}

// Captions of the figures, by file name: what each shows and how to read it.
var captions = map[string]string{
	"period_color.png":                   "Period–color density of the catalog stars (cells colored by count, log scale), with gyrochrones of the scenario's spin-down law.",
	"period_histograms.png":              "Log-period histograms in ranges of color.",
	"height.png":                         "Distribution of the catalog stars' height above the Galactic plane.",
	"age_selection.png":                  "Age distribution of all dwarfs in the field against the catalog's (the selection's age bias), and the share of eligible stars whose period was detected, by age and by color.",
	"residuals.png":                      "Data and model on the comparison plane (one color scale), and the Pearson residuals (n − μ)/√μ: red where the data hold more stars than the model.",
	"fit_residuals.png":                  "Data and the fitted model with a burst on the comparison plane, and the Pearson residuals (n − μ)/√μ.",
	"fit_difference.png":                 "Where the fitted burst and smooth histories differ, in units of the smooth model's counting noise: cells beyond ±2 are where a catalog of this size tells them apart.",
	"fit_period_histograms.png":          "Log-period histograms of the data (points, ±√n) against both fitted hypotheses, by color range.",
	"profile_burst_age.png":              "Profile likelihood of the burst age: zoomed to its 95 % interval (left), over the whole range the fit may choose (right).",
	"bootstrap.png":                      "Likelihood ratio in the bootstrap replicates made under the fitted smooth history, against the observed ratio.",
	"height_check.png":                   "Young fraction against height above the plane: the data (68 % Wilson intervals) against each fitted hypothesis.",
	"alternatives_period_histograms.png": "Log-period histograms of the data against each fitted explanation, by color range.",
	"alternatives_difference.png":        "Where each explanation differs from the first, in units of the first's counting noise.",
	"recovery_map.png":                   "Detection rate of the burst test over injected age and mass fraction.",
	"age_bias.png":                       "Recovered minus injected burst age: median and 16–84 % of the mocks.",
	"corner.png":                         "Posterior of the free parameters: marginal densities (median and 16–84 % marked) and pairwise densities, the best sample marked.",
	"sfh.png":                            "Star-formation history: posterior median with its 16–84 % band, and the best sample.",
}

// row is one line of a report's table.
func row(name, value, note string) report.Row {
	return report.Row{Name: name, Value: value, Note: note}
}

// finishReport ends a run that writes a report page: the page gets the
// printed text and the figures (in the order given, the other outputs
// listed after them), the set is published, and the text is printed —
// with "wrote: …" when wrote is not nil — or, with asJSON, the JSON
// report instead.
func finishReport(out *outset.Set, page *report.Report, text string, outputs []string, captions map[string]string, wrote []string, asJSON bool, jsonRep any, stdout io.Writer, order ...string) error {
	page.Summary = text
	page.Figures = figures(outputs, captions, order...)
	page.Outputs = otherOutputs(outputs, page.Figures)
	if err := writeReport(out, "", page); err != nil {
		return err
	}
	if _, err := publish(out); err != nil {
		return err
	}
	if asJSON {
		return encodeJSON(stdout, jsonRep)
	}
	io.WriteString(stdout, text)
	if wrote != nil {
		fmt.Fprintf(stdout, "wrote: %s\n", wordList(wrote))
	}
	return nil
}
