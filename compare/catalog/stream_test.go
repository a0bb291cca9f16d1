package catalog

import (
	"bufio"
	"bytes"
	"compress/gzip"
	"crypto/sha256"
	"fmt"
	"hash"
	"io"
	"math/rand/v2"
	"runtime"
	"strconv"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// writeCatalog writes a synthetic CSV catalog of n rows to w, every 1000th
// row with a non-positive period.
func writeCatalog(w io.Writer, n int, seed uint64) error {
	r := rand.New(rand.NewPCG(seed, 1))
	bw := bufio.NewWriter(w)
	fmt.Fprintln(bw, "# synthetic catalog for streaming tests")
	fmt.Fprintln(bw, "star_id,prot,color,app_mag,plx,ra,dec,flag")
	buf := make([]byte, 0, 128)
	for i := 0; i < n; i++ {
		prot := 0.5 + 40*r.Float64()
		if i%1000 == 999 {
			prot = -1
		}
		buf = buf[:0]
		buf = strconv.AppendInt(buf, int64(i), 10)
		for _, v := range []float64{prot, 0.5 + 2.5*r.Float64(), 9 + 7*r.Float64(), 0.5 + 10*r.Float64(), 360 * r.Float64(), 180*r.Float64() - 90} {
			buf = append(buf, ',')
			buf = strconv.AppendFloat(buf, v, 'f', 4, 64)
		}
		buf = append(buf, ",ok\n"...)
		if _, err := bw.Write(buf); err != nil {
			return err
		}
	}
	return bw.Flush()
}

// hashWriter tees the compressed stream into a SHA-256.
type hashWriter struct {
	w io.Writer
	h hash.Hash
}

func (h hashWriter) Write(p []byte) (int, error) {
	h.h.Write(p)
	return h.w.Write(p)
}

// gzipMember compresses the rows (and, if header, the header lines) of a
// synthetic catalog into one gzip member.
func gzipMember(t *testing.T, rows int, header bool) []byte {
	var text, out bytes.Buffer
	require.NoError(t, writeCatalog(&text, rows, 42))
	b := text.Bytes()
	if !header {
		// Drop the comment and column-name lines.
		for range 2 {
			b = b[bytes.IndexByte(b, '\n')+1:]
		}
	}
	zw, err := gzip.NewWriterLevel(&out, gzip.BestSpeed)
	require.NoError(t, err)
	_, err = zw.Write(b)
	require.NoError(t, err)
	require.NoError(t, zw.Close())
	return out.Bytes()
}

func TestStreamMillionRowsGzip(t *testing.T) {
	// A million rows as 100 gzip members of 10,000 rows each (a valid
	// multi-member gzip file, RFC 1952 §2.2), so that the test spends its
	// time reading, not compressing.
	const chunk, members = 10_000, 100
	const n = chunk * members
	first := gzipMember(t, chunk, true)
	rest := gzipMember(t, chunk, false)
	pr, pw := io.Pipe()
	want := sha256.New()
	go func() {
		w := hashWriter{pw, want}
		_, err := w.Write(first)
		for i := 1; i < members && err == nil; i++ {
			_, err = w.Write(rest)
		}
		pw.CloseWithError(err)
	}()

	m := Mapping{Period: "prot", Color: "color", AppMag: "app_mag", Parallax: "plx", RA: "ra", Dec: "dec"}
	var peakHeap uint64
	var ms runtime.MemStats
	accepted, lastLine := 0, 0
	sum, err := Read(pr, Options{Mapping: m, ZSunPc: 20.8}, func(line int, s Star) error {
		accepted++
		lastLine = line
		if accepted%100_000 == 0 {
			runtime.ReadMemStats(&ms)
			peakHeap = max(peakHeap, ms.HeapAlloc)
		}
		return nil
	})
	require.NoError(t, err)
	assert.True(t, sum.Compressed)
	assert.Equal(t, n, sum.Rows)
	assert.Equal(t, n-n/1000, sum.Accepted)
	assert.Equal(t, n/1000, sum.Rejected[ReasonPeriod])
	assert.Equal(t, accepted, sum.Accepted)
	// The last row (i = n−1) has a bad period; the one before is on line
	// n+1 (a comment and the header come first).
	assert.Equal(t, n+1, lastLine)
	var w [32]byte
	copy(w[:], want.Sum(nil))
	assert.Equal(t, w, sum.SHA256, "hash of the compressed stream")
	// The uncompressed text is ~55 MB; a reader that held it, or even a
	// fraction of it, would show here. Buffers and garbage between
	// collections stay far below 32 MiB.
	assert.Less(t, peakHeap, uint64(32<<20), "peak heap while streaming: %d bytes", peakHeap)
}

func BenchmarkReadRows(b *testing.B) {
	// Rows per second for plain CSV with positions converted from ICRS.
	const n = 100_000
	pr, pw := io.Pipe()
	go func() { pw.CloseWithError(writeCatalog(pw, n, 1)) }()
	data, err := io.ReadAll(pr)
	require.NoError(b, err)
	m := Mapping{Period: "prot", Color: "color", AppMag: "app_mag", Parallax: "plx", RA: "ra", Dec: "dec"}
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	for b.Loop() {
		_, err := Read(bytesReader(data), Options{Mapping: m}, func(int, Star) error { return nil })
		if err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(n)*float64(b.N)/b.Elapsed().Seconds(), "rows/s")
}

type byteReader struct {
	b []byte
	i int
}

func bytesReader(b []byte) *byteReader { return &byteReader{b: b} }

func (r *byteReader) Read(p []byte) (int, error) {
	if r.i >= len(r.b) {
		return 0, io.EOF
	}
	n := copy(p, r.b[r.i:])
	r.i += n
	return n, nil
}
