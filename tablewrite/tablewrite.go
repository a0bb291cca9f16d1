// Package tablewrite writes a table — columns with a name, a unit and a
// type, rows streamed one at a time — as CSV, a FITS binary table or
// Parquet, through one small interface. It is how a program writes the
// simulated catalog in the format a user chose: the rows go to a
// temporary file beside the target, and Close publishes the file whole by
// renaming it; a failed or aborted table leaves the target as it was.
//
// Units: CSV has nowhere to put them, so catalog columns carry their
// units in their names (period_d, z_pc) in every format; FITS also gets
// them as TUNITn and Parquet in its "units" metadata, which is what the
// catalog readers check.
package tablewrite

import (
	"bufio"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"spinpop/fitstable"
	"spinpop/parquettable"
)

// Kind is the type of a column's values.
type Kind int

const (
	Float64 Kind = iota
	Float32
	Int64
	Int32
	Bool
	String
)

// Column describes one column.
type Column struct {
	Name  string
	Unit  string // "" for none (dimensionless, a count, a flag)
	Kind  Kind
	Width int // String: the longest value in bytes, for FITS's fixed-width strings
}

// The writers of the three formats.
var (
	_ Writer = (*csvWriter)(nil)
	_ Writer = (*fitstable.Writer)(nil)
	_ Writer = (*parquettable.Writer)(nil)
)

// Writer writes rows. Set a row's values by column index, then WriteRow; a
// column left unset in a row is null (an empty CSV cell, TNULLn or NaN in
// FITS, a Parquet null). A value that does not fit its column is reported
// by the next WriteRow or Close, never by a panic.
type Writer interface {
	SetFloat64(i int, v float64)
	SetInt64(i int, v int64)
	SetBool(i int, v bool)
	SetString(i int, s string)
	SetNull(i int)
	WriteRow() error
	// Rows returns the number of rows written.
	Rows() int64
	// Close completes the file and renames it into place.
	Close() error
	// Abort removes the temporary file; the target is left as it was.
	Abort()
}

// Formats are the formats Create writes, by name.
var Formats = []string{"csv", "fits", "parquet"}

// FileExtension returns the usual file-name extension of a format.
func FileExtension(format string) string {
	switch format {
	case "fits":
		return ".fits"
	case "parquet":
		return ".parquet"
	}
	return ".csv"
}

// Create starts a table in the format ("csv", "fits" or "parquet") at
// path. extName names the FITS extension (ignored otherwise).
func Create(path, format, extName string, cols []Column) (Writer, error) {
	switch format {
	case "csv":
		return createCSV(path, cols)
	case "fits":
		fc := make([]fitstable.WriteColumn, len(cols))
		for i, c := range cols {
			t, ok := map[Kind]fitstable.Type{Float64: fitstable.Float64, Float32: fitstable.Float32, Int64: fitstable.Int64,
				Int32: fitstable.Int32, Bool: fitstable.Logical, String: fitstable.String}[c.Kind]
			if !ok {
				return nil, fmt.Errorf("tablewrite: column %q has an unknown kind %d", c.Name, c.Kind)
			}
			fc[i] = fitstable.WriteColumn{Name: c.Name, Unit: c.Unit, Type: t, Width: c.Width}
		}
		w, err := fitstable.Create(path, extName, fc)
		if err != nil {
			return nil, err
		}
		return w, nil
	case "parquet":
		pc := make([]parquettable.WriteColumn, len(cols))
		for i, c := range cols {
			t, ok := map[Kind]parquettable.Type{Float64: parquettable.Float64, Float32: parquettable.Float32, Int64: parquettable.Int64,
				Int32: parquettable.Int32, Bool: parquettable.Bool, String: parquettable.String}[c.Kind]
			if !ok {
				return nil, fmt.Errorf("tablewrite: column %q has an unknown kind %d", c.Name, c.Kind)
			}
			pc[i] = parquettable.WriteColumn{Name: c.Name, Unit: c.Unit, Type: t}
		}
		w, err := parquettable.Create(path, pc, parquettable.WriteOptions{})
		if err != nil {
			return nil, err
		}
		return w, nil
	}
	return nil, fmt.Errorf("tablewrite: unknown format %q; use one of %s", format, strings.Join(Formats, ", "))
}

// csvWriter writes comma-separated values with a header row of column
// names. Floats have 6 significant digits (far below any measurement
// error, a third of the bytes of a full round trip), NaN is "nan", a null
// is an empty cell, booleans are 1 and 0.
type csvWriter struct {
	cols   []Column
	file   *os.File
	bw     *bufio.Writer
	path   string
	cells  [][]byte // the current row's cells, formatted
	line   []byte
	rows   int64
	err    error
	closed bool
}

func createCSV(path string, cols []Column) (*csvWriter, error) {
	if len(cols) == 0 {
		return nil, errors.New("tablewrite: a table needs at least one column")
	}
	f, err := os.CreateTemp(filepath.Dir(path), "."+filepath.Base(path)+".partial-*")
	if err != nil {
		return nil, err
	}
	w := &csvWriter{cols: cols, file: f, bw: bufio.NewWriterSize(f, 1<<20), path: path, cells: make([][]byte, len(cols))}
	for i, c := range cols {
		if i > 0 {
			w.bw.WriteByte(',')
		}
		w.bw.WriteString(quoteCSV(c.Name))
	}
	w.bw.WriteByte('\n')
	return w, nil
}

func quoteCSV(s string) string {
	if !strings.ContainsAny(s, ",\"\n\r") {
		return s
	}
	return `"` + strings.ReplaceAll(s, `"`, `""`) + `"`
}

func (w *csvWriter) col(i int, kinds ...Kind) bool {
	if i < 0 || i >= len(w.cols) {
		w.fail(fmt.Errorf("%s: row %d: there is no column %d (the table has %d)", w.path, w.rows+1, i, len(w.cols)))
		return false
	}
	for _, k := range kinds {
		if w.cols[i].Kind == k {
			return true
		}
	}
	w.fail(fmt.Errorf("%s: row %d: column %q cannot take this kind of value", w.path, w.rows+1, w.cols[i].Name))
	return false
}

func (w *csvWriter) fail(err error) {
	if w.err == nil {
		w.err = err
	}
}

func (w *csvWriter) SetFloat64(i int, v float64) {
	if !w.col(i, Float64, Float32, Int64, Int32) {
		return
	}
	if math.IsNaN(v) {
		w.cells[i] = append(w.cells[i][:0], "nan"...)
		return
	}
	w.cells[i] = strconv.AppendFloat(w.cells[i][:0], v, 'g', 6, 64)
}

func (w *csvWriter) SetInt64(i int, v int64) {
	if w.col(i, Int64, Int32) {
		w.cells[i] = strconv.AppendInt(w.cells[i][:0], v, 10)
	}
}

func (w *csvWriter) SetBool(i int, v bool) {
	if !w.col(i, Bool) {
		return
	}
	if v {
		w.cells[i] = append(w.cells[i][:0], '1')
	} else {
		w.cells[i] = append(w.cells[i][:0], '0')
	}
}

func (w *csvWriter) SetString(i int, s string) {
	if w.col(i, String) {
		w.cells[i] = append(w.cells[i][:0], quoteCSV(s)...)
	}
}

func (w *csvWriter) SetNull(i int) {
	if w.col(i, Float64, Float32, Int64, Int32, Bool, String) {
		w.cells[i] = w.cells[i][:0]
	}
}

func (w *csvWriter) WriteRow() error {
	if w.closed {
		return errors.New("tablewrite: WriteRow after Close")
	}
	if w.err != nil {
		return w.err
	}
	b := w.line[:0]
	for i, c := range w.cells {
		if i > 0 {
			b = append(b, ',')
		}
		b = append(b, c...)
		w.cells[i] = c[:0]
	}
	b = append(b, '\n')
	w.line = b
	if _, err := w.bw.Write(b); err != nil {
		w.fail(err)
		return err
	}
	w.rows++
	return nil
}

func (w *csvWriter) Rows() int64 { return w.rows }

func (w *csvWriter) Close() error {
	if w.closed {
		return errors.New("tablewrite: Close called twice")
	}
	w.closed = true
	err := w.err
	if err == nil {
		err = w.bw.Flush()
	}
	if err == nil {
		err = w.file.Close()
	} else {
		w.file.Close()
	}
	if err == nil {
		err = os.Chmod(w.file.Name(), 0o644)
	}
	if err == nil {
		err = os.Rename(w.file.Name(), w.path)
	}
	if err != nil {
		os.Remove(w.file.Name())
	}
	return err
}

func (w *csvWriter) Abort() {
	if w.closed {
		return
	}
	w.closed = true
	w.file.Close()
	os.Remove(w.file.Name())
}
