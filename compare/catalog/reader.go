package catalog

import (
	"bufio"
	"bytes"
	"compress/gzip"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"hash"
	"io"
	"strconv"
	"unicode/utf8"

	"spinpop/internal/regular"
)

// Options control Read.
type Options struct {
	// Mapping names the columns; see Mapping.
	Mapping Mapping
	// ZSunPc is the Sun's height above the Galactic plane (pc), added to
	// d sin b when heights are derived from parallax and position.
	ZSunPc float64
	// Rejects receives every unusable row. If nil, rejected rows are only
	// counted in the Summary.
	Rejects RejectSink
	// Name is the file name used in messages; ReadFile sets it.
	Name string
	// Format is the format the file is declared to have: "csv", "ecsv",
	// "fits" or "parquet". "" or "auto" takes the format from the content.
	// A declared format the content contradicts is an error (ErrFormat).
	Format string
	// Extension chooses the binary-table extension of a FITS file: its
	// EXTNAME, or its HDU number (1 is the first extension after the
	// primary HDU). "" takes the first binary table. Given for a file that
	// is not FITS, it is an error.
	Extension string
}

// Summary reports on a read. Bytes and SHA256 cover the whole input only
// when Read returned without error (or with ErrNoRows).
type Summary struct {
	Format      string // "csv", "ecsv", "fits" or "parquet"
	ECSVVersion string
	HDU         int    // FITS: the HDU read (1 is the first extension)
	ExtName     string // FITS: its EXTNAME
	RowGroups   int    // Parquet: row groups in the file
	Compressed  bool   // gzip, detected from the first two bytes
	Delimiter   byte   // CSV and ECSV
	HeaderLine  int    // CSV and ECSV: line of the column-name row
	Columns     []Column
	Rows        int // data rows seen, accepted or rejected
	Accepted    int // usable rows, Excluded included
	Rejected    map[Reason]int
	Excluded    int      // usable rows the row function left out (Exclude)
	Bytes       int64    // bytes of the input as stored (compressed, if it is)
	SHA256      [32]byte // of those bytes
}

// SHA256Hex returns the SHA-256 in lower-case hexadecimal, the form
// scenario files state.
func (s Summary) SHA256Hex() string { return hex.EncodeToString(s.SHA256[:]) }

// RejectedTotal returns the number of rejected rows.
func (s Summary) RejectedTotal() int {
	n := 0
	for _, c := range s.Rejected {
		n += c
	}
	return n
}

// ReadFile opens path and reads it with Read, naming the file in messages.
func ReadFile(path string, opt Options, fn func(line int, s Star) error) (Summary, error) {
	f, err := regular.Open(path) // a FIFO would block for ever, a device never end
	if err != nil {
		return Summary{}, err
	}
	defer f.Close()
	if opt.Name == "" {
		opt.Name = path
	}
	return Read(f, opt, fn)
}

// Read streams a catalog from r — CSV, ECSV or a FITS binary table,
// gzip-compressed or not, or a Parquet file — and calls fn with the line
// number (for FITS and Parquet, the row number) and the Star of every
// usable row, in file order. Unusable rows go to opt.Rejects and are counted in the Summary.
// fn may leave a usable row out by returning an *Exclude: the row then
// goes to opt.Rejects too, with the reason fn gave. Any other error from fn or from the sink stops the reading and is returned
// (wrapped with the line). Errors in the file itself are *Error values
// wrapping one of the sentinel errors (ErrEmpty, ErrNoRows, ErrDelimiter,
// ErrColumn, ErrUnit, ErrMapping, ErrFormat).
func Read(r io.Reader, opt Options, fn func(line int, s Star) error) (Summary, error) {
	name := opt.Name
	if name == "" {
		name = "catalog"
	}
	rd := &reader{name: name, opt: opt, fn: fn}
	rd.sum.Rejected = map[Reason]int{}
	rd.hr = &hashReader{r: r, h: sha256.New()}
	rd.src = r
	err := rd.run()
	if !rd.hashed {
		rd.sum.Bytes = rd.hr.n
		copy(rd.sum.SHA256[:], rd.hr.h.Sum(nil))
	}
	return rd.sum, err
}

type hashReader struct {
	r io.Reader
	h hash.Hash
	n int64
}

func (h *hashReader) Read(p []byte) (int, error) {
	n, err := h.r.Read(p)
	h.h.Write(p[:n])
	h.n += int64(n)
	return n, err
}

type reader struct {
	name string
	opt  Options
	fn   func(int, Star) error
	hr   *hashReader
	src  io.Reader // the input as given, for Parquet's random access
	// hashed is set when Bytes and SHA256 were taken from src directly
	// rather than from hr.
	hashed bool
	lr     lineReader
	sp     splitter
	sum    Summary
}

func (rd *reader) errorf(line int, sentinel error, format string, args ...any) error {
	return &Error{Name: rd.name, Line: line, Msg: fmt.Sprintf(format, args...), Err: sentinel}
}

func (rd *reader) run() error {
	switch rd.opt.Format {
	case "", "auto", "csv", "ecsv", "fits", "parquet":
	default:
		return rd.errorf(0, ErrFormat, "unknown format %q; use auto, csv, ecsv, fits or parquet", rd.opt.Format)
	}
	raw := bufio.NewReaderSize(rd.hr, 256<<10)
	if magic, _ := raw.Peek(4); string(magic) == parquetMagic {
		return rd.readParquet(raw)
	}
	text := raw
	if magic, _ := raw.Peek(2); len(magic) == 2 && magic[0] == 0x1f && magic[1] == 0x8b {
		gz, err := gzip.NewReader(raw)
		if err != nil {
			return rd.errorf(0, ErrFormat, "starts like a gzip file but its gzip header is unreadable: %v", err)
		}
		rd.sum.Compressed = true
		text = bufio.NewReaderSize(gz, 256<<10)
	}
	inner, _ := text.Peek(len(fitsMagic))
	switch {
	case string(inner) == fitsMagic:
		return rd.readFITS(text, raw)
	case len(inner) >= 4 && string(inner[:4]) == parquetMagic:
		return rd.errorf(0, ErrFormat, "is a gzip-compressed Parquet file; Parquet compresses its columns itself and is read by random access, so decompress it (gunzip) and read the .parquet file")
	}
	if rd.opt.Extension != "" {
		return rd.errorf(0, ErrFormat, "a FITS extension (%q) was given, but this is a text table, not a FITS file; remove the extension or point at the FITS file", rd.opt.Extension)
	}
	rd.lr.br = text

	header, err := rd.readHeader()
	if err != nil {
		return err
	}
	if err := rd.checkDeclared(rd.sum.Format); err != nil {
		return err
	}
	if err := rd.readRows(header); err != nil {
		return err
	}
	// Hash whatever follows the last line (e.g. the gzip trailer).
	if _, err := io.Copy(io.Discard, raw); err != nil {
		return rd.errorf(0, ErrFormat, "reading past the last line: %v", err)
	}
	if rd.sum.Rows == 0 {
		return rd.errorf(rd.sum.HeaderLine, ErrNoRows,
			"the header row is here but no data row follows; a catalog needs at least one star")
	}
	return nil
}

// formatWords describe each format in messages.
var formatWords = map[string]string{
	"csv":     `plain CSV (its first line is not "# %ECSV …")`,
	"ecsv":    `ECSV (its first line is "# %ECSV …")`,
	"fits":    `a FITS file (it starts with "SIMPLE  =")`,
	"parquet": `a Parquet file (it starts with "PAR1")`,
}

// checkDeclared compares the format found in the content with the one the
// caller declared.
func (rd *reader) checkDeclared(found string) error {
	want := rd.opt.Format
	if want == "" || want == "auto" || want == found {
		return nil
	}
	return rd.errorf(0, ErrFormat, "the declared format is %q, but the file is %s; declare format %q (or \"auto\"), or point at the intended file",
		want, formatWords[found], found)
}

// next wraps lineReader.next with the file's name and line in errors.
func (rd *reader) next() ([]byte, error) {
	b, err := rd.lr.next()
	switch {
	case err == nil, err == io.EOF:
		return b, err
	case errors.Is(err, errLineTooLong):
		return nil, rd.errorf(rd.lr.line+1, ErrFormat, "line longer than %d bytes; is this a text table?", maxLineBytes)
	case rd.sum.Compressed:
		return nil, rd.gzipError(err)
	default:
		return nil, rd.errorf(rd.lr.line+1, ErrFormat, "reading: %v", err)
	}
}

// gzipError explains a failure of the gzip layer. The gzip reader reports
// bytes appended after the compressed stream as an "invalid header" (it
// looks for a next member there), which named a line of text that is not
// the problem; the problem is the file's tail.
func (rd *reader) gzipError(err error) error {
	after := fmt.Sprintf("after line %d of the decompressed text", rd.lr.line)
	switch {
	case errors.Is(err, gzip.ErrHeader):
		return rd.errorf(0, ErrFormat, "the gzip stream ends (%s) but more bytes follow that are not another gzip member: something was appended to the compressed file, or it is damaged; remove the trailing bytes or compress the table again", after)
	case errors.Is(err, gzip.ErrChecksum):
		return rd.errorf(0, ErrFormat, "the gzip checksum does not match (%s): the compressed file is damaged; get a fresh copy", after)
	case errors.Is(err, io.ErrUnexpectedEOF):
		return rd.errorf(0, ErrFormat, "the gzip stream is cut short (%s): the file is truncated; get a complete copy", after)
	}
	return rd.errorf(0, ErrFormat, "decompressing (%s): %v; the gzip file is damaged", after, err)
}

// checkText refuses a line with bytes no text table holds: control
// characters other than tab, carriage return and form feed, or mostly
// invalid UTF-8. Without it the bytes of a binary file (or of a gzip file
// of one) were split into "columns" and listed in a message, or read as a
// header "with the wrong delimiter".
func (rd *reader) checkText(line []byte) error {
	if rd.lr.line == 1 && (bytes.HasPrefix(line, []byte("\xff\xfe")) || bytes.HasPrefix(line, []byte("\xfe\xff"))) {
		return rd.errorf(1, ErrFormat, "is UTF-16 text (it starts with a UTF-16 byte-order mark); save it as UTF-8 (for instance with iconv -f UTF-16 -t UTF-8)")
	}
	if rd.lr.line <= 2 {
		if t := bytes.ToLower(bytes.TrimSpace(line)); bytes.HasPrefix(t, []byte("<!doctype html")) || bytes.HasPrefix(t, []byte("<html")) {
			return rd.errorf(rd.lr.line, ErrFormat, "is an HTML page, not a table (a download that returned an error page?); fetch the catalog file itself")
		}
	}
	bad, where := 0, -1
	for i, c := range line {
		if c < 0x20 && c != '\t' && c != '\r' && c != '\f' || c == 0x7f {
			bad++
			if where < 0 {
				where = i
			}
		}
	}
	if bad == 0 && utf8.Valid(line) {
		return nil
	}
	if bad == 0 {
		// Text in another encoding (Latin-1 "°" or "µ" in a header) is
		// still text; much invalid UTF-8 is not.
		invalid := 0
		for s := line; len(s) > 0; {
			r, n := utf8.DecodeRune(s)
			if r == utf8.RuneError && n <= 1 {
				invalid++
			}
			s = s[max(n, 1):]
		}
		if invalid*4 < len(line) {
			return nil
		}
	}
	what := "text"
	if rd.sum.Compressed {
		what = "text inside the gzip file"
	}
	detail := "bytes that are not valid UTF-8 text"
	switch {
	case where >= 0 && line[where] == 0:
		detail = fmt.Sprintf("a NUL byte at byte %d", where+1)
	case where >= 0:
		detail = fmt.Sprintf("the control byte 0x%02x at byte %d", line[where], where+1)
	}
	return rd.errorf(rd.lr.line, ErrFormat, "holds %s, so this is binary data, not a text table (the %s must be CSV or ECSV; FITS and Parquet files are recognised by their first bytes, gzip is the only compression read)", detail, what)
}

// blankName names the run of spaces and tabs b.
func blankName(b []byte) string {
	switch {
	case bytes.IndexByte(b, '\t') >= 0 && bytes.IndexByte(b, ' ') >= 0:
		return "spaces and tabs"
	case bytes.IndexByte(b, '\t') >= 0:
		return "a tab"
	}
	return "spaces"
}

// readHeader finds the format and the column-name row, and resolves the
// Mapping against it.
func (rd *reader) readHeader() (*plan, error) {
	var line []byte
	var err error
	for {
		line, err = rd.next()
		if err == io.EOF {
			return nil, rd.errorf(0, ErrEmpty, "file is empty; expected a header row naming the columns")
		}
		if err != nil {
			return nil, err
		}
		if err := rd.checkText(line); err != nil {
			return nil, err
		}
		if !isBlank(line) {
			break
		}
	}

	var ecsv *ecsvHeader
	if bytes.HasPrefix(line, []byte("# %ECSV")) {
		hl := []headerLine{{rd.lr.line, string(bytes.TrimPrefix(line, []byte("# ")))}}
		for {
			line, err = rd.next()
			if err == io.EOF {
				return nil, rd.errorf(rd.lr.line, ErrEmpty, "ECSV header ends without a row of column names")
			}
			if err != nil {
				return nil, err
			}
			if err := rd.checkText(line); err != nil {
				return nil, err
			}
			if len(line) > 0 && line[0] != '#' && isComment(line) {
				return nil, rd.errorf(rd.lr.line, ErrFormat, "this ECSV header line has %s before its \"#\"; every header line must start with \"#\" in the first column (indent the YAML after \"# \", with spaces)",
					blankName(line[:len(line)-len(bytes.TrimLeft(line, " \t"))]))
			}
			if len(line) > 0 && line[0] == '#' {
				t := line[1:]
				t = bytes.TrimPrefix(t, []byte(" "))
				hl = append(hl, headerLine{rd.lr.line, string(t)})
				continue
			}
			if isBlank(line) {
				continue
			}
			break
		}
		var lerr *lineError
		ecsv, lerr = parseECSVHeader(hl)
		if lerr != nil {
			return nil, rd.errorf(lerr.line, ErrFormat, "%s", lerr.msg)
		}
		rd.sum.Format = "ecsv"
		rd.sum.ECSVVersion = ecsv.version
		rd.sp.delim = ecsv.delimiter
	} else {
		for isBlank(line) || isComment(line) {
			line, err = rd.next()
			if err == io.EOF {
				return nil, rd.errorf(0, ErrEmpty, "file holds only comments; expected a header row naming the columns")
			}
			if err != nil {
				return nil, err
			}
			if err := rd.checkText(line); err != nil {
				return nil, err
			}
		}
		rd.sum.Format = "csv"
		rd.sp.delim = ','
	}
	rd.sum.Delimiter = rd.sp.delim
	rd.sum.HeaderLine = rd.lr.line

	fields, err := rd.sp.split(line)
	if err != nil {
		return nil, rd.errorf(rd.lr.line, ErrFormat, "header row: %v", err)
	}
	if len(fields) == 1 {
		if d, ok := otherDelimiter(line, rd.sp.delim); ok {
			return nil, rd.errorf(rd.lr.line, ErrDelimiter,
				"header row %q reads as a single column but contains %s; this %s file must be %s-separated%s",
				truncate(string(line), 80), delimName(d), rd.sum.Format, delimName(rd.sp.delim), delimHint(rd.sum.Format, d))
		}
	}
	names := make([]string, len(fields))
	for i, f := range fields {
		names[i] = string(f)
	}
	if ecsv != nil {
		if err := checkECSVNames(names, ecsv.columns); err != nil {
			return nil, rd.errorf(rd.lr.line, ErrFormat, "%v", err)
		}
		rd.sum.Columns = ecsv.columns
	} else {
		rd.sum.Columns = make([]Column, len(names))
		for i, n := range names {
			rd.sum.Columns[i] = Column{Name: n}
		}
	}
	return rd.resolveMapping(rd.lr.line)
}

// resolveMapping matches the Mapping against rd.sum.Columns; line is where
// the column names are (0 for binary formats).
func (rd *reader) resolveMapping(line int) (*plan, error) {
	p, err := rd.opt.Mapping.resolve(rd.sum.Columns, rd.opt.ZSunPc)
	if err != nil {
		sentinel := ErrMapping
		for _, s := range []error{ErrColumn, ErrUnit} {
			if errors.Is(err, s) {
				sentinel = s
			}
		}
		if sentinel == ErrMapping {
			line = 0
		}
		return nil, &Error{Name: rd.name, Line: line, Msg: err.Error(), Err: sentinel}
	}
	return p, nil
}

func checkECSVNames(names []string, cols []Column) error {
	same := len(names) == len(cols)
	for i := 0; same && i < len(names); i++ {
		same = names[i] == cols[i].Name
	}
	if same {
		return nil
	}
	declared := make([]string, len(cols))
	for i, c := range cols {
		declared[i] = c.Name
	}
	return fmt.Errorf("the column-name row (%s) does not match the ECSV header's datatype list (%s)",
		listColumns(names), listColumns(declared))
}

// otherDelimiter reports a likely delimiter other than the expected one
// found in a line that split into a single field.
func otherDelimiter(line []byte, expected byte) (byte, bool) {
	for _, d := range []byte{';', '\t', '|', ','} {
		if d != expected && bytes.IndexByte(line, d) >= 0 {
			return d, true
		}
	}
	return 0, false
}

func delimName(d byte) string {
	switch d {
	case ',':
		return "comma"
	case ';':
		return "semicolon"
	case '\t':
		return "tab"
	case '|':
		return "pipe"
	case ' ':
		return "space"
	}
	return strconv.Quote(string(d))
}

func delimHint(format string, found byte) string {
	if format == "ecsv" && found == ',' {
		return ` (declare "# delimiter: ','" in the ECSV header for a comma-separated body)`
	}
	return " (convert the file, e.g. replace the " + delimName(found) + "s by commas)"
}

func truncate(s string, n int) string {
	if len(s) <= n {
		return s
	}
	return s[:n] + "…"
}

// readRows streams the data rows.
func (rd *reader) readRows(p *plan) error {
	ncols := len(rd.sum.Columns)
	var tr textRow
	first := true
	for {
		line, err := rd.next()
		if err == io.EOF {
			return nil
		}
		if err != nil {
			return err
		}
		if isBlank(line) || isComment(line) {
			continue
		}
		rd.sum.Rows++
		num := rd.lr.line
		fields, serr := rd.sp.split(line)
		if serr != nil {
			var se *splitError
			col := ""
			if errors.As(serr, &se) && se.col-1 < ncols {
				col = rd.sum.Columns[se.col-1].Name
			}
			if err := rd.reject(num, ReasonQuoting, col, "", line); err != nil {
				return err
			}
			continue
		}
		if first && len(fields) == 1 && ncols > 1 {
			if d, ok := otherDelimiter(line, rd.sp.delim); ok {
				return rd.errorf(num, ErrDelimiter,
					"first data row reads as a single field but contains %s; the rows must be %s-separated like the header%s",
					delimName(d), delimName(rd.sp.delim), delimHint(rd.sum.Format, d))
			}
		}
		first = false
		if len(fields) != ncols {
			if err := rd.reject(num, ReasonFieldCount, "", strconv.Itoa(len(fields))+" fields, header has "+strconv.Itoa(ncols), line); err != nil {
				return err
			}
			continue
		}
		tr.fields = fields
		s, bad, reason := p.convert(&tr)
		if bad != nil {
			if err := rd.reject(num, reason, bad.column, string(fields[bad.index]), line); err != nil {
				return err
			}
			continue
		}
		rd.sum.Accepted++
		if rd.fn != nil {
			if err := rd.fn(num, s); err != nil {
				if ex, ok := excluded(err); ok {
					if err := rd.exclude(num, ex, line); err != nil {
						return err
					}
					continue
				}
				return fmt.Errorf("%s:%d: %w", rd.name, num, err)
			}
		}
	}
}

// exclude records a usable row that the row function left out.
func (rd *reader) exclude(line int, ex *Exclude, raw []byte) error {
	rd.sum.Excluded++
	if rd.opt.Rejects == nil {
		return nil
	}
	err := rd.opt.Rejects.Reject(Rejection{Line: line, Excluded: ex.Reason, Column: ex.Column, Value: ex.Value, Raw: string(raw)})
	if err != nil {
		return fmt.Errorf("%s:%d: reject sink: %w", rd.name, line, err)
	}
	return nil
}

func (rd *reader) reject(line int, why Reason, column, value string, raw []byte) error {
	rd.sum.Rejected[why]++
	if rd.opt.Rejects == nil {
		return nil
	}
	err := rd.opt.Rejects.Reject(Rejection{Line: line, Reason: why, Column: column, Value: value, Raw: string(raw)})
	if err != nil {
		return fmt.Errorf("%s:%d: reject sink: %w", rd.name, line, err)
	}
	return nil
}
