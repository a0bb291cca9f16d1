// Package parquettable reads and writes flat tables in Parquet files (the
// column-oriented format of data-processing tools, increasingly used for
// large catalogs) through github.com/parquet-go/parquet-go, in bounded
// memory: the Reader decodes one row group at a time, and of it only the
// columns asked for, a batch of rows at a time; the Writer flushes a row
// group every WriteOptions.RowGroupRows rows.
//
// Only flat tables are handled: each top-level field a column of booleans,
// integers (8 to 64 bits, signed or unsigned), floats, doubles or UTF-8
// strings, required or optional (nullable). Nested, repeated and other
// columns (timestamps, decimals, binary) are described but cannot be read,
// with an error naming them.
//
// Units: Parquet has no place for a column's unit. The Writer records them
// in the file's key/value metadata under the key "units", a JSON object
// from column name to unit, and the Reader reports them from there.
package parquettable

import (
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"

	"github.com/parquet-go/parquet-go"
	"github.com/parquet-go/parquet-go/format"
)

// UnitsKey is the key/value metadata entry that holds the columns' units.
const UnitsKey = "units"

// Sentinel errors, for errors.Is.
var (
	// ErrFormat: the file is not a readable Parquet file.
	ErrFormat = errors.New("malformed Parquet file")
	// ErrUnsupported: a column this package does not read or write.
	ErrUnsupported = errors.New("unsupported Parquet column")
	// ErrValue: a value given to the Writer does not fit its column.
	ErrValue = errors.New("value does not fit its column")
)

// Error locates a problem in a Parquet file.
type Error struct {
	File     string
	RowGroup int // from 1; 0 if none
	Column   string
	Row      int64 // from 1; 0 if none
	Msg      string
	Err      error
}

func (e *Error) Error() string {
	s := e.File
	if e.RowGroup > 0 {
		s += fmt.Sprintf(": row group %d", e.RowGroup)
	}
	if e.Column != "" {
		s += fmt.Sprintf(", column %q", e.Column)
	}
	if e.Row > 0 {
		s += fmt.Sprintf(", row %d", e.Row)
	}
	return s + ": " + e.Msg
}

func (e *Error) Unwrap() error { return e.Err }

// Type is the value type of a column.
type Type int

const (
	Unsupported Type = iota
	Bool
	Int8
	Int16
	Int32
	Int64
	Uint8
	Uint16
	Uint32
	Uint64
	Float32
	Float64
	String
)

var typeNames = [...]string{Unsupported: "unsupported", Bool: "bool", Int8: "int8", Int16: "int16", Int32: "int32",
	Int64: "int64", Uint8: "uint8", Uint16: "uint16", Uint32: "uint32", Uint64: "uint64",
	Float32: "float32", Float64: "float64", String: "string"}

// String names the type as ECSV datatypes do.
func (t Type) String() string {
	if t >= 0 && int(t) < len(typeNames) {
		return typeNames[t]
	}
	return "type " + strconv.Itoa(int(t))
}

// IsNumeric reports whether t is an integer or floating-point type.
func (t Type) IsNumeric() bool { return t >= Int8 && t <= Float64 }

// Column describes one top-level field.
type Column struct {
	Index       int // position among the top-level fields, from 0
	Name        string
	Unit        string // from the "units" metadata; "" when none
	Type        Type
	Optional    bool   // nullable
	Unsupported string // why the column cannot be read; "" when it can
	leaf        int    // leaf column index in the file
}

// Datatype names the column's values as ECSV datatypes do, or describes
// why it cannot be read.
func (c Column) Datatype() string {
	if c.Type == Unsupported {
		return c.Unsupported
	}
	return c.Type.String()
}

// batchRows is how many rows of each selected column are decoded at once.
const batchRows = 4096

// Reader reads the selected columns of a Parquet file row by row.
type Reader struct {
	name string
	file *parquet.File
	cols []Column
	sel  []int // selected columns
	// slot[i] is the position of column i in sel, or -1.
	slot   []int
	state  []colState
	rg     int // row groups opened
	rgLeft int64
	batch  int
	pos    int
	row    int64
	err    error
	done   bool
}

type colState struct {
	pages  parquet.Pages
	values parquet.ValueReader
	buf    []parquet.Value
}

// Open reads the footer of the Parquet file in r (size bytes) and describes
// its columns. name is used in messages. No column is selected yet; call
// Select before Next.
func Open(r io.ReaderAt, size int64, name string) (rd *Reader, err error) {
	if name == "" {
		name = "Parquet file"
	}
	defer func() {
		// The library may panic on some damaged files; a damaged file is
		// the user's input, so it gets an error, not a crash.
		if p := recover(); p != nil {
			rd, err = nil, &Error{File: name, Err: ErrFormat, Msg: fmt.Sprintf("cannot read the file's metadata: %v", p)}
		}
	}()
	f, err := parquet.OpenFile(r, size, parquet.SkipPageIndex(true), parquet.SkipBloomFilters(true), parquet.ReadBufferSize(256<<10))
	if err != nil {
		return nil, &Error{File: name, Err: ErrFormat, Msg: fmt.Sprintf("not a readable Parquet file: %v", err)}
	}
	rd = &Reader{name: name, file: f}
	units := map[string]string{}
	if s, ok := f.Lookup(UnitsKey); ok {
		if err := json.Unmarshal([]byte(s), &units); err != nil {
			return nil, &Error{File: name, Err: ErrFormat, Msg: fmt.Sprintf("the %q metadata is not a JSON object from column name to unit: %v", UnitsKey, err)}
		}
	}
	schema := f.Schema()
	for i, field := range schema.Fields() {
		c := Column{Index: i, Name: field.Name(), Unit: units[field.Name()], Optional: field.Optional(), leaf: -1}
		switch {
		case !field.Leaf():
			c.Unsupported = "a nested group of fields; only flat columns are read"
		case field.Repeated():
			c.Unsupported = "a repeated (list) field; only one value per row is read"
		default:
			leaf, ok := schema.Lookup(field.Name())
			if !ok {
				c.Unsupported = "not found among the file's leaf columns"
				break
			}
			c.leaf = leaf.ColumnIndex
			c.Type, c.Unsupported = typeOf(field.Type())
		}
		rd.cols = append(rd.cols, c)
	}
	rd.slot = make([]int, len(rd.cols))
	for i := range rd.slot {
		rd.slot[i] = -1
	}
	return rd, nil
}

// typeOf maps a Parquet physical and logical type to a Type.
func typeOf(t parquet.Type) (Type, string) {
	lt := t.LogicalType()
	var logical format.LogicalTypeValue
	if lt != nil {
		logical = lt.Value
	}
	switch t.Kind() {
	case parquet.Boolean:
		return Bool, ""
	case parquet.Float:
		return Float32, ""
	case parquet.Double:
		return Float64, ""
	case parquet.Int32, parquet.Int64:
		if logical == nil {
			if t.Kind() == parquet.Int32 {
				return Int32, ""
			}
			return Int64, ""
		}
		if it, ok := logical.(*format.IntType); ok {
			switch {
			case it.BitWidth == 8 && it.IsSigned:
				return Int8, ""
			case it.BitWidth == 16 && it.IsSigned:
				return Int16, ""
			case it.BitWidth == 32 && it.IsSigned:
				return Int32, ""
			case it.BitWidth == 64 && it.IsSigned:
				return Int64, ""
			case it.BitWidth == 8:
				return Uint8, ""
			case it.BitWidth == 16:
				return Uint16, ""
			case it.BitWidth == 32:
				return Uint32, ""
			case it.BitWidth == 64:
				return Uint64, ""
			}
		}
		return Unsupported, fmt.Sprintf("an integer with logical type %s; only plain integers are read", lt)
	case parquet.ByteArray:
		if _, ok := logical.(*format.StringType); ok {
			return String, ""
		}
		return Unsupported, "binary data without the STRING logical type"
	}
	return Unsupported, fmt.Sprintf("physical type %s; only booleans, integers, floats, doubles and strings are read", t.Kind())
}

// Columns returns the file's top-level fields.
func (rd *Reader) Columns() []Column { return rd.cols }

// Rows returns the number of rows in the file.
func (rd *Reader) Rows() int64 { return rd.file.NumRows() }

// RowGroups returns the number of row groups in the file.
func (rd *Reader) RowGroups() int { return len(rd.file.RowGroups()) }

// ColumnIndex returns the index of the column with the name, or -1.
func (rd *Reader) ColumnIndex(name string) int {
	for i, c := range rd.cols {
		if c.Name == name {
			return i
		}
	}
	return -1
}

// Select chooses the columns Next decodes; only these may be read. Each
// must be readable.
func (rd *Reader) Select(columns []int) error {
	if rd.rg > 0 {
		return errors.New("parquettable: Select after Next")
	}
	rd.sel = rd.sel[:0]
	for i := range rd.slot {
		rd.slot[i] = -1
	}
	for _, i := range columns {
		if i < 0 || i >= len(rd.cols) {
			return fmt.Errorf("parquettable: no column %d", i)
		}
		c := rd.cols[i]
		if c.Type == Unsupported {
			return &Error{File: rd.name, Column: c.Name, Err: ErrUnsupported, Msg: "cannot be read: " + c.Unsupported}
		}
		if rd.slot[i] >= 0 {
			continue
		}
		rd.slot[i] = len(rd.sel)
		rd.sel = append(rd.sel, i)
	}
	rd.state = make([]colState, len(rd.sel))
	for k := range rd.state {
		rd.state[k].buf = make([]parquet.Value, batchRows)
	}
	return nil
}

// Row returns the number of the current row, from 1.
func (rd *Reader) Row() int64 { return rd.row }

// Err returns the error that stopped Next, or nil after the last row.
func (rd *Reader) Err() error { return rd.err }

// Next advances to the next row, reporting false after the last one or on
// an error (see Err).
func (rd *Reader) Next() (ok bool) {
	if rd.done {
		return false
	}
	rd.pos++
	if rd.pos < rd.batch {
		rd.row++
		return true
	}
	defer func() {
		if p := recover(); p != nil {
			rd.fail(&Error{File: rd.name, RowGroup: rd.rg, Row: rd.row + 1, Err: ErrFormat, Msg: fmt.Sprintf("cannot decode the data: %v", p)})
			ok = false
		}
	}()
	for rd.rgLeft == 0 {
		groups := rd.file.RowGroups()
		if rd.rg == len(groups) {
			rd.done = true
			rd.closePages()
			return false
		}
		rd.closePages()
		g := groups[rd.rg]
		rd.rg++
		rd.rgLeft = g.NumRows()
		chunks := g.ColumnChunks()
		for k, ci := range rd.sel {
			rd.state[k].pages = chunks[rd.cols[ci].leaf].Pages()
			rd.state[k].values = nil
		}
	}
	n := int(min(int64(batchRows), rd.rgLeft))
	for k := range rd.state {
		if err := rd.fill(k, n); err != nil {
			rd.fail(err)
			return false
		}
	}
	rd.rgLeft -= int64(n)
	rd.batch, rd.pos = n, 0
	rd.row++
	return true
}

func (rd *Reader) fail(err error) {
	rd.err = err
	rd.done = true
	rd.closePages()
}

func (rd *Reader) closePages() {
	for k := range rd.state {
		if rd.state[k].pages != nil {
			rd.state[k].pages.Close()
			rd.state[k].pages = nil
		}
		rd.state[k].values = nil
	}
}

// fill decodes the next n values of selected column k, across pages.
func (rd *Reader) fill(k, n int) error {
	s := &rd.state[k]
	c := rd.cols[rd.sel[k]]
	got := 0
	for got < n {
		if s.values == nil {
			page, err := s.pages.ReadPage()
			if err != nil {
				msg := fmt.Sprintf("the column chunk ends after %d of the row group's rows: %v", rd.row+int64(got), err)
				if err != io.EOF {
					msg = fmt.Sprintf("cannot read a page: %v", err)
				}
				return &Error{File: rd.name, RowGroup: rd.rg, Column: c.Name, Row: rd.row + int64(got) + 1, Err: ErrFormat, Msg: msg}
			}
			s.values = page.Values()
		}
		m, err := s.values.ReadValues(s.buf[got:n])
		got += m
		if err == io.EOF {
			s.values = nil
			continue
		}
		if err != nil {
			return &Error{File: rd.name, RowGroup: rd.rg, Column: c.Name, Row: rd.row + int64(got) + 1, Err: ErrFormat, Msg: fmt.Sprintf("cannot decode values: %v", err)}
		}
	}
	return nil
}

// value returns the current value of column i, which must be selected.
func (rd *Reader) value(i int) (parquet.Value, *Column) {
	c := &rd.cols[i]
	k := rd.slot[i]
	if k < 0 {
		panic(fmt.Sprintf("parquettable: column %q was not selected", c.Name))
	}
	return rd.state[k].buf[rd.pos], c
}

// Float64 returns the current value of numeric column i as a float. null
// is true, and the value NaN, for a null, for a NaN, and for a column that
// is not numeric. Column i must be selected.
func (rd *Reader) Float64(i int) (v float64, null bool) {
	val, c := rd.value(i)
	if val.IsNull() {
		return math.NaN(), true
	}
	switch c.Type {
	case Float32:
		v = float64(val.Float())
	case Float64:
		v = val.Double()
	case Int8, Int16, Int32:
		v = float64(val.Int32())
	case Int64:
		v = float64(val.Int64())
	case Uint8, Uint16, Uint32:
		v = float64(val.Uint32())
	case Uint64:
		v = float64(val.Uint64())
	default:
		return math.NaN(), true
	}
	if math.IsNaN(v) {
		return v, true
	}
	return v, false
}

// Int64 returns the current value of integer column i. null is true for a
// null, a uint64 above 2^63−1, and a column that is not an integer.
func (rd *Reader) Int64(i int) (v int64, null bool) {
	val, c := rd.value(i)
	if val.IsNull() {
		return 0, true
	}
	switch c.Type {
	case Int8, Int16, Int32:
		return int64(val.Int32()), false
	case Int64:
		return val.Int64(), false
	case Uint8, Uint16, Uint32:
		return int64(val.Uint32()), false
	case Uint64:
		u := val.Uint64()
		if u > math.MaxInt64 {
			return 0, true
		}
		return int64(u), false
	}
	return 0, true
}

// Bool returns the current value of boolean column i.
func (rd *Reader) Bool(i int) (v, null bool) {
	val, c := rd.value(i)
	if val.IsNull() || c.Type != Bool {
		return false, true
	}
	return val.Boolean(), false
}

// String returns the current value of string column i ("" for a null or
// another type).
func (rd *Reader) String(i int) string {
	val, c := rd.value(i)
	if val.IsNull() || c.Type != String {
		return ""
	}
	return string(val.ByteArray())
}

// IsNull reports whether the current value of column i is null.
func (rd *Reader) IsNull(i int) bool {
	val, _ := rd.value(i)
	return val.IsNull()
}

// Format returns the current value of column i as text ("" for a null).
func (rd *Reader) Format(i int) string {
	val, c := rd.value(i)
	if val.IsNull() {
		return ""
	}
	switch c.Type {
	case Bool:
		return strconv.FormatBool(val.Boolean())
	case String:
		return string(val.ByteArray())
	case Uint64:
		return strconv.FormatUint(val.Uint64(), 10)
	case Int8, Int16, Int32, Int64, Uint8, Uint16, Uint32:
		n, _ := rd.Int64(i)
		return strconv.FormatInt(n, 10)
	}
	v, _ := rd.Float64(i)
	return strconv.FormatFloat(v, 'g', -1, 64)
}
