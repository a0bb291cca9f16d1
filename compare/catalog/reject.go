package catalog

import (
	"encoding/csv"
	"errors"
	"io"
	"strconv"
)

// Reason says why a row was rejected.
type Reason int

const (
	// ReasonFieldCount: the row has a different number of fields than the header.
	ReasonFieldCount Reason = iota
	// ReasonMissing: a needed value is empty or a null marker (NA, null, None, --).
	ReasonMissing
	// ReasonNotNumeric: a needed value is not a number.
	ReasonNotNumeric
	// ReasonNotFinite: a needed value is NaN or infinite.
	ReasonNotFinite
	// ReasonPeriod: the rotation period is not positive.
	ReasonPeriod
	// ReasonParallax: the parallax is not positive (or so small that the
	// distance overflows), so no distance follows.
	ReasonParallax
	// ReasonPosition: a latitude or declination lies outside [−90°, 90°].
	ReasonPosition
	// ReasonQuoting: a quoted field is not closed, or text follows its
	// closing quote.
	ReasonQuoting
	numReasons
)

var reasonText = [numReasons]string{
	ReasonFieldCount: "wrong number of fields",
	ReasonMissing:    "missing value",
	ReasonNotNumeric: "not a number",
	ReasonNotFinite:  "NaN or infinite",
	ReasonPeriod:     "period not positive",
	ReasonParallax:   "parallax not positive",
	ReasonPosition:   "latitude or declination out of range",
	ReasonQuoting:    "malformed quoting",
}

func (r Reason) String() string {
	if r >= 0 && r < numReasons {
		return reasonText[r]
	}
	return "reason " + strconv.Itoa(int(r))
}

// Reasons returns every Reason, in order, for reports that list all counts.
func Reasons() []Reason {
	out := make([]Reason, numReasons)
	for i := range out {
		out[i] = Reason(i)
	}
	return out
}

// Rejection describes one row left out: unusable (Reason), or usable but
// excluded by the caller (Excluded, e.g. a catalog cut).
type Rejection struct {
	Line   int    // CSV, ECSV: line in the (decompressed) text; FITS, Parquet: row; from 1
	Reason Reason // why an unusable row is unusable; not set when Excluded is
	// Excluded, when not "", is why the caller left a usable row out
	// (Exclude.Reason); it is written in place of Reason.
	Excluded string
	Column   string // the offending column, "" for ReasonFieldCount
	Value    string // the offending value as written
	Raw      string // the whole line as written; FITS, Parquet: "column=value, …" of the mapped columns
}

// RejectSink receives every rejected row. An error it returns stops the
// reading and is returned by Read.
type RejectSink interface {
	Reject(r Rejection) error
}

// CSVRejectWriter is a RejectSink that writes rejected rows as CSV with the
// columns line, reason, column, value, raw. Call Flush when done.
type CSVRejectWriter struct {
	w      *csv.Writer
	header bool
}

// NewCSVRejectWriter returns a CSVRejectWriter writing to w.
func NewCSVRejectWriter(w io.Writer) *CSVRejectWriter {
	return &CSVRejectWriter{w: csv.NewWriter(w)}
}

// Reject writes one rejected row (and the header before the first).
func (c *CSVRejectWriter) Reject(r Rejection) error {
	if !c.header {
		c.header = true
		if err := c.w.Write([]string{"line", "reason", "column", "value", "raw"}); err != nil {
			return err
		}
	}
	why := r.Reason.String()
	if r.Excluded != "" {
		why = r.Excluded
	}
	return c.w.Write([]string{strconv.Itoa(r.Line), why, r.Column, r.Value, r.Raw})
}

// Exclude, returned by the row function of Read, leaves a usable row out
// for a reason of the caller's (a catalog cut, a cell the comparison
// leaves out): the row goes to Options.Rejects as a Rejection with
// Excluded = Reason and the row as written, it is counted in
// Summary.Excluded, and reading goes on. So every row left out is listed
// in one place, whoever left it out.
type Exclude struct {
	Reason string // e.g. "cut: color"; written in the reason column
	Column string // the column (or derived quantity) that decided
	Value  string // its value
}

func (e *Exclude) Error() string { return "excluded: " + e.Reason }

// excluded reports whether err is an *Exclude, and returns it.
func excluded(err error) (*Exclude, bool) {
	var ex *Exclude
	if errors.As(err, &ex) {
		return ex, true
	}
	return nil, false
}

// Flush writes any buffered rows and reports a write error, if any. It
// writes the header even when no row was rejected, so an empty reject file
// still says what it is.
func (c *CSVRejectWriter) Flush() error {
	if !c.header {
		c.header = true
		if err := c.w.Write([]string{"line", "reason", "column", "value", "raw"}); err != nil {
			return err
		}
	}
	c.w.Flush()
	return c.w.Error()
}
