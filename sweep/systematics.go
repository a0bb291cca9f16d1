package sweep

import (
	"bytes"
	"encoding/csv"
	"fmt"
	"math"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
)

// Systematics. A sweep over modelling choices (spin-down law, turnover
// scale, detection model, …) on one catalog asks how far the burst test's
// answer moves with choices the data cannot settle. Each point is one
// choice; its burst age and fraction come with their own 68 % profile-
// likelihood intervals (statistical error under that choice). The
// combined interval is the envelope of the per-choice intervals: the
// smallest interval holding every choice's interval. It covers the truth
// whenever the right model is among the choices and that choice's interval
// covers it, with no choice weighted by how well it fits (conservative).
// This is common practice for a discrete set of modelling choices — the
// envelope prescription for sets of parton distributions, Botje et al.
// 2011, arXiv:1101.0538 [memory] — and is named in every output
// (SystematicsMethod).

// SystematicsMethod says in words how the combined interval is made.
const SystematicsMethod = "envelope of the per-choice 68 % profile-likelihood intervals: the smallest interval " +
	"that holds every choice's interval, each choice counted whole whatever its fit (common practice for a " +
	"discrete set of modelling choices, e.g. the envelope prescription of Botje et al. 2011, arXiv:1101.0538 [memory]); " +
	"the spread of the best values alone is given beside it"

// Choice is one point of a systematics table.
type Choice struct {
	Index  int    `json:"index"`
	Hash   string `json:"hash"`
	Label  string `json:"choice"` // the axis values, "spin.law = torque, spin.turnover = wright2018"
	Status string `json:"status"`
	// Usable: the point finished and reports a burst age with its
	// interval; only usable choices enter the combined intervals.
	Usable bool `json:"usable"`
	// Adequate: the burst model describes the catalog under this choice
	// (Headline.Adequacy is "adequate").
	Adequate bool `json:"adequate"`
	Headline
}

// Envelope is a combined interval over a set of choices.
type Envelope struct {
	Choices int     `json:"choices"`  // how many choices it combines
	Lo      float64 `json:"lo"`       // min of the choices' lower 68 % ends
	Hi      float64 `json:"hi"`       // max of their upper ends
	BestMin float64 `json:"best_min"` // the spread of the best values
	BestMax float64 `json:"best_max"`
}

// Systematics is the systematic-error table of a sweep whose work includes
// the burst test.
type Systematics struct {
	Sweep   string   `json:"sweep"`
	Axes    []string `json:"axes"`
	Method  string   `json:"method"`
	Choices []Choice `json:"choices"`
	// Combined over every usable choice, and over the adequate ones alone
	// (nil when none is adequate).
	AgeGyr, Fraction                 *Envelope `json:"-"`
	AgeGyrAdequate, FractionAdequate *Envelope `json:"-"`
	// Significance (σ) and bootstrap p-value ranges over usable choices.
	SigmaMin, SigmaMax float64        `json:"-"`
	Verdicts           map[string]int `json:"verdicts"` // usable choices by verdict
	// Warnings come first in every rendering: what could mislead.
	Warnings []string `json:"warnings"`
}

// systematicsJSON is Systematics for encoding/json: NaN-free, envelopes
// under their names.
type systematicsJSON struct {
	Systematics
	Combined map[string]*Envelope `json:"combined"`
	Sigma    []float64            `json:"significance_sigma_range,omitempty"`
}

// NewSystematics builds the table from a merged sweep table. It returns
// nil when the sweep's work has no burst test.
func NewSystematics(t *Table) *Systematics {
	if !slices.Contains(t.Work, StepTestBurst) {
		return nil
	}
	s := &Systematics{Sweep: t.Name, Axes: t.Axes, Method: SystematicsMethod, Verdicts: map[string]int{},
		SigmaMin: math.NaN(), SigmaMax: math.NaN(), Warnings: []string{}}
	var age, frac, ageOK, fracOK []Choice
	missing, floored, inadequate := 0, 0, []string{}
	for _, r := range t.Rows {
		c := Choice{Index: r.Index, Hash: r.Hash, Label: choiceLabel(t.Axes, r.Values), Status: r.Status, Headline: r.Headline}
		h := &r.Headline
		c.Adequate = h.Adequacy == "adequate"
		c.Usable = r.Status == StatusDone && h.BurstAgeGyr != nil && h.BurstAgeLoGyr != nil && h.BurstAgeHiGyr != nil
		s.Choices = append(s.Choices, c)
		if !c.Usable {
			missing++
			continue
		}
		age = append(age, c)
		if h.BurstFraction != nil && h.BurstFractionLo != nil && h.BurstFractionHi != nil {
			frac = append(frac, c)
		}
		if c.Adequate {
			ageOK = append(ageOK, c)
			if h.BurstFraction != nil && h.BurstFractionLo != nil && h.BurstFractionHi != nil {
				fracOK = append(fracOK, c)
			}
		} else {
			inadequate = append(inadequate, c.Label)
		}
		if h.Verdict != "" {
			s.Verdicts[h.Verdict]++
		}
		if b, ok := h.Extra[ExtraReplicates]; ok && h.PValue != nil && *h.PValue <= 1/(b+1)*(1+1e-9) {
			floored++
		}
		if h.SignificanceSigma != nil {
			s.SigmaMin = nanMin(s.SigmaMin, *h.SignificanceSigma)
			s.SigmaMax = nanMax(s.SigmaMax, *h.SignificanceSigma)
		}
	}
	ageOf := func(c Choice) (float64, float64, float64) { return *c.BurstAgeGyr, *c.BurstAgeLoGyr, *c.BurstAgeHiGyr }
	fracOf := func(c Choice) (float64, float64, float64) {
		return *c.BurstFraction, *c.BurstFractionLo, *c.BurstFractionHi
	}
	s.AgeGyr, s.Fraction = envelope(age, ageOf), envelope(frac, fracOf)
	s.AgeGyrAdequate, s.FractionAdequate = envelope(ageOK, ageOf), envelope(fracOK, fracOf)

	if missing > 0 {
		s.Warnings = append(s.Warnings, fmt.Sprintf("%d of %d choices have no burst age with its interval (failed, not yet run, or no burst fitted) and are left out of the combined intervals", missing, len(t.Rows)))
	}
	if len(inadequate) > 0 && len(ageOK) > 0 {
		s.Warnings = append(s.Warnings, fmt.Sprintf("under %d choice(s) the burst model does not describe the catalog (%s); their intervals are in the envelope over all choices but not in the one over adequate choices, which is the one to quote",
			len(inadequate), strings.Join(inadequate, "; ")))
	}
	if len(age) > 0 && len(ageOK) == 0 {
		s.Warnings = append(s.Warnings, "under no choice does the burst model describe the catalog: every interval here is conditional on a model the data reject, and so is the envelope")
	}
	if floored > 0 {
		s.Warnings = append(s.Warnings, fmt.Sprintf("under %d choice(s) no bootstrap replicate reached the observed likelihood ratio: their p-value is the floor 1/(B+1) of B replicates, and their significance a lower bound set by B, not by the data", floored))
	}
	if len(ageOK) == 1 && len(age) > 1 {
		s.Warnings = append(s.Warnings, fmt.Sprintf("the burst model describes the catalog under one choice only (%s): the envelope over adequate choices is that choice's own interval, so the data have picked the model rather than bounded the systematics; the envelope over all choices shows how far the answer moves with a wrong pick", ageOK[0].Label))
	}
	if len(age) == 1 {
		s.Warnings = append(s.Warnings, "only one choice is usable: the envelope is its own interval and says nothing about systematics")
	}
	return s
}

// ExtraReplicates is the Headline.Extra key of the bootstrap's replicate
// count, by which a p-value at its floor 1/(B+1) is recognised.
const ExtraReplicates = "bootstrap_replicates"

// choiceLabel names a point by its axis values, strings bare.
func choiceLabel(keys []string, vals []any) string {
	if len(keys) == 0 {
		return "the base"
	}
	parts := make([]string, len(keys))
	for i, k := range keys {
		parts[i] = k + " = " + cellText(vals[i])
	}
	return strings.Join(parts, ", ")
}

func envelope(cs []Choice, get func(Choice) (best, lo, hi float64)) *Envelope {
	if len(cs) == 0 {
		return nil
	}
	e := &Envelope{Choices: len(cs), Lo: math.Inf(1), Hi: math.Inf(-1), BestMin: math.Inf(1), BestMax: math.Inf(-1)}
	for _, c := range cs {
		b, lo, hi := get(c)
		e.Lo, e.Hi = math.Min(e.Lo, lo), math.Max(e.Hi, hi)
		e.BestMin, e.BestMax = math.Min(e.BestMin, b), math.Max(e.BestMax, b)
	}
	return e
}

func nanMin(a, b float64) float64 {
	if math.IsNaN(a) {
		return b
	}
	return math.Min(a, b)
}

func nanMax(a, b float64) float64 {
	if math.IsNaN(a) {
		return b
	}
	return math.Max(a, b)
}

// CSV is the table, one row per choice then the combined rows
// ("combined (all)", "combined (adequate)"), deterministic like
// results.csv.
func (s *Systematics) CSV() ([]byte, error) {
	var b bytes.Buffer
	w := csv.NewWriter(&b)
	head := []string{"index", "hash", "choice", "status", "adequacy", "adequacy_p",
		"burst_age_gyr", "burst_age_lo_gyr", "burst_age_hi_gyr",
		"burst_fraction", "burst_fraction_lo", "burst_fraction_hi",
		"delta_ln_l", "p_value", "significance_sigma", "verdict"}
	if err := w.Write(head); err != nil {
		return nil, err
	}
	for _, c := range s.Choices {
		h := &c.Headline
		row := []string{strconv.Itoa(c.Index), c.Hash, c.Label, c.Status, h.Adequacy, floatCell(h.AdequacyP),
			floatCell(h.BurstAgeGyr), floatCell(h.BurstAgeLoGyr), floatCell(h.BurstAgeHiGyr),
			floatCell(h.BurstFraction), floatCell(h.BurstFractionLo), floatCell(h.BurstFractionHi),
			floatCell(h.DeltaLnL), floatCell(h.PValue), floatCell(h.SignificanceSigma), h.Verdict}
		if err := w.Write(row); err != nil {
			return nil, err
		}
	}
	for _, c := range []struct {
		name      string
		age, frac *Envelope
	}{{"combined (all choices)", s.AgeGyr, s.Fraction}, {"combined (adequate choices)", s.AgeGyrAdequate, s.FractionAdequate}} {
		if c.age == nil {
			continue
		}
		row := []string{"", "", c.name, "", "", "", "", fmtNum(c.age.Lo), fmtNum(c.age.Hi), "", "", ""}
		if c.frac != nil {
			row[10], row[11] = fmtNum(c.frac.Lo), fmtNum(c.frac.Hi)
		}
		row = append(row, "", "", "", "")
		if err := w.Write(row); err != nil {
			return nil, err
		}
	}
	w.Flush()
	return b.Bytes(), w.Error()
}

// Markdown renders the table for people (and the README): warnings first,
// one row per choice, the combined intervals, and the method.
func (s *Systematics) Markdown() string {
	var b strings.Builder
	fmt.Fprintf(&b, "# Systematics: %s\n\n", s.Sweep)
	for _, w := range s.Warnings {
		fmt.Fprintf(&b, "**Warning:** %s.\n\n", w)
	}
	b.WriteString("| choice | model describes catalog (p) | burst age (Gyr), 68 % | burst fraction, 68 % | Δln L | bootstrap p | σ | verdict |\n")
	b.WriteString("|---|---|---|---|---|---|---|---|\n")
	for _, c := range s.Choices {
		h := &c.Headline
		if c.Status != StatusDone {
			fmt.Fprintf(&b, "| %s | %s | | | | | | |\n", c.Label, c.Status)
			continue
		}
		ad := h.Adequacy
		if ad == "" {
			ad = "—"
		}
		if h.AdequacyP != nil {
			ad += fmt.Sprintf(" (%.2g)", *h.AdequacyP)
		}
		fmt.Fprintf(&b, "| %s | %s | %s | %s | %s | %s | %s | %s |\n", c.Label, ad,
			intervalText(h.BurstAgeGyr, h.BurstAgeLoGyr, h.BurstAgeHiGyr, 3),
			intervalText(h.BurstFraction, h.BurstFractionLo, h.BurstFractionHi, 3),
			fixed(h.DeltaLnL, 1), gText(h.PValue), fixed(h.SignificanceSigma, 1), h.Verdict)
	}
	for _, c := range []struct {
		name      string
		age, frac *Envelope
	}{{"**combined, all choices**", s.AgeGyr, s.Fraction}, {"**combined, adequate choices**", s.AgeGyrAdequate, s.FractionAdequate}} {
		if c.age == nil {
			continue
		}
		fmt.Fprintf(&b, "| %s (%d) | | %s | %s | | | | |\n", c.name, c.age.Choices, envelopeText(c.age), envelopeText(c.frac))
	}
	b.WriteString("\nCombined interval: " + s.Method + ".")
	switch {
	case math.IsNaN(s.SigmaMin):
	case s.SigmaMin == s.SigmaMax:
		fmt.Fprintf(&b, " Significance %.1fσ under every usable choice.", s.SigmaMin)
	default:
		fmt.Fprintf(&b, " Significance ranges from %.1fσ to %.1fσ over the usable choices.", s.SigmaMin, s.SigmaMax)
	}
	b.WriteString("\n")
	return b.String()
}

func intervalText(best, lo, hi *float64, digits int) string {
	if best == nil {
		return ""
	}
	if lo == nil || hi == nil {
		return strconv.FormatFloat(*best, 'g', digits, 64)
	}
	return fmt.Sprintf("%s [%s, %s]", strconv.FormatFloat(*best, 'g', digits, 64),
		strconv.FormatFloat(*lo, 'g', digits, 64), strconv.FormatFloat(*hi, 'g', digits, 64))
}

func envelopeText(e *Envelope) string {
	if e == nil {
		return ""
	}
	return fmt.Sprintf("[%.3g, %.3g] (best values %.3g–%.3g)", e.Lo, e.Hi, e.BestMin, e.BestMax)
}

func fixed(x *float64, d int) string {
	if x == nil {
		return ""
	}
	return strconv.FormatFloat(*x, 'f', d, 64)
}

func gText(x *float64) string {
	if x == nil {
		return ""
	}
	return strconv.FormatFloat(*x, 'g', 3, 64)
}

// WriteSystematics writes systematics.csv, systematics.json and
// systematics.md into out (each whole or not at all) and returns their
// names.
func WriteSystematics(out string, s *Systematics) ([]string, error) {
	c, err := s.CSV()
	if err != nil {
		return nil, err
	}
	if err := writeFileAtomic(filepath.Join(out, "systematics.csv"), c); err != nil {
		return nil, err
	}
	j := systematicsJSON{Systematics: *s, Combined: map[string]*Envelope{}}
	for k, e := range map[string]*Envelope{"burst_age_gyr": s.AgeGyr, "burst_fraction": s.Fraction,
		"burst_age_gyr_adequate": s.AgeGyrAdequate, "burst_fraction_adequate": s.FractionAdequate} {
		if e != nil {
			j.Combined[k] = e
		}
	}
	if !math.IsNaN(s.SigmaMin) {
		j.Sigma = []float64{s.SigmaMin, s.SigmaMax}
	}
	if err := writeJSON(filepath.Join(out, "systematics.json"), j); err != nil {
		return nil, err
	}
	if err := writeFileAtomic(filepath.Join(out, "systematics.md"), []byte(s.Markdown())); err != nil {
		return nil, err
	}
	return []string{"systematics.csv", "systematics.json", "systematics.md"}, nil
}
