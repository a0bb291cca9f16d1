package fitstable

import (
	"bufio"
	"bytes"
	"compress/gzip"
	"encoding/binary"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
)

// maxRowBytes bounds NAXIS1. The standard sets no limit, but a catalog row
// of more than 64 MiB is a damaged header, and the Reader holds one row.
const maxRowBytes = 64 << 20

// Options choose the table to read.
type Options struct {
	// Name is the file name used in messages; "" gives "FITS file".
	Name string
	// ExtName selects the BINTABLE extension whose EXTNAME matches
	// (compared without regard to case or trailing spaces).
	ExtName string
	// ExtNumber selects the HDU by number: 1 is the first extension after
	// the primary HDU. It must be a BINTABLE. 0 with ExtName "" selects the
	// first BINTABLE in the file.
	ExtNumber int
}

// Table describes the binary table a Reader reads.
type Table struct {
	HDU       int    // HDU number, 1 for the first extension
	ExtName   string // EXTNAME, "" when the header gives none
	Header    *Header
	Columns   []Column
	Rows      int64 // NAXIS2
	RowBytes  int   // NAXIS1
	HeapBytes int64 // PCOUNT: the heap after the rows (skipped)
}

// ColumnIndex returns the index of the first column with the name, or -1.
func (t *Table) ColumnIndex(name string) int {
	for i, c := range t.Columns {
		if c.Name == name {
			return i
		}
	}
	return -1
}

// Reader reads one binary table row by row.
type Reader struct {
	name       string
	br         *bufio.Reader
	compressed bool
	table      Table
	row        []byte
	n          int64 // rows read
	err        error
	done       bool
}

// NewReader reads headers from r until it reaches the table the options
// select, skipping the data of every HDU before it. A gzip-compressed
// stream is recognised by its first two bytes and decompressed on the fly.
// r is read only as far as needed: after the last row, the Reader has
// consumed the table's padding and at most one block beyond.
func NewReader(r io.Reader, opt Options) (*Reader, error) {
	rd := &Reader{name: opt.Name}
	if rd.name == "" {
		rd.name = "FITS file"
	}
	br := bufio.NewReaderSize(r, 64<<10)
	if magic, _ := br.Peek(2); len(magic) == 2 && magic[0] == 0x1f && magic[1] == 0x8b {
		gz, err := gzip.NewReader(br)
		if err != nil {
			return nil, rd.fileErr(ErrFormat, "starts like a gzip file but its gzip header is unreadable: %v", err)
		}
		rd.compressed = true
		br = bufio.NewReaderSize(gz, 64<<10)
	}
	rd.br = br
	if err := rd.seek(opt); err != nil {
		return nil, err
	}
	rd.row = make([]byte, rd.table.RowBytes)
	return rd, nil
}

// Table returns the table being read.
func (rd *Reader) Table() *Table { return &rd.table }

// Columns returns the table's columns.
func (rd *Reader) Columns() []Column { return rd.table.Columns }

// Compressed reports whether the stream was gzip-compressed.
func (rd *Reader) Compressed() bool { return rd.compressed }

// Row returns the number of the current row, from 1.
func (rd *Reader) Row() int64 { return rd.n }

// Err returns the error that stopped Next, or nil after the last row.
func (rd *Reader) Err() error { return rd.err }

// Next reads the next row, reporting false after the last row or on an
// error (see Err). After the last row it checks that the table's block is
// complete and zero-padded and that what follows is the end of the file
// or another extension, which catches a NAXIS2 smaller than the data.
func (rd *Reader) Next() bool {
	if rd.done {
		return false
	}
	if rd.n == rd.table.Rows {
		rd.done = true
		rd.err = rd.finish()
		return false
	}
	k, err := io.ReadFull(rd.br, rd.row)
	if err != nil {
		rd.done = true
		if err == io.EOF || err == io.ErrUnexpectedEOF {
			rd.err = rd.tableErr("NAXIS2", rd.n+1, ErrTruncated,
				"the file ends inside row %d of NAXIS2 = %d (after %d of the table's %d bytes): it was cut off, or NAXIS2 is larger than the rows it holds",
				rd.n+1, rd.table.Rows, rd.n*int64(rd.table.RowBytes)+int64(k), rd.table.Rows*int64(rd.table.RowBytes))
		} else {
			rd.err = rd.tableErr("", rd.n+1, ErrFormat, "reading: %v", err)
		}
		return false
	}
	rd.n++
	return true
}

// RawRow returns the bytes of the current row, valid until the next call
// of Next.
func (rd *Reader) RawRow() []byte { return rd.row }

func (rd *Reader) finish() error {
	t := &rd.table
	if t.HeapBytes > 0 {
		k, err := io.CopyN(io.Discard, rd.br, t.HeapBytes)
		if err != nil {
			return rd.tableErr("PCOUNT", 0, ErrTruncated, "the file ends %d bytes into the heap of PCOUNT = %d bytes after the rows: it was cut off", k, t.HeapBytes)
		}
	}
	pad := padding(int64(t.RowBytes)*t.Rows + t.HeapBytes)
	if pad > 0 {
		buf := make([]byte, pad)
		k, err := io.ReadFull(rd.br, buf)
		if err != nil {
			return rd.tableErr("", 0, ErrTruncated,
				"the last 2880-byte block of the table is incomplete (the file ends %d bytes short of it): it was cut off", pad-int64(k))
		}
		for _, b := range buf {
			if b != 0 {
				return rd.tableErr("NAXIS2", 0, ErrFormat,
					"the block padding after the NAXIS2 = %d rows is not zero, as padding must be: more rows follow than NAXIS2 says", t.Rows)
			}
		}
	}
	next, err := rd.br.Peek(CardSize)
	if len(next) == 0 && err == io.EOF {
		return nil
	}
	if len(next) >= 8 && string(next[:8]) == "XTENSION" {
		return nil
	}
	if len(next) == CardSize && bytes.Count(next, []byte{0}) == CardSize {
		return nil // zero blocks after the last HDU: harmless
	}
	return rd.tableErr("NAXIS2", 0, ErrFormat,
		"data continue after the NAXIS2 = %d rows and their padding, and they are not another extension: NAXIS2 is smaller than the rows the file holds, or the file is damaged", t.Rows)
}

func padding(n int64) int64 {
	if r := n % BlockSize; r != 0 {
		return BlockSize - r
	}
	return 0
}

// hdu is what the scan learns about one HDU.
type hdu struct {
	number   int
	header   *Header
	xtension string
	extName  string
	data     int64 // bytes of data, unpadded
}

func (rd *Reader) seek(opt Options) error {
	var seen []string
	for number := 0; ; number++ {
		h, err := rd.readHeader(number)
		if err == io.EOF {
			break
		}
		if err != nil {
			return err
		}
		kind := h.xtension
		if number == 0 {
			kind = "primary"
		}
		label := fmt.Sprintf("HDU %d", number)
		if h.extName != "" {
			label += fmt.Sprintf(" '%s'", h.extName)
		}
		seen = append(seen, label+" ("+kind+")")
		if number > 0 && rd.selects(opt, h) {
			if h.xtension != "BINTABLE" {
				return &Error{File: rd.name, HDU: number, ExtName: h.extName, Keyword: "XTENSION", Err: ErrNoTable,
					Msg: fmt.Sprintf("this HDU is a %s extension, not a binary table (BINTABLE); the file has %s", h.xtension, strings.Join(seen, ", "))}
			}
			return rd.openTable(h)
		}
		k, err := io.CopyN(io.Discard, rd.br, h.data+padding(h.data))
		if err != nil {
			if k < h.data {
				return &Error{File: rd.name, HDU: number, ExtName: h.extName, Err: ErrTruncated,
					Msg: fmt.Sprintf("the file ends %d bytes into this HDU's %d bytes of data: it was cut off, or the header's NAXISn are wrong", k, h.data)}
			}
			return &Error{File: rd.name, HDU: number, ExtName: h.extName, Err: ErrTruncated,
				Msg: fmt.Sprintf("the last 2880-byte block of this HDU's data is incomplete (the file ends %d bytes short of it): it was cut off", h.data+padding(h.data)-k)}
		}
	}
	want := "binary table (BINTABLE extension)"
	switch {
	case opt.ExtNumber > 0:
		want = fmt.Sprintf("HDU %d", opt.ExtNumber)
	case opt.ExtName != "":
		want = fmt.Sprintf("extension with EXTNAME '%s'", opt.ExtName)
	}
	return &Error{File: rd.name, HDU: -1, Err: ErrNoTable,
		Msg: fmt.Sprintf("the file has no %s; it has %s", want, strings.Join(seen, ", "))}
}

func (rd *Reader) selects(opt Options, h *hdu) bool {
	switch {
	case opt.ExtNumber > 0:
		return h.number == opt.ExtNumber
	case opt.ExtName != "":
		return strings.EqualFold(strings.TrimSpace(h.extName), strings.TrimSpace(opt.ExtName))
	}
	return h.xtension == "BINTABLE"
}

// readHeader reads one header and works out the size of its data. It
// returns io.EOF when the stream ends cleanly where an extension could
// start, or when what follows the last HDU is not an extension.
func (rd *Reader) readHeader(number int) (*hdu, error) {
	h := &hdu{number: number, header: &Header{}}
	block := make([]byte, BlockSize)
	for blocks := 0; ; blocks++ {
		k, err := io.ReadFull(rd.br, block)
		if err == io.EOF && blocks == 0 {
			if number == 0 {
				return nil, rd.fileErr(ErrNotFITS, "the file is empty")
			}
			return nil, io.EOF
		}
		if err != nil && err != io.ErrUnexpectedEOF {
			return nil, rd.fileErr(ErrFormat, "reading: %v", err)
		}
		if blocks == 0 {
			if number == 0 && (k < 9 || string(block[:9]) != "SIMPLE  =") {
				return nil, rd.fileErr(ErrNotFITS, `it does not start with the card "SIMPLE  = T", as every FITS file does`)
			}
			if number > 0 && (k < 9 || string(block[:9]) != "XTENSION=") {
				// Not an extension: special records or stray bytes after
				// the last HDU, which the standard lets readers ignore.
				return nil, io.EOF
			}
		}
		if err == io.ErrUnexpectedEOF {
			return nil, &Error{File: rd.name, HDU: number, ExtName: h.extName, Card: len(h.header.Cards) + 1, Err: ErrTruncated,
				Msg: fmt.Sprintf("the file ends inside a header block (%d of its 2880 bytes are there): it was cut off", k)}
		}
		for i := 0; i < BlockSize; i += CardSize {
			raw := block[i : i+CardSize]
			if isEndCard(raw) {
				return h, rd.sizeHDU(h)
			}
			c, ok := parseCard(raw)
			if !ok {
				return nil, &Error{File: rd.name, HDU: number, ExtName: h.extName, Card: len(h.header.Cards) + 1, Err: ErrFormat,
					Msg: "this card holds bytes that are not printable ASCII: the header has no END card before its data, or the file is damaged"}
			}
			c.Number = len(h.header.Cards) + 1
			h.header.add(c)
			if c.Keyword == "EXTNAME" && c.Kind == StringValue && h.extName == "" {
				h.extName = c.Str
			}
			if len(h.header.Cards) > maxHeaderCards {
				return nil, &Error{File: rd.name, HDU: number, ExtName: h.extName, Err: ErrFormat,
					Msg: fmt.Sprintf("the header runs past %d cards without an END card", maxHeaderCards)}
			}
		}
	}
}

func (rd *Reader) fileErr(sentinel error, format string, args ...any) error {
	return &Error{File: rd.name, HDU: -1, Msg: fmt.Sprintf(format, args...), Err: sentinel}
}

func (rd *Reader) tableErr(keyword string, row int64, sentinel error, format string, args ...any) error {
	return &Error{File: rd.name, HDU: rd.table.HDU, ExtName: rd.table.ExtName, Keyword: keyword, Row: row,
		Msg: fmt.Sprintf(format, args...), Err: sentinel}
}

// keyErr reports a problem with a keyword of header h.
func (rd *Reader) keyErr(h *hdu, keyword string, format string, args ...any) error {
	e := &Error{File: rd.name, HDU: h.number, ExtName: h.extName, Keyword: keyword, Err: ErrFormat, Msg: fmt.Sprintf(format, args...)}
	if c, ok := h.header.Get(keyword); ok {
		e.Card = c.Number
	}
	return e
}

// intKey reads a mandatory integer keyword in [lo, hi].
func (rd *Reader) intKey(h *hdu, keyword string, lo, hi int64) (int64, error) {
	c, ok := h.header.Get(keyword)
	if !ok {
		return 0, rd.keyErr(h, keyword, "the mandatory keyword %s is missing", keyword)
	}
	if c.Kind != IntegerValue || !c.IntOK {
		return 0, rd.keyErr(h, keyword, "%s = %s; it must be an integer", keyword, c.Raw)
	}
	if c.Int < lo || c.Int > hi {
		return 0, rd.keyErr(h, keyword, "%s = %d is out of range; it must be in [%d, %d]", keyword, c.Int, lo, hi)
	}
	return c.Int, nil
}

// sizeHDU checks the mandatory keywords that give the data's size (§4.4.1)
// and works it out.
func (rd *Reader) sizeHDU(h *hdu) error {
	hd := h.header
	first := hd.Cards
	if h.number > 0 {
		if len(first) == 0 || first[0].Keyword != "XTENSION" || first[0].Kind != StringValue {
			return rd.keyErr(h, "XTENSION", "the first card of an extension must be XTENSION = '<type>'")
		}
		h.xtension = first[0].Str
	} else if c := first[0]; c.Kind != LogicalValue || !c.Bool {
		return rd.keyErr(h, "SIMPLE", "SIMPLE = %s; a file that conforms to the standard has SIMPLE = T", c.Raw)
	}
	bitpix, err := rd.intKey(h, "BITPIX", -64, 64)
	if err != nil {
		return err
	}
	switch bitpix {
	case 8, 16, 32, 64, -32, -64:
	default:
		return rd.keyErr(h, "BITPIX", "BITPIX = %d; it must be 8, 16, 32, 64, -32 or -64", bitpix)
	}
	naxis, err := rd.intKey(h, "NAXIS", 0, 999)
	if err != nil {
		return err
	}
	pcount, gcount := int64(0), int64(1)
	groups := false
	if h.number > 0 {
		if pcount, err = rd.intKey(h, "PCOUNT", 0, math.MaxInt64); err != nil {
			return err
		}
		if gcount, err = rd.intKey(h, "GCOUNT", 1, math.MaxInt64); err != nil {
			return err
		}
	} else if c, ok := hd.Get("GROUPS"); ok && c.Kind == LogicalValue && c.Bool {
		// Random groups (§6): NAXIS1 = 0, and PCOUNT and GCOUNT count the
		// parameters and groups.
		groups = true
		if pcount, err = rd.intKey(h, "PCOUNT", 0, math.MaxInt64); err != nil {
			return err
		}
		if gcount, err = rd.intKey(h, "GCOUNT", 0, math.MaxInt64); err != nil {
			return err
		}
	}
	elems := int64(0)
	if naxis > 0 {
		elems = 1
		for i := int64(1); i <= naxis; i++ {
			key := "NAXIS" + strconv.FormatInt(i, 10)
			n, err := rd.intKey(h, key, 0, math.MaxInt64)
			if err != nil {
				return err
			}
			if i == 1 && groups && n == 0 {
				continue
			}
			if n != 0 && elems > math.MaxInt64/16/n {
				return rd.keyErr(h, key, "the data size from NAXIS1…NAXIS%d is too large to be real", naxis)
			}
			elems *= n
		}
	}
	if pcount > math.MaxInt64/16 {
		return rd.keyErr(h, "PCOUNT", "PCOUNT = %d is too large to be real", pcount)
	}
	total := pcount + elems
	if total != 0 && gcount > math.MaxInt64/8/total {
		return rd.keyErr(h, "GCOUNT", "the data size is too large to be real")
	}
	h.data = abs(bitpix) / 8 * gcount * total
	return nil
}

func abs(x int64) int64 {
	if x < 0 {
		return -x
	}
	return x
}

// openTable reads a BINTABLE header's table keywords (§7.3.1).
func (rd *Reader) openTable(h *hdu) error {
	t := &rd.table
	t.HDU, t.ExtName, t.Header = h.number, h.extName, h.header
	if _, err := rd.intKey(h, "BITPIX", 8, 8); err != nil {
		return err
	}
	if _, err := rd.intKey(h, "NAXIS", 2, 2); err != nil {
		return err
	}
	naxis1, err := rd.intKey(h, "NAXIS1", 0, maxRowBytes)
	if err != nil {
		return err
	}
	if t.Rows, err = rd.intKey(h, "NAXIS2", 0, math.MaxInt64); err != nil {
		return err
	}
	if _, err := rd.intKey(h, "GCOUNT", 1, 1); err != nil {
		return err
	}
	if t.HeapBytes, err = rd.intKey(h, "PCOUNT", 0, math.MaxInt64); err != nil {
		return err
	}
	nf, err := rd.intKey(h, "TFIELDS", 0, 999)
	if err != nil {
		return err
	}
	t.RowBytes = int(naxis1)
	offset := int64(0)
	for i := 0; i < int(nf); i++ {
		n := strconv.Itoa(i + 1)
		c := Column{Index: i, Scale: 1}
		colErr := func(keyword, format string, args ...any) error {
			e := rd.keyErr(h, keyword, format, args...).(*Error)
			e.Column = c.Name
			return e
		}
		if k, ok := h.header.Get("TTYPE" + n); ok {
			if k.Kind != StringValue {
				return colErr("TTYPE"+n, "TTYPE%s = %s; a column name must be a quoted string", n, k.Raw)
			}
			c.Name = strings.TrimSpace(k.Str)
		}
		if k, ok := h.header.Get("TUNIT" + n); ok && k.Kind == StringValue {
			c.Unit = strings.TrimSpace(k.Str)
		}
		k, ok := h.header.Get("TFORM" + n)
		if !ok {
			return colErr("TFORM"+n, "TFORM%s is missing; every column of a binary table needs its TFORMn", n)
		}
		if k.Kind != StringValue {
			return colErr("TFORM"+n, "TFORM%s = %s; it must be a quoted string such as '1D'", n, k.Raw)
		}
		c.Form = k.Str
		var width int64
		c.Code, c.Repeat, width, err = parseTFORM(k.Str)
		if err != nil {
			return colErr("TFORM"+n, "%v", err)
		}
		if offset+width > naxis1 {
			return rd.keyErr(h, "NAXIS1", "NAXIS1 = %d bytes per row, but the columns up to %s (column %d, TFORM%s = '%s') already take %d: NAXIS1 and the TFORMn disagree",
				naxis1, quoteName(c.Name), i+1, n, c.Form, offset+width)
		}
		c.Offset, c.Width = int(offset), int(width)
		offset += width
		tzeroRaw := ""
		numeric := strings.IndexByte("BIJKED", c.Code) >= 0
		if k, ok := h.header.Get("TSCAL" + n); ok && numeric {
			if k.Kind != IntegerValue && k.Kind != FloatValue {
				return colErr("TSCAL"+n, "TSCAL%s = %s; it must be a number", n, k.Raw)
			}
			c.Scale = k.Float
		}
		if k, ok := h.header.Get("TZERO" + n); ok && numeric {
			if k.Kind != IntegerValue && k.Kind != FloatValue {
				return colErr("TZERO"+n, "TZERO%s = %s; it must be a number", n, k.Raw)
			}
			c.Zero, tzeroRaw = k.Float, k.Raw
		}
		if k, ok := h.header.Get("TNULL" + n); ok && strings.IndexByte("BIJK", c.Code) >= 0 {
			if k.Kind != IntegerValue || !k.IntOK {
				return colErr("TNULL"+n, "TNULL%s = %s; it must be an integer", n, k.Raw)
			}
			c.HasNull, c.Null = true, k.Int
		}
		c.describe(tzeroRaw)
		t.Columns = append(t.Columns, c)
	}
	if offset != naxis1 {
		return rd.keyErr(h, "NAXIS1", "NAXIS1 = %d bytes per row, but the %d columns' TFORMn add up to %d: NAXIS1 and the TFORMn disagree", naxis1, nf, offset)
	}
	if naxis1 == 0 && t.Rows > 0 {
		e := rd.keyErr(h, "NAXIS1", "NAXIS1 = 0: the table's %d rows hold no bytes, so there are no values to read", t.Rows).(*Error)
		e.Err = ErrUnsupported
		return e
	}
	return nil
}

func quoteName(name string) string {
	if name == "" {
		return "an unnamed column"
	}
	return strconv.Quote(name)
}

var be = binary.BigEndian

// stored returns the integer as stored (before any TZERO) of an integer
// column in the current row.
func (rd *Reader) stored(c *Column) int64 {
	b := rd.row[c.Offset : c.Offset+c.Width]
	switch c.Code {
	case 'B':
		return int64(b[0])
	case 'I':
		return int64(int16(be.Uint16(b)))
	case 'J':
		return int64(int32(be.Uint32(b)))
	default:
		return int64(be.Uint64(b))
	}
}

// Float64 returns the value of numeric column i in the current row as a
// float, with TSCALn/TZEROn applied. null is true, and the value NaN, when
// the stored integer equals TNULLn, when a float column holds NaN (the
// standard's mark of an undefined float), or when the column is not
// numeric.
func (rd *Reader) Float64(i int) (v float64, null bool) {
	c := &rd.table.Columns[i]
	switch c.Type {
	case Float32, Float64:
		b := rd.row[c.Offset : c.Offset+c.Width]
		if c.Type == Float32 {
			v = float64(math.Float32frombits(be.Uint32(b)))
		} else {
			v = math.Float64frombits(be.Uint64(b))
		}
		if math.IsNaN(v) {
			return math.NaN(), true
		}
		if c.Scaled {
			v = c.Zero + c.Scale*v
		}
		return v, false
	case Int8, Uint8, Int16, Uint16, Int32, Uint32, Int64, Uint64:
		s := rd.stored(c)
		if c.HasNull && s == c.Null {
			return math.NaN(), true
		}
		if c.Scaled {
			return c.Zero + c.Scale*float64(s), false
		}
		switch c.Type {
		case Uint64:
			return float64(uint64(s) ^ 1<<63), false
		case Int8:
			return float64(int8(uint8(s) ^ 0x80)), false
		case Uint16:
			return float64(uint16(s) ^ 0x8000), false
		case Uint32:
			return float64(uint32(s) ^ 0x80000000), false
		}
		return float64(s), false
	}
	return math.NaN(), true
}

// Int64 returns the value of an unscaled integer column i in the current
// row. null is true when the stored integer equals TNULLn, when the value
// does not fit an int64 (a uint64 above 2^63−1), or when the column is not
// an unscaled integer.
func (rd *Reader) Int64(i int) (v int64, null bool) {
	c := &rd.table.Columns[i]
	if !c.Type.IsInteger() || c.Scaled {
		return 0, true
	}
	s := rd.stored(c)
	if c.HasNull && s == c.Null {
		return 0, true
	}
	switch c.Type {
	case Uint64:
		u := uint64(s) ^ 1<<63
		if u > math.MaxInt64 {
			return 0, true
		}
		return int64(u), false
	case Int8:
		return int64(int8(uint8(s) ^ 0x80)), false
	case Uint16:
		return int64(uint16(s) ^ 0x8000), false
	case Uint32:
		return int64(uint32(s) ^ 0x80000000), false
	}
	return s, false
}

// Uint64 returns the value of an unscaled integer column i in the current
// row as an unsigned integer. null is true when the stored integer equals
// TNULLn, when the value is negative, or when the column is not an
// unscaled integer.
func (rd *Reader) Uint64(i int) (v uint64, null bool) {
	c := &rd.table.Columns[i]
	if c.Type == Uint64 && !c.Scaled {
		s := rd.stored(c)
		if c.HasNull && s == c.Null {
			return 0, true
		}
		return uint64(s) ^ 1<<63, false
	}
	n, null := rd.Int64(i)
	if null || n < 0 {
		return 0, true
	}
	return uint64(n), false
}

// Bool returns the value of logical column i in the current row: 'T' is
// true, 'F' false; a zero byte (the standard's null) or any other byte, or
// a column that is not logical, gives null.
func (rd *Reader) Bool(i int) (v, null bool) {
	c := &rd.table.Columns[i]
	if c.Type != Logical {
		return false, true
	}
	switch rd.row[c.Offset] {
	case 'T':
		return true, false
	case 'F':
		return false, false
	}
	return false, true
}

// String returns the value of character column i in the current row: its
// bytes up to the first NUL, trailing spaces removed (§7.3.3.1). For a
// column that is not a string it returns "".
func (rd *Reader) String(i int) string {
	c := &rd.table.Columns[i]
	if c.Type != String {
		return ""
	}
	b := rd.row[c.Offset : c.Offset+c.Width]
	if j := bytes.IndexByte(b, 0); j >= 0 {
		b = b[:j]
	}
	return string(bytes.TrimRight(b, " "))
}

// Format returns the value of column i in the current row as text, for
// messages and listings: numbers in Go's shortest form, "T"/"F" for
// logicals, strings as they are, and "" for nulls and unreadable columns.
func (rd *Reader) Format(i int) string {
	c := &rd.table.Columns[i]
	switch {
	case c.Type == String:
		return rd.String(i)
	case c.Type == Logical:
		v, null := rd.Bool(i)
		if null {
			return ""
		}
		if v {
			return "T"
		}
		return "F"
	case c.Type == Uint64 && !c.Scaled:
		v, null := rd.Uint64(i)
		if null {
			return ""
		}
		return strconv.FormatUint(v, 10)
	case c.Type.IsInteger() && !c.Scaled:
		v, null := rd.Int64(i)
		if null {
			return ""
		}
		return strconv.FormatInt(v, 10)
	case c.Type.IsNumeric():
		v, null := rd.Float64(i)
		if null {
			return ""
		}
		return strconv.FormatFloat(v, 'g', -1, 64)
	}
	return ""
}
