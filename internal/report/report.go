// Package report writes one self-contained HTML page per run: what the
// run concluded (the verdict, and whether the model describes the data at
// all) first, then the numbers, the figures (embedded as data: URIs, so
// the page can be mailed as one file), the scenario in canonical form with
// its hash, the data file's checksum and the tool's version.
package report

import (
	"bytes"
	_ "embed"
	"encoding/base64"
	"fmt"
	"html/template"
	"io"
)

// Tone says how a verdict or a line should be read.
type Tone string

const (
	Neutral Tone = "neutral" // a plain statement
	Good    Tone = "good"    // the model describes the data; a clear result
	Caution Tone = "caution" // read with care (weak evidence, a warning)
	Bad     Tone = "bad"     // the model does not describe the data
)

// Line is a sentence with its tone.
type Line struct {
	Text string
	Tone Tone
}

// Row is one number of a table: its name, its value as text, and a note.
type Row struct {
	Name, Value, Note string
}

// Table is a titled list of numbers.
type Table struct {
	Title string
	Rows  []Row
}

// Figure is one embedded figure.
type Figure struct {
	File    string // the PNG's name beside the report
	Caption string
}

// Data describes the catalog a run compared with.
type Data struct {
	File     string
	SHA256   string
	Rows     int
	Compared int
}

// Report is everything one page shows.
type Report struct {
	Command  string // "test-burst"
	Title    string // what was run, in words
	Verdict  Line   // the conclusion, first
	Adequacy []Line // does the model describe the data? (goodness of fit)
	Warnings []string
	Tables   []Table
	Summary  string // the run's printed summary, verbatim
	Figures  []Figure
	Scenario struct {
		Name, Hash, Canonical, Source string
	}
	Data    *Data
	Version string
	Outputs []string // the other files of the run
}

//go:embed page.html.tmpl
var pageText string

var page = template.Must(template.New("page").Parse(pageText))

// Write renders the page; read returns each figure's PNG by file name.
func (r *Report) Write(w io.Writer, read func(name string) ([]byte, error)) error {
	view := struct {
		*Report
		Figs []figureView
	}{Report: r}
	for _, f := range r.Figures {
		b, err := read(f.File)
		if err != nil {
			return fmt.Errorf("report: figure %s: %w", f.File, err)
		}
		// A data: URI keeps the page one file; html/template passes a
		// template.URL through unescaped, and base64 holds nothing to escape.
		src := template.URL("data:image/png;base64," + base64.StdEncoding.EncodeToString(b))
		view.Figs = append(view.Figs, figureView{File: f.File, Caption: f.Caption, Src: src})
	}
	var buf bytes.Buffer
	if err := page.Execute(&buf, view); err != nil {
		return fmt.Errorf("report: %w", err)
	}
	_, err := w.Write(buf.Bytes())
	return err
}

type figureView struct {
	File, Caption string
	Src           template.URL
}
