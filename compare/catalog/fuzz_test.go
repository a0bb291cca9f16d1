package catalog

import (
	"bytes"
	"compress/gzip"
	"errors"
	"math"
	"os"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/require"
)

// Fuzz targets for the catalog readers, one per format (the format is
// taken from the content, so every target reaches the others' code too
// when the fuzzer mutates the first bytes). In `go test` they run over
// their seeds only; to fuzz, for instance:
//
//	go test ./compare/catalog -run XXX -fuzz FuzzReadCSV -fuzztime 60s
//
// The properties: no input makes Read panic or hang; an error about the
// file is an *Error naming it; a read that succeeds accounts for every row
// (accepted + rejected = rows, every rejection handed to the sink) and
// hands over only usable stars (finite values, period > 0).

// checkRead reads data with the mapping m and checks the properties.
func checkRead(t *testing.T, data []byte, format string, m Mapping) {
	var rejects []Rejection
	accepted := 0
	sum, err := Read(bytes.NewReader(data), Options{Mapping: m, ZSunPc: 20.8, Format: format, Rejects: sliceSink{&rejects}, Name: "fuzz.in"},
		func(_ int, s Star) error {
			for _, v := range []float64{s.PeriodD, s.Color, s.AbsMag, s.ZPc} {
				if math.IsNaN(v) || math.IsInf(v, 0) {
					t.Fatalf("star with a value that is not finite: %+v", s)
				}
			}
			if !(s.PeriodD > 0) {
				t.Fatalf("star with period %v", s.PeriodD)
			}
			accepted++
			return nil
		})
	if err != nil {
		var e *Error
		if !errors.As(err, &e) {
			t.Fatalf("error is not a *catalog.Error: %T %v", err, err)
		}
		if e.Name != "fuzz.in" {
			t.Fatalf("error names %q, not the file", e.Name)
		}
		return
	}
	if sum.Accepted != accepted {
		t.Fatalf("Summary.Accepted = %d, %d stars handed over", sum.Accepted, accepted)
	}
	if sum.Accepted+sum.RejectedTotal() != sum.Rows {
		t.Fatalf("accepted %d + rejected %d ≠ rows %d", sum.Accepted, sum.RejectedTotal(), sum.Rows)
	}
	if len(rejects) != sum.RejectedTotal() {
		t.Fatalf("%d rejections reached the sink, %d counted", len(rejects), sum.RejectedTotal())
	}
}

func gzipped(tb testing.TB, b []byte) []byte {
	var buf bytes.Buffer
	zw := gzip.NewWriter(&buf)
	_, err := zw.Write(b)
	require.NoError(tb, err)
	require.NoError(tb, zw.Close())
	return buf.Bytes()
}

func FuzzReadCSV(f *testing.F) {
	good := []byte("# comment\nid,prot,bprp,mg,z\n1,12.5,1.1,5.2,-30\n2,\"3.5\",0.9,NA,10\n3,-1,1,1,1\n4,1e3,0.5,4,1_0\n")
	f.Add(good)
	f.Add(gzipped(f, good))
	f.Add([]byte("prot;bprp;mg;z\n1;2;3;4\n"))
	f.Add([]byte("prot,bprp,mg,z\n\"1,2\",3,4\n1,2,3\n0x1p3,1,1,1\n"))
	f.Add([]byte("\xef\xbb\xbfprot,bprp,mg,z\r\n1,1,1,1\r\n"))
	f.Fuzz(func(t *testing.T, data []byte) { checkRead(t, data, "auto", directMapping) })
}

func FuzzReadECSV(f *testing.F) {
	for _, p := range []string{"../../testdata/catalog_example.ecsv", "../../testdata/catalog_example_comma.ecsv"} {
		b, err := os.ReadFile(p)
		require.NoError(f, err)
		f.Add(b)
	}
	f.Add([]byte("# %ECSV 1.0\n# ---\n# datatype:\n# - name: prot\n#   unit: d\n#   datatype: float64\n# - {name: color, unit: mag, datatype: float64}\n" +
		"# - {name: app_mag, unit: mag, datatype: float64}\n# - {name: plx, unit: mas, datatype: float64}\n" +
		"# - {name: ra, unit: deg, datatype: float64}\n# - {name: dec, unit: deg, datatype: float64}\n" +
		"prot color app_mag plx ra dec\n10 0.7 12 3 10 20\n\"\" 0.7 12 3 10 20\n"))
	f.Fuzz(func(t *testing.T, data []byte) { checkRead(t, data, "auto", exampleMapping) })
}

func FuzzReadFITS(f *testing.F) {
	dir := f.TempDir()
	p := filepath.Join(dir, "cat.fits")
	writeExampleFITS(f, p, "mas")
	b, err := os.ReadFile(p)
	require.NoError(f, err)
	f.Add(b)
	f.Add(gzipped(f, b))
	gz, err := os.ReadFile("../../testdata/catalog_example.fits.gz")
	require.NoError(f, err)
	f.Add(gz)
	f.Fuzz(func(t *testing.T, data []byte) { checkRead(t, data, "auto", exampleMapping) })
}

func FuzzReadParquet(f *testing.F) {
	dir := f.TempDir()
	p := filepath.Join(dir, "cat.parquet")
	writeExampleParquet(f, p, "mas")
	b, err := os.ReadFile(p)
	require.NoError(f, err)
	f.Add(b)
	ref, err := os.ReadFile("../../parquettable/testdata/reference.parquet")
	require.NoError(f, err)
	f.Add(ref)
	f.Fuzz(func(t *testing.T, data []byte) { checkRead(t, data, "auto", exampleMapping) })
}
