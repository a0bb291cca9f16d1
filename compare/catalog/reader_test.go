package catalog

import (
	"bytes"
	"compress/gzip"
	"crypto/sha256"
	"errors"
	"math"
	"os"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/internal/testref"
)

// collected is what a test read produced.
type collected struct {
	lines   []int
	stars   []Star
	rejects []Rejection
	sum     Summary
}

type sliceSink struct{ r *[]Rejection }

func (s sliceSink) Reject(r Rejection) error { *s.r = append(*s.r, r); return nil }

func readString(t *testing.T, content string, m Mapping) (*collected, error) {
	t.Helper()
	c := &collected{}
	opt := Options{Mapping: m, ZSunPc: 20.8, Rejects: sliceSink{&c.rejects}, Name: "test.csv"}
	var err error
	c.sum, err = Read(strings.NewReader(content), opt, func(line int, s Star) error {
		c.lines = append(c.lines, line)
		c.stars = append(c.stars, s)
		return nil
	})
	return c, err
}

var directMapping = Mapping{Period: "prot", Color: "bprp", AbsMag: "mg", Height: "z"}

func TestReadCSVDirect(t *testing.T) {
	in := "# a comment before the header\n" +
		"\n" +
		"id,prot,bprp,mg,z\n" +
		"1, 12.5, 1.1, 5.2, -30\n" +
		"# a comment between rows\n" +
		"2,3.25,0.9,4.8,150.5\r\n" + // CRLF
		"3,\"7\",1.5,6.0,10" // no final newline
	c, err := readString(t, in, directMapping)
	require.NoError(t, err)
	assert.Equal(t, "csv", c.sum.Format)
	assert.Equal(t, 3, c.sum.HeaderLine)
	assert.Equal(t, []int{4, 6, 7}, c.lines)
	require.Len(t, c.stars, 3)
	assert.Equal(t, 12.5, c.stars[0].PeriodD)
	assert.Equal(t, 1.1, c.stars[0].Color)
	assert.Equal(t, 5.2, c.stars[0].AbsMag)
	assert.Equal(t, -30.0, c.stars[0].ZPc, "a Height column is used as it stands")
	assert.True(t, math.IsNaN(c.stars[0].DistPc))
	assert.True(t, math.IsNaN(c.stars[0].LDeg))
	assert.Equal(t, 7.0, c.stars[2].PeriodD)
	assert.Equal(t, 3, c.sum.Rows)
	assert.Equal(t, 3, c.sum.Accepted)
	assert.Zero(t, c.sum.RejectedTotal())
	// Common practice, no source: the reported hash is SHA-256 of the bytes
	// as given (crypto/sha256 is the reference).
	assert.Equal(t, sha256.Sum256([]byte(in)), c.sum.SHA256)
	assert.Equal(t, int64(len(in)), c.sum.Bytes)
}

func TestReadDerivedFromParallaxAndPosition(t *testing.T) {
	// l/b given: d = 1000/ϖ, M = m − 5 log10(d/10), z = d sin b + z☉.
	in := "prot,c,m,plx,l,b\n10,1.0,12.0,4.0,100,30\n10,1.0,12.0,2.0,-20,-45\n"
	m := Mapping{Period: "prot", Color: "c", AppMag: "m", Parallax: "plx", L: "l", B: "b"}
	c, err := readString(t, in, m)
	require.NoError(t, err)
	require.Len(t, c.stars, 2)
	s := c.stars[0]
	// Source: distance modulus and parallax definitions (common practice):
	// ϖ = 4 mas → 250 pc → M = 12 − 5 log10(25) = 5.0103; z = 250·½ + 20.8.
	assert.InDelta(t, 250.0, s.DistPc, 1e-12)
	assert.InDelta(t, 12-5*math.Log10(25), s.AbsMag, 1e-12)
	assert.InDelta(t, 250*0.5+20.8, s.ZPc, 1e-9)
	assert.Equal(t, 100.0, s.LDeg)
	assert.Equal(t, 340.0, c.stars[1].LDeg, "longitude wrapped into [0, 360)")
	assert.InDelta(t, 500*math.Sin(-math.Pi/4)+20.8, c.stars[1].ZPc, 1e-9)
}

func TestReadECSVFromAstropy(t *testing.T) {
	expected := testref.ReadCSV(t, "../../testdata/catalog_example_expected.csv")
	m := Mapping{Period: "prot", Color: "color", AppMag: "app_mag", Parallax: "plx", RA: "ra", Dec: "dec"}
	for _, file := range []string{"catalog_example.ecsv", "catalog_example_comma.ecsv"} {
		t.Run(file, func(t *testing.T) {
			var stars []Star
			var rejects []Rejection
			sum, err := ReadFile("../../testdata/"+file, Options{Mapping: m, ZSunPc: 20.8, Rejects: sliceSink{&rejects}},
				func(_ int, s Star) error { stars = append(stars, s); return nil })
			require.NoError(t, err)
			assert.Equal(t, "ecsv", sum.Format)
			assert.Equal(t, "1.0", sum.ECSVVersion)
			require.Len(t, sum.Columns, 8)
			assert.Equal(t, Column{Name: "plx", Unit: "mas", Datatype: "float64"}, sum.Columns[4])
			assert.Equal(t, Column{Name: "name", Datatype: "string"}, sum.Columns[7])
			// The masked parallax (an empty quoted field) is a missing value.
			require.Len(t, rejects, 1)
			assert.Equal(t, ReasonMissing, rejects[0].Reason)
			assert.Equal(t, "plx", rejects[0].Column)
			assert.Equal(t, 1, sum.Rejected[ReasonMissing])
			raw, err := os.ReadFile("../../testdata/" + file)
			require.NoError(t, err)
			assert.Equal(t, sha256.Sum256(raw), sum.SHA256)

			j := 0
			for _, rec := range expected {
				if rec[3] == "nan" {
					continue
				}
				want := make([]float64, 5)
				for i := range want {
					want[i], err = strconv.ParseFloat(rec[i+1], 64)
					require.NoError(t, err)
				}
				s := stars[j]
				j++
				// Source: astropy 5.2 SkyCoord(...).galactic and numpy in
				// testdata/catalog_example.py.
				assert.Less(t, testref.AngSepDeg(s.LDeg, s.BDeg, want[0], want[1]), 1e-9, "star %s", rec[0])
				assert.InDelta(t, want[2], s.DistPc, 1e-9*want[2])
				assert.InDelta(t, want[3], s.AbsMag, 1e-10)
				assert.InDelta(t, want[4], s.ZPc, 1e-7)
			}
			assert.Equal(t, len(stars), j)
		})
	}
}

func TestReadGzipDetected(t *testing.T) {
	var buf bytes.Buffer
	zw := gzip.NewWriter(&buf)
	_, err := zw.Write([]byte("prot,bprp,mg,z\n1,2,3,4\n5,6,7,8\n"))
	require.NoError(t, err)
	require.NoError(t, zw.Close())
	c, err := readString(t, buf.String(), directMapping)
	require.NoError(t, err)
	assert.True(t, c.sum.Compressed)
	assert.Len(t, c.stars, 2)
	assert.Equal(t, []int{2, 3}, c.lines, "line numbers count decompressed lines")
	assert.Equal(t, sha256.Sum256(buf.Bytes()), c.sum.SHA256, "hash of the compressed bytes as stored")
	assert.Equal(t, int64(buf.Len()), c.sum.Bytes)

	// A damaged gzip stream is an error, not a short catalog.
	damaged := buf.Bytes()[:buf.Len()-6]
	_, err = readString(t, string(damaged), directMapping)
	require.Error(t, err)
}

func TestRejectsEveryReason(t *testing.T) {
	in := "prot,c,m,plx,ra,dec\n" +
		"10,1,12,4,10,20\n" + //   2 ok
		",1,12,4,10,20\n" + //     3 missing period
		"abc,1,12,4,10,20\n" + //  4 not numeric
		"10,NaN,12,4,10,20\n" + // 5 NaN color
		"-1,1,12,4,10,20\n" + //   6 period ≤ 0
		"0,1,12,4,10,20\n" + //    7 period = 0
		"10,1,12,0,10,20\n" + //   8 parallax = 0
		"10,1,12,-2,10,20\n" + //  9 parallax < 0
		"10,1,12,4,10,95\n" + //   10 dec out of range
		"10,1,12,4,10\n" + //      11 too few fields
		"10,1,NA,4,10,20\n" + //   12 null marker
		"10,\"1,12,4,10,20\n" + // 13 unclosed quote
		"10,1,inf,4,10,20\n" + //  14 infinite
		"12,1,12,4,10,20\n" //     15 ok
	m := Mapping{Period: "prot", Color: "c", AppMag: "m", Parallax: "plx", RA: "ra", Dec: "dec"}
	c, err := readString(t, in, m)
	require.NoError(t, err)
	assert.Equal(t, []int{2, 15}, c.lines)
	assert.Equal(t, 14, c.sum.Rows)
	assert.Equal(t, 2, c.sum.Accepted)
	assert.Equal(t, 12, c.sum.RejectedTotal())
	want := []struct {
		line   int
		reason Reason
		column string
	}{
		{3, ReasonMissing, "prot"}, {4, ReasonNotNumeric, "prot"}, {5, ReasonNotFinite, "c"},
		{6, ReasonPeriod, "prot"}, {7, ReasonPeriod, "prot"}, {8, ReasonParallax, "plx"},
		{9, ReasonParallax, "plx"}, {10, ReasonPosition, "dec"}, {11, ReasonFieldCount, ""},
		{12, ReasonMissing, "m"}, {13, ReasonQuoting, "c"}, {14, ReasonNotFinite, "m"},
	}
	require.Len(t, c.rejects, len(want))
	for i, w := range want {
		r := c.rejects[i]
		assert.Equal(t, w.line, r.Line, "reject %d", i)
		assert.Equal(t, w.reason, r.Reason, "line %d", w.line)
		assert.Equal(t, w.column, r.Column, "line %d", w.line)
		assert.NotEmpty(t, r.Raw)
	}
	assert.Equal(t, "-1", c.rejects[3].Value)
	assert.Equal(t, 2, c.sum.Rejected[ReasonPeriod])
	assert.Equal(t, 2, c.sum.Rejected[ReasonParallax])
	assert.Equal(t, 2, c.sum.Rejected[ReasonMissing])
	for _, r := range Reasons() {
		assert.NotContains(t, r.String(), "reason ", "every reason has a text")
	}
}

func TestCSVRejectWriter(t *testing.T) {
	var buf bytes.Buffer
	w := NewCSVRejectWriter(&buf)
	opt := Options{Mapping: directMapping, Rejects: w}
	sum, err := Read(strings.NewReader("prot,bprp,mg,z\n-3,1,2,3\n1,x,2,3\n"), opt, nil)
	require.NoError(t, err, "rows were seen, none usable: not an error, the counts say so")
	assert.Equal(t, 2, sum.Rows)
	assert.Zero(t, sum.Accepted)
	require.NoError(t, w.Flush())
	assert.Equal(t, "line,reason,column,value,raw\n"+
		"2,period not positive,prot,-3,\"-3,1,2,3\"\n"+
		"3,not a number,bprp,x,\"1,x,2,3\"\n", buf.String())
}

func TestReadEmptyAndHeaderOnly(t *testing.T) {
	_, err := readString(t, "", directMapping)
	require.ErrorIs(t, err, ErrEmpty)
	assert.Contains(t, err.Error(), "test.csv")
	_, err = readString(t, "# only\n# comments\n\n", directMapping)
	require.ErrorIs(t, err, ErrEmpty)
	c, err := readString(t, "prot,bprp,mg,z\n", directMapping)
	require.ErrorIs(t, err, ErrNoRows)
	assert.Contains(t, err.Error(), "test.csv:1:")
	assert.Equal(t, sha256.Sum256([]byte("prot,bprp,mg,z\n")), c.sum.SHA256)
	// One row is valid data.
	c, err = readString(t, "prot,bprp,mg,z\n1,2,3,4", directMapping)
	require.NoError(t, err)
	assert.Len(t, c.stars, 1)
}

func TestReadWrongDelimiter(t *testing.T) {
	_, err := readString(t, "prot;bprp;mg;z\n1;2;3;4\n", directMapping)
	require.ErrorIs(t, err, ErrDelimiter)
	assert.Contains(t, err.Error(), "semicolon")
	assert.Contains(t, err.Error(), "test.csv:1:")
	_, err = readString(t, "prot\tbprp\tmg\tz\n1\t2\t3\t4\n", directMapping)
	require.ErrorIs(t, err, ErrDelimiter)
	assert.Contains(t, err.Error(), "tab")
	// Comma header, semicolon rows.
	_, err = readString(t, "prot,bprp,mg,z\n1;2;3;4\n", directMapping)
	require.ErrorIs(t, err, ErrDelimiter)
	assert.Contains(t, err.Error(), "test.csv:2:")
	// An ECSV whose body is comma-separated without declaring it.
	ecsv := "# %ECSV 1.0\n# ---\n# datatype:\n# - {name: prot, datatype: float64}\n" +
		"# - {name: bprp, datatype: float64}\n# - {name: mg, datatype: float64}\n# - {name: z, datatype: float64}\n" +
		"prot,bprp,mg,z\n1,2,3,4\n"
	_, err = readString(t, ecsv, directMapping)
	require.ErrorIs(t, err, ErrDelimiter)
	assert.Contains(t, err.Error(), "delimiter: ','")
}

func TestMissingColumnNamesClosestMatch(t *testing.T) {
	m := Mapping{Period: "prot", Color: "bp_rp", AppMag: "gmag", Parallax: "paralax", RA: "ra", Dec: "dec"}
	_, err := readString(t, "prot,bp_rp,gmag,parallax,ra,dec\n1,2,3,4,5,6\n", m)
	require.ErrorIs(t, err, ErrColumn)
	var e *Error
	require.True(t, errors.As(err, &e))
	assert.Equal(t, 1, e.Line)
	msg := err.Error()
	assert.Contains(t, msg, `Parallax column "paralax" is not in the header`)
	assert.Contains(t, msg, `"prot", "bp_rp", "gmag", "parallax", "ra", "dec"`)
	assert.Contains(t, msg, `closest match: "parallax"`)
}

func TestUnitMismatch(t *testing.T) {
	ecsv := "# %ECSV 1.0\n# ---\n# datatype:\n" +
		"# - {name: prot, unit: d, datatype: float64}\n" +
		"# - {name: c, unit: mag, datatype: float64}\n" +
		"# - {name: m, unit: mag, datatype: float64}\n" +
		"# - {name: plx, unit: arcsec, datatype: float64}\n" +
		"# - {name: l, unit: deg, datatype: float64}\n" +
		"# - {name: b, unit: deg, datatype: float64}\n" +
		"prot c m plx l b\n1 2 3 0.004 5 6\n"
	m := Mapping{Period: "prot", Color: "c", AppMag: "m", Parallax: "plx", L: "l", B: "b"}
	_, err := readString(t, ecsv, m)
	require.ErrorIs(t, err, ErrUnit)
	assert.Contains(t, err.Error(), `column "plx"`)
	assert.Contains(t, err.Error(), `"arcsec"`)
	assert.Contains(t, err.Error(), `"mas"`)
	// Spelled-out units are the same unit.
	ok := strings.Replace(ecsv, "unit: arcsec", "unit: milliarcsecond", 1)
	ok = strings.Replace(ok, "unit: d,", "unit: day,", 1)
	c, err := readString(t, ok, m)
	require.NoError(t, err)
	assert.Len(t, c.stars, 1)
	// A string column cannot be a number.
	bad := strings.Replace(ecsv, "{name: plx, unit: arcsec, datatype: float64}", "{name: plx, datatype: string}", 1)
	_, err = readString(t, bad, m)
	require.ErrorIs(t, err, ErrColumn)
	assert.Contains(t, err.Error(), "datatype")
}

func TestMappingValidation(t *testing.T) {
	cases := []struct {
		m    Mapping
		want string
	}{
		{Mapping{Color: "c", AbsMag: "a", Height: "h"}, "Period"},
		{Mapping{Period: "p", Color: "c", Height: "h"}, "AbsMag, or AppMag and Parallax"},
		{Mapping{Period: "p", Color: "c", AbsMag: "a"}, "Height, or Parallax and a position"},
		{Mapping{Period: "p", Color: "c", AbsMag: "a", Parallax: "x", RA: "r"}, "RA and Dec must be named together"},
	}
	for _, c := range cases {
		err := c.m.Validate()
		require.ErrorIs(t, err, ErrMapping)
		assert.Contains(t, err.Error(), c.want)
		_, err = readString(t, "p,c,a,h\n1,2,3,4\n", c.m)
		require.ErrorIs(t, err, ErrMapping)
	}
}

func TestMalformedFiles(t *testing.T) {
	_, err := readString(t, "prot,bprp\x00,mg,z\n", directMapping)
	require.ErrorIs(t, err, ErrFormat)
	assert.Contains(t, err.Error(), "NUL")

	long := "prot,bprp,mg,z\n" + strings.Repeat("1", maxLineBytes+10) + "\n"
	_, err = readString(t, long, directMapping)
	require.ErrorIs(t, err, ErrFormat)
	assert.Contains(t, err.Error(), "test.csv:2:")

	_, err = readString(t, "# %ECSV 1.0\n# datatype:\nprot\n1\n", directMapping)
	require.ErrorIs(t, err, ErrFormat)
	assert.Contains(t, err.Error(), "---")

	names := "# %ECSV 1.0\n# ---\n# datatype:\n# - {name: prot, datatype: float64}\n# - {name: bprp, datatype: float64}\n" +
		"prot mg\n1 2\n"
	_, err = readString(t, names, directMapping)
	require.ErrorIs(t, err, ErrFormat)
	assert.Contains(t, err.Error(), "test.csv:6:")
	assert.Contains(t, err.Error(), "does not match")

	// A callback error stops the read and names the line.
	_, err = Read(strings.NewReader("prot,bprp,mg,z\n1,2,3,4\n5,6,7,8\n"), Options{Mapping: directMapping},
		func(line int, s Star) error {
			if line == 3 {
				return errors.New("enough")
			}
			return nil
		})
	require.ErrorContains(t, err, "catalog:3: enough")
}

func TestExpectedUnit(t *testing.T) {
	// Common practice, no source: parallaxes in milliarcseconds, periods in days.
	assert.Equal(t, "mas", ExpectedUnit("Parallax"))
	assert.Equal(t, "d", ExpectedUnit("Period"))
	assert.Equal(t, "", ExpectedUnit("Mass"))
}
