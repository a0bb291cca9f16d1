package catalog

import (
	"bytes"
	"compress/gzip"
	"crypto/sha256"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/fitstable"
	"spinpop/internal/testref"
	"spinpop/parquettable"
)

var exampleMapping = Mapping{Period: "prot", Color: "color", AppMag: "app_mag", Parallax: "plx", RA: "ra", Dec: "dec"}

// checkExample compares stars read from a copy of the example catalog with
// the values astropy and numpy computed (testdata/catalog_example.py).
func checkExample(t *testing.T, stars []Star) {
	expected := testref.ReadCSV(t, "../../testdata/catalog_example_expected.csv")
	j := 0
	for _, rec := range expected {
		if rec[3] == "nan" {
			continue
		}
		want := make([]float64, 5)
		for i := range want {
			var err error
			want[i], err = strconv.ParseFloat(rec[i+1], 64)
			require.NoError(t, err)
		}
		require.Less(t, j, len(stars))
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
}

func readPath(t *testing.T, path string, opt Options) ([]Star, []Rejection, Summary, error) {
	var stars []Star
	var rejects []Rejection
	opt.Rejects = sliceSink{&rejects}
	if opt.ZSunPc == 0 {
		opt.ZSunPc = 20.8
	}
	sum, err := ReadFile(path, opt, func(_ int, s Star) error { stars = append(stars, s); return nil })
	return stars, rejects, sum, err
}

func TestReadFITSFromAstropy(t *testing.T) {
	const path = "../../testdata/catalog_example.fits.gz"
	for _, ext := range []string{"STARS", "stars", "2", ""} {
		t.Run("extension="+ext, func(t *testing.T) {
			opt := Options{Mapping: exampleMapping, Extension: ext, Format: "fits"}
			if ext == "" {
				// The first binary table is the one-row RUN table, which
				// has none of the columns.
				_, _, _, err := readPath(t, path, opt)
				require.ErrorIs(t, err, ErrColumn)
				assert.Contains(t, err.Error(), `"survey", "release"`)
				return
			}
			stars, rejects, sum, err := readPath(t, path, opt)
			require.NoError(t, err)
			assert.Equal(t, "fits", sum.Format)
			assert.True(t, sum.Compressed)
			assert.Equal(t, 2, sum.HDU)
			assert.Equal(t, "STARS", sum.ExtName)
			require.Len(t, sum.Columns, 8)
			assert.Equal(t, Column{Name: "plx", Unit: "mas", Datatype: "float64"}, sum.Columns[4])
			assert.Equal(t, Column{Name: "star_id", Datatype: "int64"}, sum.Columns[0])
			assert.Equal(t, 12, sum.Rows)
			// The masked parallax is NaN in FITS: a missing value, row 6.
			require.Len(t, rejects, 1)
			assert.Equal(t, Rejection{Line: 6, Reason: ReasonMissing, Column: "plx", Value: "",
				Raw: rejects[0].Raw}, rejects[0])
			assert.Contains(t, rejects[0].Raw, "plx=, ra=")
			raw, err := os.ReadFile(path)
			require.NoError(t, err)
			assert.Equal(t, sha256.Sum256(raw), sum.SHA256, "hash of the file as stored")
			assert.Equal(t, int64(len(raw)), sum.Bytes)
			checkExample(t, stars)
		})
	}
}

// writeExampleFITS converts the example ECSV into a FITS table with our
// writer, giving plx the unit asked for.
func writeExampleFITS(t testing.TB, path, plxUnit string) {
	var rows [][]float64
	recs := readECSVBody(t, "../../testdata/catalog_example.ecsv")
	for _, r := range recs {
		row := make([]float64, 6)
		for i := range row {
			row[i] = math.NaN()
			if v, err := strconv.ParseFloat(r[i+1], 64); err == nil {
				row[i] = v
			}
		}
		rows = append(rows, row)
	}
	cols := []fitstable.WriteColumn{
		{Name: "prot", Unit: "d", Type: fitstable.Float64}, {Name: "color", Unit: "mag", Type: fitstable.Float64},
		{Name: "app_mag", Unit: "mag", Type: fitstable.Float64}, {Name: "plx", Unit: plxUnit, Type: fitstable.Float64},
		{Name: "ra", Unit: "deg", Type: fitstable.Float64}, {Name: "dec", Unit: "deg", Type: fitstable.Float64},
	}
	w, err := fitstable.Create(path, "CATALOG", cols)
	require.NoError(t, err)
	for _, r := range rows {
		for i, v := range r {
			w.SetFloat64(i, v)
		}
		require.NoError(t, w.WriteRow())
	}
	require.NoError(t, w.Close())
}

// readECSVBody returns the data rows of a space-delimited ECSV file.
func readECSVBody(t testing.TB, path string) [][]string {
	b, err := os.ReadFile(path)
	require.NoError(t, err)
	var out [][]string
	sp := splitter{delim: ' '}
	for i, line := range strings.Split(strings.TrimSpace(string(b)), "\n") {
		if strings.HasPrefix(line, "#") || i == 0 {
			continue
		}
		f, err := sp.split([]byte(line))
		require.NoError(t, err)
		rec := make([]string, len(f))
		for k := range f {
			rec[k] = string(f[k])
		}
		if rec[0] == "star_id" {
			continue
		}
		out = append(out, rec)
	}
	return out
}

func TestReadFITSUnitsAndNulls(t *testing.T) {
	dir := t.TempDir()
	good := filepath.Join(dir, "good.fits")
	writeExampleFITS(t, good, "mas")
	stars, rejects, sum, err := readPath(t, good, Options{Mapping: exampleMapping})
	require.NoError(t, err)
	assert.Equal(t, "fits", sum.Format, "auto detects FITS")
	assert.False(t, sum.Compressed)
	require.Len(t, rejects, 1)
	assert.Equal(t, ReasonMissing, rejects[0].Reason, "the NaN parallax is a missing value")
	checkExample(t, stars)

	// A TUNIT that differs from the mapping's unit is refused, as in ECSV.
	arcsec := filepath.Join(dir, "arcsec.fits")
	writeExampleFITS(t, arcsec, "arcsec")
	_, _, _, err = readPath(t, arcsec, Options{Mapping: exampleMapping})
	require.ErrorIs(t, err, ErrUnit)
	assert.Contains(t, err.Error(), `column "plx" (Parallax) has unit "arcsec", but "mas" is required`)
	assert.Contains(t, err.Error(), "arcsec.fits")

	// Integer columns with TNULL, a string column mapped by mistake, and
	// an infinite value.
	path := filepath.Join(dir, "ints.fits")
	w, err := fitstable.Create(path, "", []fitstable.WriteColumn{
		{Name: "prot", Type: fitstable.Int32}, {Name: "bv", Type: fitstable.Float32},
		{Name: "mv", Type: fitstable.Float64}, {Name: "z", Type: fitstable.Int16}, {Name: "label", Type: fitstable.String, Width: 4},
	})
	require.NoError(t, err)
	for i, r := range [][]float64{{10, 1, 5, 20}, {math.NaN(), 1, 5, 20}, {10, 1, math.Inf(1), 20}, {10, 1, 5, math.NaN()}, {12, 0.8, 4, -30}} {
		for k, v := range r {
			w.SetFloat64(k, v)
		}
		w.SetString(4, "s"+strconv.Itoa(i))
		require.NoError(t, w.WriteRow())
	}
	require.NoError(t, w.Close())
	m := Mapping{Period: "prot", Color: "bv", AbsMag: "mv", Height: "z"}
	stars, rejects, sum, err = readPath(t, path, Options{Mapping: m, Format: "fits"})
	require.NoError(t, err)
	assert.Equal(t, 5, sum.Rows)
	assert.Equal(t, 2, sum.Accepted)
	assert.Equal(t, 2, sum.Rejected[ReasonMissing], "TNULL in the integer columns")
	assert.Equal(t, 1, sum.Rejected[ReasonNotFinite])
	require.Len(t, rejects, 3)
	assert.Equal(t, []int{2, 3, 4}, []int{rejects[0].Line, rejects[1].Line, rejects[2].Line}, "row numbers")
	assert.Equal(t, "prot", rejects[0].Column)
	assert.Equal(t, "+Inf", rejects[1].Value)
	assert.Equal(t, "z", rejects[2].Column)
	assert.Equal(t, -30.0, stars[1].ZPc)

	m.Color = "label"
	_, _, _, err = readPath(t, path, Options{Mapping: m})
	require.ErrorIs(t, err, ErrColumn)
	assert.Contains(t, err.Error(), `column "label" (Color) has datatype "string"`)
}

func TestReadFITSErrorsNameTheFile(t *testing.T) {
	raw, err := os.ReadFile("../../testdata/catalog_example.fits.gz")
	require.NoError(t, err)
	zr, err := gzip.NewReader(bytes.NewReader(raw))
	require.NoError(t, err)
	plain, err := io.ReadAll(zr)
	require.NoError(t, err)
	opt := Options{Mapping: exampleMapping, Name: "stars.fits", Extension: "STARS"}

	_, err = Read(bytes.NewReader(plain[:len(plain)-100]), opt, nil)
	require.ErrorIs(t, err, ErrFormat)
	require.ErrorIs(t, err, fitstable.ErrTruncated)
	assert.Contains(t, err.Error(), "stars.fits: HDU 2 (EXTNAME 'STARS'): the last 2880-byte block of the table is incomplete")

	opt.Extension = "CATALOG"
	_, err = Read(bytes.NewReader(plain), opt, nil)
	require.ErrorIs(t, err, fitstable.ErrNoTable)
	assert.Contains(t, err.Error(), "stars.fits: the file has no extension with EXTNAME 'CATALOG'; it has HDU 0 (primary), HDU 1 'RUN' (BINTABLE), HDU 2 'STARS' (BINTABLE)")

	opt.Extension = "0"
	_, err = Read(bytes.NewReader(plain), opt, nil)
	require.ErrorIs(t, err, ErrFormat)
	assert.Contains(t, err.Error(), "count from 1")
}

func TestDeclaredFormatMustMatch(t *testing.T) {
	csv := "prot,bprp,mg,z\n1,2,3,4\n"
	ecsv := "# %ECSV 1.0\n# ---\n# datatype:\n# - {name: prot, datatype: float64}\n# - {name: bprp, datatype: float64}\n" +
		"# - {name: mg, datatype: float64}\n# - {name: z, datatype: float64}\nprot bprp mg z\n1 2 3 4\n"
	fitsBytes, err := os.ReadFile("../../testdata/catalog_example.fits.gz")
	require.NoError(t, err)
	cases := []struct {
		content, declared, want string
	}{
		{csv, "ecsv", `the declared format is "ecsv", but the file is plain CSV`},
		{csv, "fits", `the declared format is "fits", but the file is plain CSV`},
		{csv, "parquet", `the declared format is "parquet", but the file is plain CSV`},
		{ecsv, "csv", `the declared format is "csv", but the file is ECSV`},
		{string(fitsBytes), "csv", `the declared format is "csv", but the file is a FITS file`},
		{string(fitsBytes), "parquet", `declare format "fits"`},
		{csv, "tsv", `unknown format "tsv"`},
	}
	for _, c := range cases {
		_, err := Read(strings.NewReader(c.content), Options{Mapping: directMapping, Format: c.declared, Name: "cat"}, nil)
		require.ErrorIs(t, err, ErrFormat, c.want)
		assert.Contains(t, err.Error(), c.want)
		assert.Contains(t, err.Error(), "cat")
	}
	for _, ok := range []struct{ content, declared string }{{csv, "csv"}, {csv, "auto"}, {csv, ""}, {ecsv, "ecsv"}} {
		_, err := Read(strings.NewReader(ok.content), Options{Mapping: directMapping, Format: ok.declared}, nil)
		require.NoError(t, err, ok.declared)
	}
	_, err = Read(strings.NewReader(csv), Options{Mapping: directMapping, Extension: "STARS", Name: "cat.csv"}, nil)
	require.ErrorIs(t, err, ErrFormat)
	assert.Contains(t, err.Error(), `a FITS extension ("STARS") was given, but this is a text table`)
}

func writeExampleParquet(t testing.TB, path string, plxUnit string) {
	recs := readECSVBody(t, "../../testdata/catalog_example.ecsv")
	cols := []parquettable.WriteColumn{
		{Name: "star_id", Type: parquettable.Int64}, {Name: "prot", Unit: "d", Type: parquettable.Float64},
		{Name: "color", Unit: "mag", Type: parquettable.Float32}, {Name: "app_mag", Unit: "mag", Type: parquettable.Float64},
		{Name: "plx", Unit: plxUnit, Type: parquettable.Float64}, {Name: "ra", Unit: "deg", Type: parquettable.Float64},
		{Name: "dec", Unit: "deg", Type: parquettable.Float64}, {Name: "name", Type: parquettable.String},
	}
	w, err := parquettable.Create(path, cols, parquettable.WriteOptions{RowGroupRows: 5})
	require.NoError(t, err)
	for _, r := range recs {
		for i := 0; i < 7; i++ {
			if v, err := strconv.ParseFloat(r[i], 64); err == nil {
				w.SetFloat64(i, v)
			} // else: left null (the masked parallax)
		}
		w.SetString(7, r[7])
		require.NoError(t, w.WriteRow())
	}
	require.NoError(t, w.Close())
}

func TestReadParquet(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "cat.parquet")
	writeExampleParquet(t, path, "mas")
	// color is written as float32 here: read it back at that precision.
	stars, rejects, sum, err := readPath(t, path, Options{Mapping: exampleMapping, Format: "parquet"})
	require.NoError(t, err)
	assert.Equal(t, "parquet", sum.Format)
	assert.Equal(t, 3, sum.RowGroups)
	assert.Equal(t, 12, sum.Rows)
	assert.Equal(t, Column{Name: "plx", Unit: "mas", Datatype: "float64"}, sum.Columns[4])
	require.Len(t, rejects, 1)
	assert.Equal(t, Rejection{Line: 6, Reason: ReasonMissing, Column: "plx", Value: "", Raw: rejects[0].Raw}, rejects[0], "the Parquet null is a missing value")
	raw, err := os.ReadFile(path)
	require.NoError(t, err)
	assert.Equal(t, sha256.Sum256(raw), sum.SHA256)
	assert.Equal(t, int64(len(raw)), sum.Bytes)
	checkExample(t, stars)

	// Through a stream without random access: copied to a temporary file,
	// same stars, same hash.
	var lines []int
	sum2, err := Read(io.MultiReader(bytes.NewReader(raw)), Options{Mapping: exampleMapping, ZSunPc: 20.8},
		func(line int, s Star) error { lines = append(lines, line); return nil })
	require.NoError(t, err)
	assert.Equal(t, sum.SHA256, sum2.SHA256)
	assert.Equal(t, sum.Bytes, sum2.Bytes)
	assert.Equal(t, []int{1, 2, 3, 4, 5, 7, 8, 9, 10, 11, 12}, lines)

	// Units, as for ECSV and FITS.
	bad := filepath.Join(dir, "arcsec.parquet")
	writeExampleParquet(t, bad, "arcsec")
	_, _, _, err = readPath(t, bad, Options{Mapping: exampleMapping})
	require.ErrorIs(t, err, ErrUnit)
	assert.Contains(t, err.Error(), `column "plx" (Parallax) has unit "arcsec"`)

	// A string column is not a number; a missing column names the others.
	m := exampleMapping
	m.Color = "name"
	_, _, _, err = readPath(t, path, Options{Mapping: m})
	require.ErrorIs(t, err, ErrColumn)
	assert.Contains(t, err.Error(), `datatype "string"`)
	m.Color = "colour"
	_, _, _, err = readPath(t, path, Options{Mapping: m})
	require.ErrorIs(t, err, ErrColumn)
	assert.Contains(t, err.Error(), `closest match: "color"`)

	// gzip-compressed Parquet and a FITS extension are refused clearly.
	var gz bytes.Buffer
	zw := gzip.NewWriter(&gz)
	zw.Write(raw)
	zw.Close()
	_, err = Read(&gz, Options{Mapping: exampleMapping, Name: "cat.parquet.gz"}, nil)
	require.ErrorIs(t, err, ErrFormat)
	assert.Contains(t, err.Error(), "gzip-compressed Parquet")
	_, _, _, err = readPath(t, path, Options{Mapping: exampleMapping, Extension: "1"})
	require.ErrorIs(t, err, ErrFormat)
	assert.Contains(t, err.Error(), "this is a Parquet file")
	// A truncated file.
	require.NoError(t, os.WriteFile(bad, raw[:len(raw)-20], 0o644))
	_, _, _, err = readPath(t, bad, Options{Mapping: exampleMapping})
	require.ErrorIs(t, err, ErrFormat)
	assert.Contains(t, err.Error(), "arcsec.parquet")
}

// A million FITS rows streamed through a pipe (no random access), gzip on
// the fly: heap stays bounded, as for gzip CSV in stream_test.go.
func TestStreamMillionRowsFITS(t *testing.T) {
	if testing.Short() {
		t.Skip("writes a million rows")
	}
	path := filepath.Join(t.TempDir(), "big.fits")
	w, err := fitstable.Create(path, "STARS", []fitstable.WriteColumn{
		{Name: "prot", Unit: "d", Type: fitstable.Float32}, {Name: "bv", Unit: "mag", Type: fitstable.Float32},
		{Name: "mv", Unit: "mag", Type: fitstable.Float32}, {Name: "z", Unit: "pc", Type: fitstable.Float32},
		{Name: "id", Type: fitstable.Int64},
	})
	require.NoError(t, err)
	const n = 1_000_000
	for i := 0; i < n; i++ {
		p := 0.5 + float64(i%4000)/100
		if i%1000 == 999 {
			p = math.NaN()
		}
		w.SetFloat64(0, p)
		w.SetFloat64(1, 0.5+float64(i%250)/100)
		w.SetFloat64(2, 4+float64(i%500)/100)
		w.SetFloat64(3, float64(i%1200)-600)
		w.SetInt64(4, int64(i))
		require.NoError(t, w.WriteRow())
	}
	require.NoError(t, w.Close())
	pr, pw := io.Pipe()
	go func() {
		f, err := os.Open(path)
		if err != nil {
			pw.CloseWithError(err)
			return
		}
		defer f.Close()
		zw, _ := gzip.NewWriterLevel(pw, gzip.BestSpeed)
		_, err = io.Copy(zw, f)
		if err == nil {
			err = zw.Close()
		}
		pw.CloseWithError(err)
	}()
	var peak uint64
	var ms runtime.MemStats
	accepted := 0
	sum, err := Read(pr, Options{Mapping: Mapping{Period: "prot", Color: "bv", AbsMag: "mv", Height: "z"}},
		func(row int, s Star) error {
			accepted++
			if accepted%100_000 == 0 {
				runtime.ReadMemStats(&ms)
				peak = max(peak, ms.HeapAlloc)
			}
			return nil
		})
	require.NoError(t, err)
	assert.True(t, sum.Compressed)
	assert.Equal(t, n, sum.Rows)
	assert.Equal(t, n/1000, sum.Rejected[ReasonMissing])
	assert.Equal(t, n-n/1000, sum.Accepted)
	// The table is 24 MB; buffers stay far below.
	assert.Less(t, peak, uint64(32<<20), "peak heap while streaming: %d bytes", peak)
}

// writeBenchCatalog writes n rows of the streaming-test columns as FITS or
// Parquet.
func writeBenchCatalog(b *testing.B, format string, n int) string {
	dir := b.TempDir()
	r := rand.New(rand.NewPCG(1, 2))
	if format == "fits" {
		path := filepath.Join(dir, "bench.fits")
		cols := []fitstable.WriteColumn{{Name: "prot", Unit: "d", Type: fitstable.Float64}, {Name: "color", Unit: "mag", Type: fitstable.Float64},
			{Name: "app_mag", Unit: "mag", Type: fitstable.Float64}, {Name: "plx", Unit: "mas", Type: fitstable.Float64},
			{Name: "ra", Unit: "deg", Type: fitstable.Float64}, {Name: "dec", Unit: "deg", Type: fitstable.Float64}}
		w, err := fitstable.Create(path, "", cols)
		require.NoError(b, err)
		for i := 0; i < n; i++ {
			for k, v := range []float64{0.5 + 40*r.Float64(), 0.5 + 2.5*r.Float64(), 9 + 7*r.Float64(), 0.5 + 10*r.Float64(), 360 * r.Float64(), 180*r.Float64() - 90} {
				w.SetFloat64(k, v)
			}
			require.NoError(b, w.WriteRow())
		}
		require.NoError(b, w.Close())
		return path
	}
	path := filepath.Join(dir, "bench.parquet")
	cols := []parquettable.WriteColumn{{Name: "prot", Unit: "d", Type: parquettable.Float64}, {Name: "color", Unit: "mag", Type: parquettable.Float64},
		{Name: "app_mag", Unit: "mag", Type: parquettable.Float64}, {Name: "plx", Unit: "mas", Type: parquettable.Float64},
		{Name: "ra", Unit: "deg", Type: parquettable.Float64}, {Name: "dec", Unit: "deg", Type: parquettable.Float64}}
	w, err := parquettable.Create(path, cols, parquettable.WriteOptions{})
	require.NoError(b, err)
	for i := 0; i < n; i++ {
		for k, v := range []float64{0.5 + 40*r.Float64(), 0.5 + 2.5*r.Float64(), 9 + 7*r.Float64(), 0.5 + 10*r.Float64(), 360 * r.Float64(), 180*r.Float64() - 90} {
			w.SetFloat64(k, v)
		}
		require.NoError(b, w.WriteRow())
	}
	require.NoError(b, w.Close())
	return path
}

// Rows per second for FITS and Parquet with positions converted from ICRS,
// the same columns as BenchmarkReadRows reads from CSV.
func BenchmarkReadRowsBinary(b *testing.B) {
	const n = 100_000
	m := Mapping{Period: "prot", Color: "color", AppMag: "app_mag", Parallax: "plx", RA: "ra", Dec: "dec"}
	for _, format := range []string{"fits", "parquet"} {
		b.Run(format, func(b *testing.B) {
			path := writeBenchCatalog(b, format, n)
			b.ReportAllocs()
			for b.Loop() {
				if _, err := ReadFile(path, Options{Mapping: m}, func(int, Star) error { return nil }); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(n)*float64(b.N)/b.Elapsed().Seconds(), "rows/s")
		})
	}
}
