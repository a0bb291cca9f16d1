package fitstable

import (
	"errors"
	"fmt"
	"strings"
)

// Sentinel errors, for errors.Is. The errors returned by this package are
// *Error values wrapping one of them.
var (
	// ErrNotFITS: the file does not start with a FITS primary header.
	ErrNotFITS = errors.New("not a FITS file")
	// ErrTruncated: the file ends before a header, the table's rows or the
	// final 2880-byte block is complete.
	ErrTruncated = errors.New("truncated FITS file")
	// ErrFormat: a header or table breaks the standard (a missing or
	// malformed mandatory keyword, a bad TFORM, widths that do not add up,
	// no END card, NAXIS2 inconsistent with the data).
	ErrFormat = errors.New("malformed FITS file")
	// ErrNoTable: the extension asked for is not in the file, or the file
	// has no binary table.
	ErrNoTable = errors.New("no such binary table")
	// ErrUnsupported: a column or table this package does not read or
	// write (vectors, variable-length arrays, bits, complex numbers).
	ErrUnsupported = errors.New("unsupported FITS feature")
	// ErrValue: a value given to the Writer does not fit its column.
	ErrValue = errors.New("value does not fit its column")
)

// Error locates a problem in a FITS file: the file, the HDU (0 is the
// primary HDU, 1 the first extension), and, where they apply, the header
// card, the keyword, the column and the row.
type Error struct {
	File    string
	HDU     int    // -1 when the problem concerns the file as a whole
	ExtName string // EXTNAME of the HDU, when known
	Card    int    // card number in the HDU's header, from 1; 0 if none
	Keyword string
	Column  string // TTYPEn of the column, when one is concerned
	Row     int64  // row number from 1; 0 if none
	Msg     string
	Err     error // one of the sentinel errors
}

func (e *Error) Error() string {
	var b strings.Builder
	b.WriteString(e.File)
	if e.HDU >= 0 {
		if e.HDU == 0 {
			b.WriteString(": primary HDU")
		} else {
			fmt.Fprintf(&b, ": HDU %d", e.HDU)
		}
		if e.ExtName != "" {
			fmt.Fprintf(&b, " (EXTNAME '%s')", e.ExtName)
		}
	}
	if e.Card > 0 {
		fmt.Fprintf(&b, ", card %d", e.Card)
	}
	if e.Keyword != "" {
		fmt.Fprintf(&b, ", keyword %s", e.Keyword)
	}
	if e.Column != "" {
		fmt.Fprintf(&b, ", column %q", e.Column)
	}
	if e.Row > 0 {
		fmt.Fprintf(&b, ", row %d", e.Row)
	}
	b.WriteString(": ")
	b.WriteString(e.Msg)
	return b.String()
}

func (e *Error) Unwrap() error { return e.Err }
