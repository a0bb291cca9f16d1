package sweep

import (
	"bytes"
	"encoding/csv"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
)

// Table is the merged result of a sweep: one row per point, in point
// order, missing and failed points included so that nothing is silently
// dropped.
type Table struct {
	Sweep   string   `json:"sweep"`
	Name    string   `json:"name"`
	Work    []string `json:"work"`
	Axes    []string `json:"axes"`
	Done    int      `json:"done"`
	Failed  int      `json:"failed"`
	Missing int      `json:"missing"`
	Rows    []Result `json:"points"`
}

// headlineColumns are the CSV columns of a Headline, in table order.
var headlineColumns = []struct {
	name string
	get  func(*Headline) string
}{
	{"catalog_stars", func(h *Headline) string { return intCell(h.CatalogStars) }},
	{"data_stars", func(h *Headline) string { return intCell(h.DataStars) }},
	{"ln_l", func(h *Headline) string { return floatCell(h.LnL) }},
	{"adequacy_p", func(h *Headline) string { return floatCell(h.AdequacyP) }},
	{"adequacy", func(h *Headline) string { return h.Adequacy }},
	{"burst_age_gyr", func(h *Headline) string { return floatCell(h.BurstAgeGyr) }},
	{"burst_age_lo_gyr", func(h *Headline) string { return floatCell(h.BurstAgeLoGyr) }},
	{"burst_age_hi_gyr", func(h *Headline) string { return floatCell(h.BurstAgeHiGyr) }},
	{"burst_fraction", func(h *Headline) string { return floatCell(h.BurstFraction) }},
	{"burst_fraction_lo", func(h *Headline) string { return floatCell(h.BurstFractionLo) }},
	{"burst_fraction_hi", func(h *Headline) string { return floatCell(h.BurstFractionHi) }},
	{"delta_ln_l", func(h *Headline) string { return floatCell(h.DeltaLnL) }},
	{"p_value", func(h *Headline) string { return floatCell(h.PValue) }},
	{"significance_sigma", func(h *Headline) string { return floatCell(h.SignificanceSigma) }},
	{"verdict", func(h *Headline) string { return h.Verdict }},
	{"preferred", func(h *Headline) string { return h.Preferred }},
	{"alternatives_outcome", func(h *Headline) string { return h.AlternativesOutcome }},
}

func floatCell(x *float64) string {
	if x == nil {
		return ""
	}
	return strconv.FormatFloat(*x, 'g', -1, 64)
}

func intCell(x *int64) string {
	if x == nil {
		return ""
	}
	return strconv.FormatInt(*x, 10)
}

// Collect reads every point's marker under out into a table, without
// writing anything.
func Collect(out string, plan *Plan) *Table {
	t := &Table{Sweep: plan.Sweep, Name: plan.Name, Work: plan.Work, Axes: plan.Axes, Rows: make([]Result, len(plan.Points))}
	for i, pp := range plan.Points {
		st, r := PointStatus(out, pp.Hash, plan.Work)
		if r == nil {
			r = &Result{Index: pp.Index, Hash: pp.Hash, Work: plan.Work, Values: pp.Values}
		}
		r.Status = st
		r.Values = pp.Values // as planned, in this sweep's axis order
		t.Rows[i] = *r
		switch st {
		case StatusDone:
			t.Done++
		case StatusFailed:
			t.Failed++
		default:
			t.Missing++
		}
	}
	return t
}

// Merge collects the points' results and writes results.csv and
// results.json into out (each whole or not at all).
func Merge(out string, plan *Plan) (*Table, error) {
	t := Collect(out, plan)
	csvText, err := t.CSV()
	if err != nil {
		return nil, err
	}
	if err := writeFileAtomic(filepath.Join(out, "results.csv"), csvText); err != nil {
		return nil, err
	}
	if err := writeJSON(filepath.Join(out, "results.json"), t); err != nil {
		return nil, err
	}
	return t, nil
}

// CSV renders the table: index, hash, status, one column per axis (named
// by its key), the headline numbers, extra numbers by name, and the error.
// Where and how long a point ran is in results.json only, so that the same
// sweep run anywhere gives the same CSV, byte for byte.
func (t *Table) CSV() ([]byte, error) {
	var extras []string
	for _, r := range t.Rows {
		for k := range r.Extra {
			if !slices.Contains(extras, k) {
				extras = append(extras, k)
			}
		}
	}
	slices.Sort(extras)
	head := []string{"index", "hash", "status"}
	head = append(head, t.Axes...)
	for _, c := range headlineColumns {
		head = append(head, c.name)
	}
	head = append(head, extras...)
	head = append(head, "error")

	var b bytes.Buffer
	w := csv.NewWriter(&b)
	if err := w.Write(head); err != nil {
		return nil, err
	}
	for _, r := range t.Rows {
		row := []string{strconv.Itoa(r.Index), r.Hash, r.Status}
		for i := range t.Axes {
			if i < len(r.Values) {
				row = append(row, cellText(r.Values[i]))
			} else {
				row = append(row, "")
			}
		}
		for _, c := range headlineColumns {
			row = append(row, c.get(&r.Headline))
		}
		for _, k := range extras {
			if x, ok := r.Extra[k]; ok {
				row = append(row, strconv.FormatFloat(x, 'g', -1, 64))
			} else {
				row = append(row, "")
			}
		}
		row = append(row, firstLine(r.Error))
		if err := w.Write(row); err != nil {
			return nil, err
		}
	}
	w.Flush()
	return b.Bytes(), w.Error()
}

// cellText is an axis value in a CSV cell: strings bare, the rest as TOML.
func cellText(v any) string {
	if s, ok := v.(string); ok {
		return s
	}
	if f, ok := v.(float64); ok {
		return fmtNum(f)
	}
	return strings.TrimSpace(ValueText(v))
}
