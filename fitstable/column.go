package fitstable

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// Type is the value type of a column as read: the TFORM code together with
// the TSCAL/TZERO conventions for unsigned integers (Standard 4.0 Table 19).
type Type int

const (
	// Unsupported: a column that cannot be read as one value per row
	// (Column.Unsupported says why).
	Unsupported Type = iota
	Logical          // L
	Int8             // B with TZERO = -128
	Uint8            // B
	Int16            // I
	Uint16           // I with TZERO = 32768
	Int32            // J
	Uint32           // J with TZERO = 2^31
	Int64            // K
	Uint64           // K with TZERO = 2^63
	Float32          // E
	Float64          // D
	String           // A: a fixed-width character string
)

var typeNames = [...]string{
	Unsupported: "unsupported", Logical: "bool",
	Int8: "int8", Uint8: "uint8", Int16: "int16", Uint16: "uint16",
	Int32: "int32", Uint32: "uint32", Int64: "int64", Uint64: "uint64",
	Float32: "float32", Float64: "float64", String: "string",
}

// String names the type as ECSV datatypes do ("float64", "uint16", "bool").
func (t Type) String() string {
	if t >= 0 && int(t) < len(typeNames) {
		return typeNames[t]
	}
	return "type " + strconv.Itoa(int(t))
}

// IsInteger reports whether t is one of the integer types.
func (t Type) IsInteger() bool { return t >= Int8 && t <= Uint64 }

// IsNumeric reports whether t is an integer or floating-point type.
func (t Type) IsNumeric() bool { return t >= Int8 && t <= Float64 }

// Column describes one column of a binary table.
type Column struct {
	Index  int    // position in the table, from 0 (TTYPEn has n = Index+1)
	Name   string // TTYPEn ("" when the header gives none)
	Unit   string // TUNITn ("" when the header gives none)
	Form   string // TFORMn as written
	Code   byte   // the TFORM type code: 'L', 'B', 'I', 'J', 'K', 'E', 'D', 'A', …
	Repeat int64  // the TFORM repeat count
	Type   Type
	// Scaled is true when TSCALn or TZEROn apply beyond the unsigned
	// conventions: values are then zero + scale × stored, read as floats.
	Scaled      bool
	Scale, Zero float64 // TSCALn and TZEROn (1 and 0 when absent)
	HasNull     bool    // TNULLn is given (integer columns only)
	Null        int64   // TNULLn: the stored integer meaning "no value"
	Offset      int     // byte offset in the row
	Width       int     // bytes in the row
	Unsupported string  // why the column cannot be read; "" when it can
}

// Datatype names the column's values as ECSV datatypes do: "float64" for a
// scaled integer (read as a float), "string", "bool", or the integer or
// float type; for an unsupported column, a description of it.
func (c Column) Datatype() string {
	switch {
	case c.Type == Unsupported:
		return c.Unsupported
	case c.Scaled:
		return "float64"
	}
	return c.Type.String()
}

// Readable reports whether the column's values can be read.
func (c Column) Readable() bool { return c.Type != Unsupported }

// tformWidth gives the bytes per element of each TFORM type code
// (Standard 4.0 Table 18); X (bits) is handled apart.
var tformWidth = map[byte]int64{
	'L': 1, 'B': 1, 'I': 2, 'J': 4, 'K': 8, 'A': 1, 'E': 4, 'D': 8,
	'C': 8, 'M': 16, 'P': 8, 'Q': 16,
}

// parseTFORM reads "rTa": an optional repeat count r, the type code T and
// anything after it (for P and Q, the element type and maximum length).
// It returns the code, the repeat count and the width in bytes.
func parseTFORM(form string) (code byte, repeat, width int64, err error) {
	s := strings.TrimSpace(form)
	i := 0
	for i < len(s) && s[i] >= '0' && s[i] <= '9' {
		i++
	}
	repeat = 1
	if i > 0 {
		repeat, err = strconv.ParseInt(s[:i], 10, 64)
		if err != nil || repeat > math.MaxInt32 {
			return 0, 0, 0, fmt.Errorf("TFORM %q has a repeat count too large to be real", form)
		}
	}
	if i == len(s) {
		return 0, 0, 0, fmt.Errorf("TFORM %q has no type code; it must be [repeat]code with code one of L X B I J K A E D C M P Q", form)
	}
	code = s[i]
	if code == 'X' {
		return code, repeat, (repeat + 7) / 8, nil
	}
	w, ok := tformWidth[code]
	if !ok {
		return 0, 0, 0, fmt.Errorf("TFORM %q has type code %q; it must be one of L X B I J K A E D C M P Q", form, string(code))
	}
	return code, repeat, repeat * w, nil
}

// describe fills the column's Type (or the reason it is unsupported) from
// its code, repeat count and scaling.
func (c *Column) describe(tzeroRaw string) {
	if c.Repeat == 0 {
		c.Unsupported = fmt.Sprintf("TFORM %q holds no value (repeat count 0)", c.Form)
		return
	}
	switch c.Code {
	case 'A':
		c.Type = String
		return
	case 'P', 'Q':
		c.Unsupported = fmt.Sprintf("TFORM %q is a variable-length array (heap descriptor); only one value per row is read", c.Form)
		return
	case 'X':
		c.Unsupported = fmt.Sprintf("TFORM %q is a bit array; only logical, integer, float and string columns are read", c.Form)
		return
	case 'C', 'M':
		c.Unsupported = fmt.Sprintf("TFORM %q holds complex numbers; only logical, integer, float and string columns are read", c.Form)
		return
	}
	if c.Repeat != 1 {
		c.Unsupported = fmt.Sprintf("TFORM %q is a vector column (%d values per row); only one value per row is read", c.Form, c.Repeat)
		return
	}
	unsigned := c.Scale == 1
	switch c.Code {
	case 'L':
		c.Type = Logical
	case 'B':
		c.Type = Uint8
		if unsigned && tzeroRaw != "" && c.Zero == -128 {
			c.Type, c.Zero = Int8, 0
		}
	case 'I':
		c.Type = Int16
		if unsigned && tzeroRaw != "" && c.Zero == 32768 {
			c.Type, c.Zero = Uint16, 0
		}
	case 'J':
		c.Type = Int32
		if unsigned && tzeroRaw != "" && c.Zero == 2147483648 {
			c.Type, c.Zero = Uint32, 0
		}
	case 'K':
		c.Type = Int64
		// 2^63 is exact in a float64, but so is every integer rounding to it:
		// compare the digits as written.
		if unsigned && strings.TrimLeft(tzeroRaw, "+") == "9223372036854775808" {
			c.Type, c.Zero = Uint64, 0
		}
	case 'E':
		c.Type = Float32
	case 'D':
		c.Type = Float64
	}
	if c.Code != 'L' && (c.Scale != 1 || c.Zero != 0) {
		c.Scaled = true
	}
}
