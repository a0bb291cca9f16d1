package fitstable

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
)

// WriteColumn describes a column to write.
type WriteColumn struct {
	Name  string // TTYPEn; required, unique, printable ASCII
	Unit  string // TUNITn; "" writes none
	Type  Type   // Logical, Int16, Int32, Int64, Float32, Float64 or String
	Width int    // String: characters per value (≥ 1); ignored otherwise
}

// wcol is a column being written.
type wcol struct {
	WriteColumn
	code   byte
	offset int
	width  int
	null   int64 // TNULLn of integer columns
}

// Writer writes one binary table (after an empty primary HDU) row by row.
// Set the values of a row with the Set methods, then call WriteRow; a
// column not set in a row is written as null (TNULLn for integers, NaN for
// floats, the null byte for logicals, an empty string). Errors from the
// Set methods are kept and returned by the next WriteRow or Close.
type Writer struct {
	ws       io.WriteSeeker
	bw       *bufio.Writer
	cols     []wcol
	row      []byte
	blank    []byte // the all-null row
	rows     int64
	naxis2At int64 // offset of NAXIS2's value field
	dataAt   int64 // offset of the first row
	err      error
	closed   bool

	name string // the file in messages: its path, or "FITS writer"

	// Set by Create.
	file       *os.File
	path, temp string
}

// nullOf gives the TNULLn each integer type is written with: the most
// negative value, which catalogs rarely hold.
var nullOf = map[Type]int64{Int16: math.MinInt16, Int32: math.MinInt32, Int64: math.MinInt64}

var codeOf = map[Type]byte{Logical: 'L', Int16: 'I', Int32: 'J', Int64: 'K', Float32: 'E', Float64: 'D', String: 'A'}

// NewWriter writes the primary header and the table's header to ws and
// returns a Writer for the rows. Close fixes up NAXIS2 by seeking back,
// and does not close ws.
func NewWriter(ws io.WriteSeeker, extName string, cols []WriteColumn) (*Writer, error) {
	return newWriter(ws, "FITS writer", extName, cols)
}

func newWriter(ws io.WriteSeeker, name, extName string, cols []WriteColumn) (*Writer, error) {
	w := &Writer{ws: ws, name: name}
	hdr, err := w.layout(extName, cols)
	if err != nil {
		return nil, err
	}
	start, err := ws.Seek(0, io.SeekCurrent)
	if err != nil {
		return nil, err
	}
	w.naxis2At += start
	w.dataAt = start + int64(len(hdr))
	w.bw = bufio.NewWriterSize(ws, 1<<20)
	if _, err := w.bw.Write(hdr); err != nil {
		return nil, err
	}
	w.row = make([]byte, len(w.blank))
	copy(w.row, w.blank)
	return w, nil
}

// Create writes a table to a temporary file beside path; Close renames it
// to path (replacing any file there) once it is complete, and Abort, or a
// failed Close, removes it. So path holds the whole table or is left as it
// was.
func Create(path, extName string, cols []WriteColumn) (*Writer, error) {
	f, err := os.CreateTemp(filepath.Dir(path), "."+filepath.Base(path)+".partial-*")
	if err != nil {
		return nil, err
	}
	w, err := newWriter(f, path, extName, cols)
	if err != nil {
		f.Close()
		os.Remove(f.Name())
		return nil, err
	}
	w.file, w.path, w.temp = f, path, f.Name()
	return w, nil
}

func (w *Writer) valueErr(column string, row int64, format string, args ...any) error {
	return &Error{File: w.name, HDU: 1, Column: column, Row: row, Err: ErrValue, Msg: fmt.Sprintf(format, args...)}
}

// layout checks the columns and builds both headers.
func (w *Writer) layout(extName string, cols []WriteColumn) ([]byte, error) {
	bad := func(column, format string, args ...any) error {
		return &Error{File: w.name, HDU: 1, Column: column, Err: ErrUnsupported, Msg: fmt.Sprintf(format, args...)}
	}
	if len(cols) == 0 || len(cols) > 999 {
		return nil, bad("", "a binary table has 1 to 999 columns, not %d", len(cols))
	}
	seen := map[string]bool{}
	offset := 0
	for _, c := range cols {
		if c.Name == "" {
			return nil, bad("", "column %d has no name", len(w.cols)+1)
		}
		if seen[strings.ToUpper(c.Name)] {
			return nil, bad(c.Name, "the column name appears twice (FITS readers compare names without regard to case)")
		}
		seen[strings.ToUpper(c.Name)] = true
		code, ok := codeOf[c.Type]
		if !ok {
			return nil, bad(c.Name, "type %s cannot be written; use Logical, Int16, Int32, Int64, Float32, Float64 or String", c.Type)
		}
		width := map[byte]int{'L': 1, 'I': 2, 'J': 4, 'K': 8, 'E': 4, 'D': 8}[code]
		if code == 'A' {
			if c.Width < 1 {
				return nil, bad(c.Name, "a String column needs a Width of at least 1 character")
			}
			width = c.Width
		}
		w.cols = append(w.cols, wcol{WriteColumn: c, code: code, offset: offset, width: width, null: nullOf[c.Type]})
		offset += width
	}
	if offset > maxRowBytes {
		return nil, bad("", "a row of %d bytes is more than this package reads back (%d)", offset, maxRowBytes)
	}
	w.blank = make([]byte, offset)
	for i := range w.cols {
		w.setNull(w.blank, &w.cols[i])
	}

	var h headerBuilder
	h.logical("SIMPLE", true, "conforms to FITS Standard 4.0")
	h.int("BITPIX", 8, "")
	h.int("NAXIS", 0, "no primary data")
	h.logical("EXTEND", true, "extensions follow")
	h.end()
	h.cards = append(h.cards, card("XTENSION", quote("BINTABLE"), "binary table"))
	h.int("BITPIX", 8, "")
	h.int("NAXIS", 2, "")
	h.int("NAXIS1", int64(offset), "bytes per row")
	w.naxis2At = int64(len(h.cards))*CardSize + 10
	h.int("NAXIS2", 0, "rows")
	h.int("PCOUNT", 0, "")
	h.int("GCOUNT", 1, "")
	h.int("TFIELDS", int64(len(cols)), "columns")
	for i, c := range w.cols {
		n := strconv.Itoa(i + 1)
		if err := h.str("TTYPE"+n, c.Name, ""); err != nil {
			return nil, bad(c.Name, "%v", err)
		}
		form := string(c.code)
		if c.code == 'A' {
			form = strconv.Itoa(c.width) + "A"
		}
		h.str("TFORM"+n, form, c.Type.String())
		if c.Unit != "" {
			if err := h.str("TUNIT"+n, c.Unit, ""); err != nil {
				return nil, bad(c.Name, "unit: %v", err)
			}
		}
		if c.Type.IsInteger() {
			h.int("TNULL"+n, c.null, "no value")
		}
	}
	if extName != "" {
		if err := h.str("EXTNAME", extName, ""); err != nil {
			return nil, bad("", "EXTNAME: %v", err)
		}
	}
	h.end()
	return []byte(strings.Join(h.cards, "")), nil
}

// headerBuilder collects 80-character cards, padding each header to whole
// blocks when it ends.
type headerBuilder struct{ cards []string }

func card(key, value, comment string) string {
	s := fmt.Sprintf("%-8s= %s", key, value)
	if comment != "" {
		s += " / " + comment
	}
	if len(s) > CardSize {
		s = s[:CardSize]
	}
	return s + strings.Repeat(" ", CardSize-len(s))
}

func (h *headerBuilder) int(key string, v int64, comment string) {
	h.cards = append(h.cards, card(key, fmt.Sprintf("%20d", v), comment))
}

func (h *headerBuilder) logical(key string, v bool, comment string) {
	s := "F"
	if v {
		s = "T"
	}
	h.cards = append(h.cards, card(key, fmt.Sprintf("%20s", s), comment))
}

// quote makes a FITS string value: quotes doubled, padded to at least
// eight characters inside the quotes (§4.2.1.1).
func quote(s string) string {
	s = strings.ReplaceAll(s, "'", "''")
	if len(s) < 8 {
		s += strings.Repeat(" ", 8-len(s))
	}
	return "'" + s + "'"
}

func (h *headerBuilder) str(key, v, comment string) error {
	for _, r := range v {
		if r < 0x20 || r > 0x7e {
			return fmt.Errorf("%q holds a character that is not printable ASCII, which a FITS header cannot hold", v)
		}
	}
	q := quote(v)
	if 10+len(q) > CardSize {
		return fmt.Errorf("%q is too long for one header card (at most 68 characters, quotes counted twice)", v)
	}
	h.cards = append(h.cards, card(key, q, comment))
	return nil
}

func (h *headerBuilder) end() {
	h.cards = append(h.cards, "END"+strings.Repeat(" ", CardSize-3))
	for len(h.cards)%(BlockSize/CardSize) != 0 {
		h.cards = append(h.cards, strings.Repeat(" ", CardSize))
	}
}

func (w *Writer) setNull(row []byte, c *wcol) {
	b := row[c.offset : c.offset+c.width]
	switch c.code {
	case 'L':
		b[0] = 0
	case 'I':
		be.PutUint16(b, uint16(int16(c.null)))
	case 'J':
		be.PutUint32(b, uint32(int32(c.null)))
	case 'K':
		be.PutUint64(b, uint64(c.null))
	case 'E':
		be.PutUint32(b, math.Float32bits(float32(math.NaN())))
	case 'D':
		be.PutUint64(b, math.Float64bits(math.NaN()))
	case 'A':
		for i := range b {
			b[i] = 0
		}
	}
}

func (w *Writer) fail(err error) {
	if w.err == nil {
		w.err = err
	}
}

func (w *Writer) col(i int, want string) *wcol {
	if i < 0 || i >= len(w.cols) {
		w.fail(w.valueErr("", w.rows+1, "there is no column %d (the table has %d)", i, len(w.cols)))
		return nil
	}
	c := &w.cols[i]
	if !strings.Contains(want, string(c.code)) {
		w.fail(w.valueErr(c.Name, w.rows+1, "column of type %s cannot take a %s value", c.Type, map[string]string{"EDIJK": "number", "IJK": "integer", "L": "logical", "A": "string"}[want]))
		return nil
	}
	return c
}

// SetFloat64 sets float column i (Float32, Float64) of the current row; NaN
// is the null value. An integer column takes a float that is a whole number
// in its range.
func (w *Writer) SetFloat64(i int, v float64) {
	c := w.col(i, "EDIJK")
	if c == nil {
		return
	}
	b := w.row[c.offset : c.offset+c.width]
	switch c.code {
	case 'E':
		be.PutUint32(b, math.Float32bits(float32(v)))
	case 'D':
		be.PutUint64(b, math.Float64bits(v))
	default:
		if math.IsNaN(v) {
			w.setNull(w.row, c)
			return
		}
		if v != math.Trunc(v) || math.Abs(v) > 1<<62 {
			w.fail(w.valueErr(c.Name, w.rows+1, "%g is not a whole number, and the column is of type %s", v, c.Type))
			return
		}
		w.SetInt64(i, int64(v))
	}
}

// SetInt64 sets integer column i of the current row. The value must lie in
// the column's range and differ from its TNULLn (the type's most negative
// value).
func (w *Writer) SetInt64(i int, v int64) {
	c := w.col(i, "IJK")
	if c == nil {
		return
	}
	lo, hi := int64(math.MinInt64), int64(math.MaxInt64)
	switch c.code {
	case 'I':
		lo, hi = math.MinInt16, math.MaxInt16
	case 'J':
		lo, hi = math.MinInt32, math.MaxInt32
	}
	if v <= lo || v > hi {
		w.fail(w.valueErr(c.Name, w.rows+1, "%d is outside the range of a %s column (%d to %d; %d is its null value)", v, c.Type, lo+1, hi, lo))
		return
	}
	b := w.row[c.offset : c.offset+c.width]
	switch c.code {
	case 'I':
		be.PutUint16(b, uint16(int16(v)))
	case 'J':
		be.PutUint32(b, uint32(int32(v)))
	case 'K':
		be.PutUint64(b, uint64(v))
	}
}

// SetBool sets logical column i of the current row.
func (w *Writer) SetBool(i int, v bool) {
	c := w.col(i, "L")
	if c == nil {
		return
	}
	w.row[c.offset] = 'F'
	if v {
		w.row[c.offset] = 'T'
	}
}

// SetString sets string column i of the current row. The string must be
// printable ASCII and fit the column's width; a shorter one is ended by
// NUL bytes (§7.3.3.1), as astropy writes them, so that readers which keep
// trailing spaces read it back unchanged.
func (w *Writer) SetString(i int, s string) {
	c := w.col(i, "A")
	if c == nil {
		return
	}
	if len(s) > c.width {
		w.fail(w.valueErr(c.Name, w.rows+1, "%q has %d characters; the column holds %d", s, len(s), c.width))
		return
	}
	for j := 0; j < len(s); j++ {
		if s[j] < 0x20 || s[j] > 0x7e {
			w.fail(w.valueErr(c.Name, w.rows+1, "%q holds a character that is not printable ASCII", s))
			return
		}
	}
	b := w.row[c.offset : c.offset+c.width]
	n := copy(b, s)
	for j := n; j < len(b); j++ {
		b[j] = 0
	}
}

// SetNull sets column i of the current row to its null value.
func (w *Writer) SetNull(i int) {
	if i < 0 || i >= len(w.cols) {
		w.fail(w.valueErr("", w.rows+1, "there is no column %d (the table has %d)", i, len(w.cols)))
		return
	}
	w.setNull(w.row, &w.cols[i])
}

// WriteRow writes the current row and starts the next with every column
// null.
func (w *Writer) WriteRow() error {
	if w.closed {
		return errors.New("fitstable: WriteRow after Close")
	}
	if w.err != nil {
		return w.err
	}
	if _, err := w.bw.Write(w.row); err != nil {
		w.fail(err)
		return err
	}
	w.rows++
	copy(w.row, w.blank)
	return nil
}

// Rows returns the number of rows written.
func (w *Writer) Rows() int64 { return w.rows }

// Close pads the data to a whole block, writes NAXIS2 into the header and,
// for a Writer from Create, renames the file into place. If any row failed,
// it returns that error and (for Create) removes the temporary file.
func (w *Writer) Close() error {
	if w.closed {
		return errors.New("fitstable: Close called twice")
	}
	w.closed = true
	err := w.err
	if err == nil {
		err = w.finish()
	}
	if w.file == nil {
		return err
	}
	if err != nil {
		w.file.Close()
		os.Remove(w.temp)
		return err
	}
	if err := w.file.Close(); err != nil {
		os.Remove(w.temp)
		return err
	}
	if err := os.Chmod(w.temp, 0o644); err != nil {
		os.Remove(w.temp)
		return err
	}
	if err := os.Rename(w.temp, w.path); err != nil {
		os.Remove(w.temp)
		return err
	}
	return nil
}

func (w *Writer) finish() error {
	data := w.rows * int64(len(w.blank))
	if _, err := w.bw.Write(make([]byte, padding(data))); err != nil {
		return err
	}
	if err := w.bw.Flush(); err != nil {
		return err
	}
	if _, err := w.ws.Seek(w.naxis2At, io.SeekStart); err != nil {
		return err
	}
	if _, err := fmt.Fprintf(w.ws, "%20d", w.rows); err != nil {
		return err
	}
	_, err := w.ws.Seek(w.dataAt+data+padding(data), io.SeekStart)
	return err
}

// Abort discards the table: for a Writer from Create, the temporary file is
// removed and path is left as it was.
func (w *Writer) Abort() {
	if w.closed {
		return
	}
	w.closed = true
	if w.file != nil {
		w.file.Close()
		os.Remove(w.temp)
	}
}
