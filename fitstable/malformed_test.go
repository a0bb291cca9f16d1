package fitstable

import (
	"bytes"
	"compress/gzip"
	"errors"
	"fmt"
	"os"
	"slices"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func referenceBytes(t testing.TB) []byte {
	b, err := os.ReadFile("testdata/reference.fits")
	require.NoError(t, err)
	return b
}

// hduStart returns the offset of the header of HDU number n (0 = primary)
// in a FITS file, found by its XTENSION card at a block boundary.
func hduStart(t *testing.T, b []byte, n int) int {
	if n == 0 {
		return 0
	}
	seen := 0
	for off := BlockSize; off < len(b); off += BlockSize {
		if bytes.HasPrefix(b[off:], []byte("XTENSION=")) {
			seen++
			if seen == n {
				return off
			}
		}
	}
	t.Fatalf("no HDU %d", n)
	return 0
}

// dataStart returns the offset of the data of the HDU whose header starts
// at start: the block after the one holding its END card.
func dataStart(t *testing.T, b []byte, start int) int {
	for off := start; off+CardSize <= len(b); off += CardSize {
		if isEndCard(b[off : off+CardSize]) {
			return start + ((off-start)/BlockSize+1)*BlockSize
		}
	}
	t.Fatal("no END card")
	return 0
}

// setCard replaces the card with the keyword in the header starting at
// start by the given card text (padded to 80 characters).
func setCard(t *testing.T, b []byte, start int, keyword, card string) []byte {
	out := bytes.Clone(b)
	for off := start; off < len(b); off += CardSize {
		if strings.TrimRight(string(b[off:off+8]), " ") == keyword {
			copy(out[off:off+CardSize], fmt.Sprintf("%-80s", card))
			return out
		}
	}
	t.Fatalf("no card %s", keyword)
	return nil
}

// readAll opens b and reads every row of the selected table, calling every
// accessor on every column.
func readAll(b []byte, opt Options) (rows int64, err error) {
	r, err := NewReader(bytes.NewReader(b), opt)
	if err != nil {
		return 0, err
	}
	for r.Next() {
		for i := range r.Columns() {
			r.Float64(i)
			r.Int64(i)
			r.Uint64(i)
			r.Bool(i)
			r.String(i)
			r.Format(i)
		}
	}
	return r.Row(), r.Err()
}

func TestMalformedFiles(t *testing.T) {
	ref := referenceBytes(t)
	stars := hduStart(t, ref, 1)
	extra := hduStart(t, ref, 3)
	starsData := dataStart(t, ref, stars)
	opt := Options{Name: "bad.fits", ExtName: "STARS"}

	cases := []struct {
		name     string
		data     []byte
		opt      Options
		sentinel error
		want     []string
	}{
		{"empty", nil, opt, ErrNotFITS, []string{"bad.fits", "empty"}},
		{"not FITS", []byte("period,color\n1,2\n"), opt, ErrNotFITS, []string{"SIMPLE  = T"}},
		{"cut in the primary header", ref[:1000], opt, ErrTruncated, []string{"bad.fits: primary HDU", "inside a header block (1000 of its 2880 bytes"}},
		{"cut in the primary data", ref[:BlockSize+10], opt, ErrTruncated, []string{"primary HDU", "10 bytes into this HDU's 30 bytes of data"}},
		{"cut in the STARS header", ref[:stars+500], opt, ErrTruncated, []string{"HDU 1", "inside a header block"}},
		{"cut in the rows", ref[:starsData+200], opt, ErrTruncated,
			[]string{"HDU 1 (EXTNAME 'STARS'), keyword NAXIS2, row 3", "ends inside row 3 of NAXIS2 = 7", "cut off, or NAXIS2 is larger"}},
		{"cut in the padding", ref[:starsData+BlockSize-100], opt, ErrTruncated,
			[]string{"HDU 1 (EXTNAME 'STARS')", "last 2880-byte block of the table is incomplete (the file ends 100 bytes short"}},
		{"NAXIS2 too large", setCard(t, ref, stars, "NAXIS2", "NAXIS2  =                  700"), opt, ErrTruncated,
			[]string{"keyword NAXIS2", "NAXIS2 = 700"}},
		{"NAXIS2 too small", setCard(t, ref, stars, "NAXIS2", "NAXIS2  =                    5"), opt, ErrFormat,
			[]string{"keyword NAXIS2", "padding after the NAXIS2 = 5 rows is not zero"}},
		{"NAXIS1 disagrees", setCard(t, ref, stars, "NAXIS1", "NAXIS1  =                  100"), opt, ErrFormat,
			[]string{"keyword NAXIS1", "NAXIS1 = 100 bytes per row", "NAXIS1 and the TFORMn disagree"}},
		{"bad TFORM code", setCard(t, ref, stars, "TFORM2", "TFORM2  = 'Z       '"), opt, ErrFormat,
			[]string{"keyword TFORM2", `column "u8"`, `TFORM "Z" has type code "Z"`, "L X B I J K A E D C M P Q"}},
		{"TFORM not a string", setCard(t, ref, stars, "TFORM3", "TFORM3  = 5"), opt, ErrFormat,
			[]string{"keyword TFORM3", `column "i16"`, "quoted string"}},
		{"TFORM missing", setCard(t, ref, stars, "TFORM4", "COMMENT TFORM4 was here"), opt, ErrFormat,
			[]string{"keyword TFORM4", "TFORM4 is missing"}},
		{"BITPIX not an integer", setCard(t, ref, stars, "BITPIX", "BITPIX  = 'eight'"), opt, ErrFormat,
			[]string{"HDU 1", "keyword BITPIX", "must be an integer"}},
		{"no END in the primary header", setCard(t, ref, 0, "END", "COMMENT no end"), opt, ErrFormat,
			[]string{"primary HDU", "no END card"}},
		{"no END in the table header", setCard(t, ref, stars, "END", "COMMENT no end"), opt, ErrFormat,
			[]string{"HDU 1 (EXTNAME 'STARS')", "no END card"}},
		{"TNULL not an integer", setCard(t, ref, extra, "TNULL3", "TNULL3  = 'none'"), Options{ExtName: "EXTRA"}, ErrFormat,
			[]string{"keyword TNULL3", `column "nulled"`}},
		{"unknown extension", ref, Options{Name: "bad.fits", ExtName: "CATALOG"}, ErrNoTable,
			[]string{"no extension with EXTNAME 'CATALOG'", "HDU 1 'STARS' (BINTABLE)"}},
		{"XTENSION not first", setCard(t, ref, stars, "XTENSION", "COMMENT gone"), opt, ErrNoTable,
			[]string{"no extension with EXTNAME 'STARS'"}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, err := readAll(c.data, c.opt)
			require.Error(t, err)
			require.ErrorIs(t, err, c.sentinel, err.Error())
			for _, w := range c.want {
				assert.Contains(t, err.Error(), w)
			}
			var e *Error
			require.ErrorAs(t, err, &e)
		})
	}
}

func TestVectorColumnReadsOtherColumns(t *testing.T) {
	// A table with an unsupported column still reads; the column says why.
	r, _ := openFile(t, "testdata/reference.fits", Options{ExtName: "STARS"})
	c := r.Columns()[r.Table().ColumnIndex("vec")]
	assert.False(t, c.Readable())
	assert.Equal(t, `TFORM "3E" is a vector column (3 values per row); only one value per row is read`, c.Datatype())
}

func TestGzipDamaged(t *testing.T) {
	var buf bytes.Buffer
	zw := gzip.NewWriter(&buf)
	_, err := zw.Write(referenceBytes(t))
	require.NoError(t, err)
	require.NoError(t, zw.Close())
	cut := buf.Bytes()[:buf.Len()/2]
	_, err = readAll(cut, Options{Name: "cut.fits.gz", ExtName: "EXTRA"})
	require.Error(t, err)
	assert.Contains(t, err.Error(), "cut.fits.gz")
	_, err = readAll([]byte{0x1f, 0x8b, 0, 0}, Options{Name: "tiny.gz"})
	require.ErrorIs(t, err, ErrFormat)
	assert.Contains(t, err.Error(), "gzip header")
}

func TestParseCardValues(t *testing.T) {
	// Source: FITS Standard 4.0 §4.2 (value formats): quotes doubled inside
	// strings, trailing blanks insignificant, D exponents, T/F logicals.
	cases := []struct {
		card string
		kind Kind
		str  string
		f    float64
		i    int64
	}{
		{"EXTNAME = 'it''s a ''test''  '   / a comment", StringValue, "it's a 'test'", 0, 0},
		{"TUNIT1  = '  lead'", StringValue, "  lead", 0, 0},
		{"TUNIT1  = ''", StringValue, "", 0, 0},
		{"EXTEND  =                    T", LogicalValue, "", 0, 0},
		{"NAXIS1  =                  -42 / width", IntegerValue, "", -42, -42},
		{"TZERO1  =  9223372036854775808", IntegerValue, "", 9223372036854775808, 0},
		{"TSCAL1  =             1.5D-02", FloatValue, "", 0.015, 0},
		{"TSCAL1  =               -3.E+2", FloatValue, "", -300, 0},
		{"TSCAL1  =                  .25", FloatValue, "", 0.25, 0},
		{"BLANK   =", Undefined, "", 0, 0},
		{"BAD     = Inf", OtherValue, "", 0, 0},
		{"BAD     = 0x10", OtherValue, "", 0, 0},
		{"BAD     = 'never closed", OtherValue, "", 0, 0},
		{"COMMENT = 'not a value'", NoValue, "", 0, 0},
		{"HIERARCH long.key = 5", NoValue, "", 0, 0},
	}
	for _, c := range cases {
		card, ok := parseCard([]byte(fmt.Sprintf("%-80s", c.card)))
		require.True(t, ok)
		assert.Equal(t, c.kind, card.Kind, c.card)
		switch c.kind {
		case StringValue:
			assert.Equal(t, c.str, card.Str, c.card)
		case IntegerValue:
			assert.Equal(t, c.f, card.Float, c.card)
			assert.Equal(t, c.i, card.Int, c.card)
		case FloatValue:
			assert.InDelta(t, c.f, card.Float, 1e-15, c.card)
		}
	}
	c, _ := parseCard([]byte(fmt.Sprintf("%-80s", "TFORM1  = 'E       '           / a float")))
	assert.Equal(t, "a float", c.Comment)
	_, ok := parseCard(append([]byte("NAXIS   = 2\x00"), bytes.Repeat([]byte(" "), 68)...))
	assert.False(t, ok, "a NUL byte is not header text")
}

func TestParseTFORM(t *testing.T) {
	// Source: FITS Standard 4.0 Table 18 (bytes per element of each code).
	cases := []struct {
		form          string
		code          byte
		repeat, width int64
	}{
		{"D", 'D', 1, 8}, {"1E", 'E', 1, 4}, {"20A", 'A', 20, 20}, {"K", 'K', 1, 8},
		{"13X", 'X', 13, 2}, {"1PE(5)", 'P', 1, 8}, {"1QD", 'Q', 1, 16}, {"2C", 'C', 2, 16},
		{"0J", 'J', 0, 0}, {" 3I ", 'I', 3, 6},
	}
	for _, c := range cases {
		code, repeat, width, err := parseTFORM(c.form)
		require.NoError(t, err, c.form)
		assert.Equal(t, c.code, code, c.form)
		assert.Equal(t, c.repeat, repeat, c.form)
		assert.Equal(t, c.width, width, c.form)
	}
	for _, bad := range []string{"", "12", "F", "1Z", "99999999999999999999E"} {
		_, _, _, err := parseTFORM(bad)
		assert.Error(t, err, bad)
	}
}

// padTo pads b with the byte to a whole number of 2880-byte blocks.
func padTo(b []byte, with byte) []byte {
	out := bytes.Clone(b)
	for len(out)%BlockSize != 0 {
		out = append(out, with)
	}
	return out
}

// sections splits a well-formed file into its first two HDUs, each header
// without the blanks after END and each data part without trailing zeros.
// Padding is the bulk of a small FITS file; fuzz inputs without it are a
// tenth of the size, so the fuzzer spends its time on cards and rows.
func sections(t testing.TB, b []byte) (h0, d0, h1, d1 []byte) {
	var parts [][]byte
	start := 0
	for k := 0; k < 2; k++ {
		end := start
		for !isEndCard(b[end : end+CardSize]) {
			end += CardSize
		}
		data := start + ((end-start)/BlockSize+1)*BlockSize
		next := data
		for next < len(b) && !bytes.HasPrefix(b[next:], []byte("XTENSION=")) {
			next += BlockSize
		}
		parts = append(parts, b[start:end+CardSize], bytes.TrimRight(b[data:next], "\x00"))
		start = next
	}
	return parts[0], parts[1], parts[2], parts[3]
}

// FuzzReader: no input makes the reader panic, hang or allocate without
// bound; whatever it reads, it reads as many rows as it reports. An input
// is the primary header, its data, an extension's header and its data,
// each without padding: the file read is those padded to whole blocks, and
// then the same four run together unpadded (truncations, missing blocks).
func FuzzReader(f *testing.F) {
	h0, d0, h1, d1 := sections(f, referenceBytes(f))
	f.Add(h0, d0, h1, d1)
	golden, err := os.ReadFile("testdata/written_by_fitstable.fits")
	require.NoError(f, err)
	h0, d0, h1, d1 = sections(f, golden)
	f.Add(h0, d0, h1, d1)
	f.Add([]byte("SIMPLE  =                    T"), []byte{}, []byte("XTENSION= 'BINTABLE'"), []byte{1})
	f.Fuzz(func(t *testing.T, h0, d0, h1, d1 []byte) {
		padded := slices.Concat(padTo(h0, ' '), padTo(d0, 0), padTo(h1, ' '), padTo(d1, 0))
		for _, in := range [][]byte{padded, slices.Concat(h0, d0, h1, d1)} {
			for _, opt := range []Options{{}, {ExtNumber: 1}, {ExtName: "EXTRA"}} {
				r, err := NewReader(bytes.NewReader(in), opt)
				if err != nil {
					var e *Error
					if !errors.As(err, &e) {
						t.Fatalf("error is not an *Error: %v", err)
					}
					continue
				}
				n := int64(0)
				for r.Next() {
					n++
					for i := range r.Columns() {
						r.Float64(i)
						r.Int64(i)
						r.Uint64(i)
						r.Bool(i)
						r.Format(i)
					}
				}
				if r.Row() != n {
					t.Fatalf("Row() = %d after %d rows", r.Row(), n)
				}
			}
		}
	})
}

// The fuzz seeds' compact form stands for the files they come from.
func TestFuzzSections(t *testing.T) {
	golden, err := os.ReadFile("testdata/written_by_fitstable.fits")
	require.NoError(t, err)
	h0, d0, h1, d1 := sections(t, golden)
	assert.True(t, bytes.Equal(golden, slices.Concat(padTo(h0, ' '), padTo(d0, 0), padTo(h1, ' '), padTo(d1, 0))))
	assert.Less(t, len(h0)+len(d0)+len(h1)+len(d1), len(golden)/2)
}
