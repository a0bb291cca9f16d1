package catalog

import (
	"errors"
	"fmt"
)

// Sentinel errors, for errors.Is. The errors returned by Read wrap them
// with the file name, the line and what would be right.
var (
	// ErrEmpty: the file holds no header row (it is empty or all comments).
	ErrEmpty = errors.New("catalog has no header row")
	// ErrNoRows: the header is there but no data row follows.
	ErrNoRows = errors.New("catalog has a header but no data rows")
	// ErrDelimiter: the file appears to use a delimiter this format does not.
	ErrDelimiter = errors.New("wrong delimiter")
	// ErrColumn: a column named by the Mapping is not in the header.
	ErrColumn = errors.New("column not found")
	// ErrUnit: a column's declared unit differs from the one required.
	ErrUnit = errors.New("unit mismatch")
	// ErrMapping: the Mapping itself is incomplete or inconsistent.
	ErrMapping = errors.New("invalid column mapping")
	// ErrFormat: the file is not a well-formed table of its format, or
	// not of the format declared.
	ErrFormat = errors.New("malformed catalog")
)

// Error is an error in a catalog file at a given line (0 when the error
// concerns the file as a whole or the mapping).
type Error struct {
	Name string // file name, or "catalog" when reading an unnamed stream
	Line int
	Msg  string
	Err  error // one of the sentinel errors above
	// Cause is the error of the FITS or Parquet reader behind Err, if any
	// (fitstable.ErrTruncated, …); errors.Is sees both.
	Cause error
}

func (e *Error) Error() string {
	if e.Line > 0 {
		return fmt.Sprintf("%s:%d: %s", e.Name, e.Line, e.Msg)
	}
	return fmt.Sprintf("%s: %s", e.Name, e.Msg)
}

func (e *Error) Unwrap() []error {
	if e.Cause != nil {
		return []error{e.Err, e.Cause}
	}
	return []error{e.Err}
}

// lineError is an internal error with a line number, turned into an *Error
// by the reader.
type lineError struct {
	line int
	msg  string
}

func (e *lineError) Error() string { return e.msg }
