package catalog

import (
	"bytes"
	"compress/gzip"
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// Messages that misled, each with the input that caused it (issue 13).

func gzipBytes(t *testing.T, b []byte) []byte {
	t.Helper()
	var buf bytes.Buffer
	zw := gzip.NewWriter(&buf)
	_, err := zw.Write(b)
	require.NoError(t, err)
	require.NoError(t, zw.Close())
	return buf.Bytes()
}

// randomText returns n random bytes with no NUL and no line break, the
// worst case for the old reader: the whole thing was one "header row",
// split at its commas into "columns" and listed in the message.
func randomBinary(n int, seed uint64) []byte {
	r := rand.New(rand.NewPCG(seed, 1))
	b := make([]byte, n)
	for i := range b {
		for b[i] == 0 || b[i] == '\n' {
			b[i] = byte(r.UintN(256))
		}
	}
	return b
}

func readBytes(t *testing.T, b []byte, format string) (Summary, error) {
	t.Helper()
	var rejects []Rejection
	return Read(bytes.NewReader(b), Options{Mapping: directMapping, Name: "cat", Format: format, Rejects: sliceSink{&rejects}}, nil)
}

// A gzip file of random bytes, and a plain binary file, are called binary
// data, not a table with strange columns or the wrong delimiter.
func TestBinaryIsNotATextTable(t *testing.T) {
	for seed := range uint64(20) {
		raw := randomBinary(3000, seed)
		for _, in := range [][]byte{raw, gzipBytes(t, raw)} {
			_, err := readBytes(t, in, "auto")
			require.Error(t, err)
			assert.ErrorIs(t, err, ErrFormat)
			msg := err.Error()
			assert.Contains(t, msg, "so this is binary data, not a text table")
			assert.NotContains(t, msg, "columns found")
			assert.NotContains(t, msg, "separated")
			assert.Less(t, len(msg), 400, "the message quotes none of the bytes")
		}
	}
	// A header in another encoding (Latin-1 µ and °) is still text.
	_, err := readBytes(t, []byte("prot,bprp,mg,z,note\xb5\xb0\n1,1,5,10,x\n"), "auto")
	assert.NoError(t, err)
}

// Bytes appended after a gzip stream used to be reported as "invalid
// header" at the line after the last one; the message now says what is
// wrong with the file. A truncated stream and a damaged checksum are named
// too.
func TestGzipTailMessages(t *testing.T) {
	var text strings.Builder
	text.WriteString("prot,bprp,mg,z\n")
	for range 3000 {
		text.WriteString("12,1.1,5.2,30\n")
	}
	gz := gzipBytes(t, []byte(text.String()))

	_, err := readBytes(t, append(append([]byte{}, gz...), "appended text\n"...), "auto")
	require.Error(t, err)
	assert.Contains(t, err.Error(), "cat: the gzip stream ends (after line 3001 of the decompressed text) but more bytes follow that are not another gzip member")
	assert.NotContains(t, err.Error(), "invalid header")
	assert.NotContains(t, err.Error(), "cat:3002")

	_, err = readBytes(t, gz[:len(gz)-20], "auto")
	require.Error(t, err)
	assert.Contains(t, err.Error(), "the gzip stream is cut short")

	bad := append([]byte{}, gz...)
	bad[len(bad)-6] ^= 0xff // CRC-32 in the trailer (RFC 1952, section 2.3)
	_, err = readBytes(t, bad, "auto")
	require.Error(t, err)
	assert.Contains(t, err.Error(), "the gzip checksum does not match")

	// Two gzip members one after the other are one valid file (RFC 1952,
	// section 2.2): not an error.
	_, err = readBytes(t, append(gzipBytes(t, []byte("prot,bprp,mg,z\n1,1,5,10\n")), gzipBytes(t, []byte("2,1,5,10\n"))...), "auto")
	assert.NoError(t, err)
}

// An ECSV header line indented before its "#" ended the header early, and
// the indented line was then read as the column-name row and reported as
// a mismatch with the datatype list.
func TestECSVIndentedHeaderLine(t *testing.T) {
	in := "# %ECSV 1.0\n# ---\n# datatype:\n# - {name: prot, unit: d, datatype: float64}\n" +
		"\t# - {name: bprp, unit: mag, datatype: float64}\n# - {name: mg, unit: mag, datatype: float64}\n" +
		"# - {name: z, unit: pc, datatype: float64}\nprot bprp mg z\n10 1 5 30\n"
	_, err := readBytes(t, []byte(in), "auto")
	require.Error(t, err)
	assert.Contains(t, err.Error(), "cat:5: this ECSV header line has a tab before its \"#\"")
	assert.NotContains(t, err.Error(), "does not match")

	// A tab inside the YAML (after "# ") was already named as such.
	_, err = readBytes(t, []byte(strings.Replace(in, "\t# - {name: bprp", "#\t- {name: bprp", 1)), "auto")
	require.Error(t, err)
	assert.Contains(t, err.Error(), "cat:5: ECSV header is not valid YAML: this line is indented with a tab")
}

// Go's own number literals are not numbers in a catalog: 1_0.5 and 0x1p3
// parsed as 10.5 and 8. They are rejected as not numbers, with their line
// and column; ordinary spellings, exponents and signs still read.
func TestGoLiteralsAreNotNumbers(t *testing.T) {
	in := "prot,bprp,mg,z\n1_0.5,1,5,10\n0x1p3,1,5,10\n12,0x10,5,10\n12,1,5,1_000\n" +
		"+12.5,1.,5e0,-1.5E+1\n.5,1,5,10\n"
	c, err := readString(t, in, directMapping)
	require.NoError(t, err)
	assert.Equal(t, []int{6, 7}, c.lines)
	assert.Equal(t, 12.5, c.stars[0].PeriodD)
	assert.Equal(t, -15.0, c.stars[0].ZPc)
	want := []struct {
		line   int
		column string
		value  string
	}{{2, "prot", "1_0.5"}, {3, "prot", "0x1p3"}, {4, "bprp", "0x10"}, {5, "z", "1_000"}}
	require.Len(t, c.rejects, len(want))
	for i, w := range want {
		assert.Equal(t, w.line, c.rejects[i].Line)
		assert.Equal(t, ReasonNotNumeric, c.rejects[i].Reason)
		assert.Equal(t, w.column, c.rejects[i].Column)
		assert.Equal(t, w.value, c.rejects[i].Value)
	}
	// inf and nan are numbers, refused as not finite (not "not a number").
	c, err = readString(t, "prot,bprp,mg,z\n12,1,5,inf\n12,1,5,-Infinity\n12,NaN,5,1\n1,1,5,1\n", directMapping)
	require.NoError(t, err)
	assert.Equal(t, 3, c.sum.Rejected[ReasonNotFinite])
}

// A declared format is honoured: ECSV declared for a plain CSV file, or
// CSV for an ECSV file, is an error naming both.
func TestDeclaredFormatHonoured(t *testing.T) {
	_, err := readBytes(t, []byte("prot,bprp,mg,z\n12,1,5,10\n"), "ecsv")
	require.Error(t, err)
	assert.ErrorIs(t, err, ErrFormat)
	assert.Contains(t, err.Error(), `the declared format is "ecsv", but the file is plain CSV`)
	ecsv := "# %ECSV 1.0\n# ---\n# datatype:\n# - {name: prot, datatype: float64}\n# - {name: bprp, datatype: float64}\n" +
		"# - {name: mg, datatype: float64}\n# - {name: z, datatype: float64}\nprot bprp mg z\n10 1 5 30\n"
	_, err = readBytes(t, []byte(ecsv), "csv")
	require.Error(t, err)
	assert.Contains(t, err.Error(), `the declared format is "csv", but the file is ECSV`)
	_, err = readBytes(t, []byte(ecsv), "ecsv")
	assert.NoError(t, err)
}

// A positive parallax so small that 1000/plx overflows gave a star at an
// infinite distance with M_V and z of −Inf (found by FuzzReadFITS; the
// input is kept in testdata/fuzz). It is rejected like a parallax ≤ 0.
func TestTinyParallaxRejected(t *testing.T) {
	c, err := readString(t, "prot,color,app_mag,plx,ra,dec\n10,0.7,12,1e-320,10,20\n10,0.7,12,2,10,20\n", exampleMapping)
	require.NoError(t, err)
	require.Len(t, c.rejects, 1)
	assert.Equal(t, ReasonParallax, c.rejects[0].Reason)
	assert.Equal(t, "plx", c.rejects[0].Column)
	assert.Equal(t, []int{3}, c.lines)
}
