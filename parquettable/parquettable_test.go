package parquettable

import (
	"bytes"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"testing"

	"github.com/parquet-go/parquet-go"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func openPath(t testing.TB, path string) *Reader {
	t.Helper()
	f, err := os.Open(path)
	require.NoError(t, err)
	t.Cleanup(func() { f.Close() })
	st, err := f.Stat()
	require.NoError(t, err)
	r, err := Open(f, st.Size(), path)
	require.NoError(t, err)
	return r
}

func selectAll(t testing.TB, r *Reader) {
	var all []int
	for i, c := range r.Columns() {
		if c.Type != Unsupported {
			all = append(all, i)
		}
	}
	require.NoError(t, r.Select(all))
}

// Our writer, our reader: values, nulls, order and units come back, across
// row groups that do not divide the rows evenly.
func TestWriteReadRoundTrip(t *testing.T) {
	path := filepath.Join(t.TempDir(), "cat.parquet")
	cols := []WriteColumn{
		{Name: "star_id", Type: Int64},
		{Name: "period_d", Unit: "d", Type: Float64},
		{Name: "amp", Type: Float32},
		{Name: "field", Type: Int32},
		{Name: "detected", Type: Bool},
		{Name: "alias", Type: String},
	}
	w, err := Create(path, cols, WriteOptions{RowGroupRows: 1000})
	require.NoError(t, err)
	const n = 2500
	for i := 0; i < n; i++ {
		w.SetInt64(0, int64(i)*1_000_000_007)
		if i%7 != 3 {
			w.SetFloat64(1, 0.5+float64(i)/3)
		}
		w.SetFloat64(2, float64(i)/8)
		if i%5 == 0 {
			w.SetNull(3)
		} else {
			w.SetInt64(3, int64(-i))
		}
		w.SetBool(4, i%2 == 0)
		if i%11 != 0 {
			w.SetString(5, "a"+strconv.Itoa(i%3))
		}
		require.NoError(t, w.WriteRow())
	}
	require.NoError(t, w.Close())

	r := openPath(t, path)
	assert.Equal(t, int64(n), r.Rows())
	assert.Equal(t, 3, r.RowGroups())
	require.Len(t, r.Columns(), len(cols))
	for i, c := range cols {
		got := r.Columns()[i]
		assert.Equal(t, c.Name, got.Name, "columns keep their order")
		assert.Equal(t, c.Type, got.Type)
		assert.Equal(t, c.Unit, got.Unit)
		assert.True(t, got.Optional)
	}
	selectAll(t, r)
	i := 0
	for r.Next() {
		require.Equal(t, int64(i+1), r.Row())
		v, null := r.Int64(0)
		require.False(t, null)
		require.Equal(t, int64(i)*1_000_000_007, v)
		p, null := r.Float64(1)
		if i%7 == 3 {
			require.True(t, null)
			require.True(t, math.IsNaN(p))
		} else {
			require.False(t, null)
			require.Equal(t, 0.5+float64(i)/3, p)
		}
		a, _ := r.Float64(2)
		require.Equal(t, float64(float32(float64(i)/8)), a)
		f, null := r.Int64(3)
		require.Equal(t, i%5 == 0, null)
		if !null {
			require.Equal(t, int64(-i), f)
		}
		b, null := r.Bool(4)
		require.False(t, null)
		require.Equal(t, i%2 == 0, b)
		if i%11 == 0 {
			require.True(t, r.IsNull(5))
		} else {
			require.Equal(t, "a"+strconv.Itoa(i%3), r.String(5))
		}
		i++
	}
	require.NoError(t, r.Err())
	assert.Equal(t, n, i)
	assert.False(t, r.Next())
}

// Types written by the library's own generic writer (unsigned and small
// integers, required columns) are read as those types.
func TestReadLibraryTypes(t *testing.T) {
	type row struct {
		U8   uint8   `parquet:"u8"`
		U16  uint16  `parquet:"u16"`
		U32  uint32  `parquet:"u32"`
		U64  uint64  `parquet:"u64"`
		I8   int8    `parquet:"i8"`
		I16  int16   `parquet:"i16"`
		F32  float32 `parquet:"f32"`
		Name string  `parquet:"name"`
		Tags []int32 `parquet:"tags,list"`
		Raw  []byte  `parquet:"raw"`
	}
	rows := []row{
		{255, 65535, 4294967295, math.MaxUint64, -128, -32768, float32(math.NaN()), "x", []int32{1}, []byte{1}},
		{0, 1, 2, 3, 127, 32767, 2.5, "", nil, nil},
	}
	var buf bytes.Buffer
	require.NoError(t, parquet.Write(&buf, rows))
	r, err := Open(bytes.NewReader(buf.Bytes()), int64(buf.Len()), "lib.parquet")
	require.NoError(t, err)
	want := map[string]Type{"u8": Uint8, "u16": Uint16, "u32": Uint32, "u64": Uint64, "i8": Int8, "i16": Int16, "f32": Float32, "name": String, "tags": Unsupported, "raw": Unsupported}
	for _, c := range r.Columns() {
		assert.Equal(t, want[c.Name], c.Type, c.Name)
		assert.False(t, c.Optional, c.Name)
	}
	err = r.Select([]int{r.ColumnIndex("tags")})
	require.ErrorIs(t, err, ErrUnsupported)
	assert.Contains(t, err.Error(), `column "tags"`)
	assert.Contains(t, err.Error(), "nested")
	require.NoError(t, r.Select([]int{0, 1, 2, 3, 4, 5, 6, 7}))
	require.True(t, r.Next())
	assert.Equal(t, "255", r.Format(0))
	assert.Equal(t, "65535", r.Format(1))
	assert.Equal(t, "4294967295", r.Format(2))
	assert.Equal(t, "18446744073709551615", r.Format(3))
	_, null := r.Int64(3)
	assert.True(t, null, "a uint64 beyond int64 is no int64")
	u, _ := r.Float64(3)
	assert.Equal(t, float64(math.MaxUint64), u)
	assert.Equal(t, "-128", r.Format(4))
	assert.Equal(t, "-32768", r.Format(5))
	_, null = r.Float64(6)
	assert.True(t, null, "NaN counts as no value")
	assert.Equal(t, "x", r.String(7))
	require.True(t, r.Next())
	assert.Equal(t, "127", r.Format(4))
	f, _ := r.Float64(6)
	assert.Equal(t, 2.5, f)
	assert.False(t, r.Next())
	require.NoError(t, r.Err())
}

func TestMalformedParquet(t *testing.T) {
	path := filepath.Join(t.TempDir(), "ok.parquet")
	w, err := Create(path, []WriteColumn{{Name: "x", Type: Float64}}, WriteOptions{})
	require.NoError(t, err)
	for i := 0; i < 100; i++ {
		w.SetFloat64(0, float64(i))
		require.NoError(t, w.WriteRow())
	}
	require.NoError(t, w.Close())
	good, err := os.ReadFile(path)
	require.NoError(t, err)

	for name, b := range map[string][]byte{
		"empty":       nil,
		"text":        []byte("x\n1\n2\n"),
		"cut footer":  good[:len(good)-10],
		"cut in half": good[:len(good)/2],
	} {
		_, err := Open(bytes.NewReader(b), int64(len(b)), "bad.parquet")
		require.Error(t, err, name)
		require.ErrorIs(t, err, ErrFormat, name)
		assert.Contains(t, err.Error(), "bad.parquet", name)
	}
	// Damaged data pages (the footer intact): an error, not a panic.
	bad := bytes.Clone(good)
	for i := 4; i < 60 && i < len(bad)-8; i++ {
		bad[i] ^= 0x5a
	}
	r, err := Open(bytes.NewReader(bad), int64(len(bad)), "bad.parquet")
	if err == nil {
		require.NoError(t, r.Select([]int{0}))
		for r.Next() {
		}
		require.Error(t, r.Err())
		assert.Contains(t, r.Err().Error(), "bad.parquet")
	}
}

func TestWriterErrorsAreWholeOrNothing(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "out.parquet")
	require.NoError(t, os.WriteFile(path, []byte("earlier"), 0o644))
	w, err := Create(path, []WriteColumn{{Name: "n", Type: Int32}, {Name: "s", Type: String}}, WriteOptions{})
	require.NoError(t, err)
	require.NoError(t, w.WriteRow())
	w.SetInt64(0, 1<<40)
	err = w.WriteRow()
	require.ErrorIs(t, err, ErrValue)
	assert.Contains(t, err.Error(), `column "n", row 2`)
	require.Error(t, w.Close())
	b, _ := os.ReadFile(path)
	assert.Equal(t, "earlier", string(b))
	entries, _ := os.ReadDir(dir)
	assert.Len(t, entries, 1)

	for _, cols := range [][]WriteColumn{nil, {{Name: "a", Type: Uint16}}, {{Name: "a,b", Type: Float64}}, {{Name: "a", Type: Float64}, {Name: "a", Type: Bool}}} {
		_, err := Create(path, cols, WriteOptions{})
		require.ErrorIs(t, err, ErrUnsupported)
	}
}

// A million rows stream through in bounded memory: the reader holds one
// batch of the selected columns and the pages they come from, not the
// table. (The same check as compare/catalog's gzip CSV stream test.)
func TestStreamMillionRows(t *testing.T) {
	if testing.Short() {
		t.Skip("writes a million rows")
	}
	path := filepath.Join(t.TempDir(), "big.parquet")
	cols := []WriteColumn{{Name: "prot", Type: Float64}, {Name: "color", Type: Float64}, {Name: "mag", Type: Float32}, {Name: "id", Type: Int64}, {Name: "name", Type: String}}
	w, err := Create(path, cols, WriteOptions{RowGroupRows: 100_000})
	require.NoError(t, err)
	const n = 1_000_000
	for i := 0; i < n; i++ {
		w.SetFloat64(0, 0.5+float64(i%4000)/100)
		w.SetFloat64(1, float64(i%300)/100)
		w.SetFloat64(2, 9+float64(i%700)/100)
		w.SetInt64(3, int64(i))
		w.SetString(4, "star-"+strconv.Itoa(i))
		require.NoError(t, w.WriteRow())
	}
	require.NoError(t, w.Close())
	st, err := os.Stat(path)
	require.NoError(t, err)

	runtime.GC()
	var ms runtime.MemStats
	runtime.ReadMemStats(&ms)
	base := ms.HeapAlloc
	r := openPath(t, path)
	require.NoError(t, r.Select([]int{0, 1, 2, 3}))
	var peak uint64
	rows := 0
	sum := 0.0
	for r.Next() {
		v, _ := r.Float64(0)
		sum += v
		id, _ := r.Int64(3)
		require.Equal(t, int64(rows), id)
		rows++
		if rows%50_000 == 0 {
			runtime.ReadMemStats(&ms)
			peak = max(peak, ms.HeapAlloc)
		}
	}
	require.NoError(t, r.Err())
	assert.Equal(t, n, rows)
	t.Logf("file %d bytes; heap growth while reading %d bytes", st.Size(), peak-min(peak, base))
	// The four columns read are 28 MB as values; a reader that held them,
	// or the file (of which a row group alone is ~2 MB compressed), would
	// show far more than 16 MiB once batches and pages are counted.
	assert.Less(t, peak-min(peak, base), uint64(16<<20))
}
