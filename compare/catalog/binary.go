package catalog

import (
	"bufio"
	"crypto/sha256"
	"fmt"
	"io"
	"os"
	"strconv"
	"strings"

	"spinpop/fitstable"
	"spinpop/parquettable"
)

// Binary tables: FITS (streamed, like text) and Parquet (random access, one
// row group at a time). Both give typed values, so no text is parsed: a
// null (TNULLn, NaN, a Parquet null) is a missing value and the row is
// rejected with ReasonMissing, like an empty CSV cell. Rejections carry
// the row number (from 1) in Line.

const (
	fitsMagic    = "SIMPLE  ="
	parquetMagic = "PAR1"
)

// binaryRow is the rowSource of FITS and Parquet rows.
type binaryRow struct {
	float func(i int) (float64, bool)
}

func (b *binaryRow) value(i int) (float64, Reason, bool) { return binaryValue(b.float(i)) }

// rawText renders the mapped values of a row for a Rejection: what "the
// whole line" is for text.
func rawText(p *plan, format func(i int) string) string {
	var sb strings.Builder
	for k, f := range p.refs() {
		if k > 0 {
			sb.WriteString(", ")
		}
		sb.WriteString(f.column)
		sb.WriteByte('=')
		sb.WriteString(format(f.index))
	}
	return sb.String()
}

// binaryErr turns an error of the FITS or Parquet reader into an *Error.
func (rd *reader) binaryErr(err error) error {
	msg := strings.TrimPrefix(err.Error(), rd.name+": ")
	return &Error{Name: rd.name, Msg: msg, Err: ErrFormat, Cause: err}
}

// rows streams the rows of a binary table through p.
func (rd *reader) rows(p *plan, next func() bool, row func() int64, src *binaryRow, format func(i int) string) error {
	for next() {
		rd.sum.Rows++
		num := int(row())
		s, bad, reason := p.convert(src)
		if bad != nil {
			if err := rd.reject(num, reason, bad.column, format(bad.index), []byte(rawText(p, format))); err != nil {
				return err
			}
			continue
		}
		rd.sum.Accepted++
		if rd.fn != nil {
			if err := rd.fn(num, s); err != nil {
				if ex, ok := excluded(err); ok {
					if err := rd.exclude(num, ex, []byte(rawText(p, format))); err != nil {
						return err
					}
					continue
				}
				return fmt.Errorf("%s: row %d: %w", rd.name, num, err)
			}
		}
	}
	return nil
}

func (rd *reader) noRows() error {
	if rd.sum.Rows == 0 {
		return rd.errorf(0, ErrNoRows, "the table has columns but no rows; a catalog needs at least one star")
	}
	return nil
}

// readFITS reads a BINTABLE from text (the decompressed stream), then
// drains raw so that the hash covers the whole file.
func (rd *reader) readFITS(text io.Reader, raw io.Reader) error {
	if err := rd.checkDeclared("fits"); err != nil {
		return err
	}
	rd.sum.Format = "fits"
	opt := fitstable.Options{Name: rd.name}
	if e := strings.TrimSpace(rd.opt.Extension); e != "" {
		if n, err := strconv.Atoi(e); err == nil {
			if n < 1 {
				return rd.errorf(0, ErrFormat, "FITS extension number %d: extensions count from 1 (the first after the primary HDU)", n)
			}
			opt.ExtNumber = n
		} else {
			opt.ExtName = e
		}
	}
	fr, err := fitstable.NewReader(text, opt)
	if err != nil {
		return rd.binaryErr(err)
	}
	t := fr.Table()
	rd.sum.HDU, rd.sum.ExtName = t.HDU, t.ExtName
	rd.sum.Columns = make([]Column, len(t.Columns))
	for i, c := range t.Columns {
		rd.sum.Columns[i] = Column{Name: c.Name, Unit: c.Unit, Datatype: c.Datatype()}
	}
	p, err := rd.resolveMapping(0)
	if err != nil {
		return err
	}
	if err := rd.rows(p, fr.Next, fr.Row, &binaryRow{float: fr.Float64}, fr.Format); err != nil {
		return err
	}
	if err := fr.Err(); err != nil {
		return rd.binaryErr(err)
	}
	if _, err := io.Copy(io.Discard, raw); err != nil {
		return rd.errorf(0, ErrFormat, "reading past the table: %v", err)
	}
	return rd.noRows()
}

// readParquet reads a Parquet file. Parquet keeps its metadata at the end
// and is read by random access: the input is used directly when it allows
// that (a file), and is otherwise copied to a temporary file first.
func (rd *reader) readParquet(raw *bufio.Reader) error {
	if err := rd.checkDeclared("parquet"); err != nil {
		return err
	}
	if rd.opt.Extension != "" {
		return rd.errorf(0, ErrFormat, "a FITS extension (%q) was given, but this is a Parquet file; remove the extension or point at the FITS file", rd.opt.Extension)
	}
	rd.sum.Format = "parquet"
	ra, size, cleanup, err := rd.randomAccess(raw)
	if err != nil {
		return err
	}
	defer cleanup()
	pr, err := parquettable.Open(ra, size, rd.name)
	if err != nil {
		return rd.binaryErr(err)
	}
	rd.sum.RowGroups = pr.RowGroups()
	cols := pr.Columns()
	rd.sum.Columns = make([]Column, len(cols))
	for i, c := range cols {
		rd.sum.Columns[i] = Column{Name: c.Name, Unit: c.Unit, Datatype: c.Datatype()}
	}
	p, err := rd.resolveMapping(0)
	if err != nil {
		return err
	}
	var sel []int
	for _, f := range p.refs() {
		sel = append(sel, f.index)
	}
	if err := pr.Select(sel); err != nil {
		return rd.binaryErr(err)
	}
	if err := rd.rows(p, pr.Next, pr.Row, &binaryRow{float: pr.Float64}, pr.Format); err != nil {
		return err
	}
	if err := pr.Err(); err != nil {
		return rd.binaryErr(err)
	}
	return rd.noRows()
}

// randomAccess gives the whole input as an io.ReaderAt with its size, and
// hashes it.
func (rd *reader) randomAccess(raw *bufio.Reader) (io.ReaderAt, int64, func(), error) {
	type readSeekerAt interface {
		io.ReaderAt
		io.Seeker
	}
	if f, ok := rd.src.(readSeekerAt); ok {
		size, err := f.Seek(0, io.SeekEnd)
		if err == nil {
			h := sha256.New()
			n, err := io.Copy(h, io.NewSectionReader(f, 0, size))
			if err != nil {
				return nil, 0, nil, rd.errorf(0, ErrFormat, "reading: %v", err)
			}
			rd.hashed = true
			rd.sum.Bytes = n
			copy(rd.sum.SHA256[:], h.Sum(nil))
			return f, size, func() {}, nil
		}
	}
	tmp, err := os.CreateTemp("", "spinpop-catalog-*.parquet")
	if err != nil {
		return nil, 0, nil, fmt.Errorf("%s: a Parquet stream must be copied to a temporary file to be read: %w", rd.name, err)
	}
	cleanup := func() { tmp.Close(); os.Remove(tmp.Name()) }
	size, err := io.Copy(tmp, raw) // through rd.hr, which hashes it
	if err != nil {
		cleanup()
		return nil, 0, nil, rd.errorf(0, ErrFormat, "copying the Parquet stream to %s: %v", tmp.Name(), err)
	}
	return tmp, size, cleanup, nil
}
