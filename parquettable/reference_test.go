package parquettable

import (
	"bytes"
	"encoding/json"
	"flag"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

var update = flag.Bool("update", false, "rewrite testdata/written_by_parquettable.{parquet,json}")

// A file written by an independent implementation (hyparquet-writer, a
// JavaScript library; testdata/parquet_reference.mjs, which also wrote what
// hyparquet reads back into reference.json) reads with the same values.
func TestReadIndependentReference(t *testing.T) {
	b, err := os.ReadFile("testdata/reference.json")
	require.NoError(t, err)
	var ref struct {
		Rows      int64    `json:"rows"`
		RowGroups int      `json:"row_groups"`
		Columns   []string `json:"columns"`
		Values    [][]any  `json:"values"`
	}
	require.NoError(t, json.Unmarshal(b, &ref))
	r := openPath(t, "testdata/reference.parquet")
	assert.Equal(t, ref.Rows, r.Rows())
	assert.Equal(t, ref.RowGroups, r.RowGroups())
	want := []struct {
		typ      Type
		optional bool
		unit     string
	}{{Int64, false, ""}, {Float64, true, "d"}, {Float32, false, "mag"}, {Int32, true, ""}, {Uint16, false, ""}, {Bool, true, ""}, {String, true, ""}}
	require.Len(t, r.Columns(), len(ref.Columns))
	for i, c := range r.Columns() {
		assert.Equal(t, ref.Columns[i], c.Name)
		assert.Equal(t, want[i].typ, c.Type, c.Name)
		assert.Equal(t, want[i].optional, c.Optional, c.Name)
		assert.Equal(t, want[i].unit, c.Unit, c.Name)
	}
	selectAll(t, r)
	row := 0
	for r.Next() {
		for i, c := range r.Columns() {
			w := ref.Values[row][i]
			where := c.Name + " row " + strconv.Itoa(row+1)
			switch {
			case w == nil:
				assert.True(t, r.IsNull(i), where)
			case c.Type == String:
				assert.Equal(t, w, r.String(i), where)
			case c.Type == Bool:
				v, null := r.Bool(i)
				assert.False(t, null, where)
				assert.Equal(t, w, v, where)
			case w == "nan":
				v, null := r.Float64(i)
				assert.True(t, null, where)
				assert.True(t, math.IsNaN(v), where)
			case c.Type == Int64:
				assert.Equal(t, w, r.Format(i), where)
			default:
				v, null := r.Float64(i)
				assert.False(t, null, where)
				assert.Equal(t, w, v, where)
			}
		}
		row++
	}
	require.NoError(t, r.Err())
	assert.Equal(t, int(ref.Rows), row)
}

var goldenColumns = []WriteColumn{
	{Name: "star_id", Type: Int64},
	{Name: "period_d", Unit: "d", Type: Float64},
	{Name: "amp_mag", Unit: "mag", Type: Float32},
	{Name: "field", Type: Int32},
	{Name: "detected", Type: Bool},
	{Name: "alias", Type: String},
}

var goldenRows = [][]any{
	{int64(1), 12.5, float32(0.25), int64(7), true, "none"},
	{int64(2), 0.123456789012345, float32(1e-3), int64(-7), false, "half"},
	{int64(math.MaxInt64), nil, nil, nil, nil, nil},
	{int64(math.MinInt64), -0.5, float32(math.MaxFloat32), int64(math.MaxInt32), true, "it's ünïcode"},
	{int64(5), 1e300, float32(-2.5), int64(math.MinInt32), false, ""},
}

// TestWriterGolden pins the writer's bytes to the file that hyparquet read
// back (parquet_reference.mjs --check). With -update it rewrites that file
// and the values hyparquet must find; then run the script.
func TestWriterGolden(t *testing.T) {
	path := filepath.Join(t.TempDir(), "golden.parquet")
	w, err := Create(path, goldenColumns, WriteOptions{RowGroupRows: 2})
	require.NoError(t, err)
	for _, row := range goldenRows {
		for i, v := range row {
			switch x := v.(type) {
			case int64:
				w.SetInt64(i, x)
			case float64:
				w.SetFloat64(i, x)
			case float32:
				w.SetFloat64(i, float64(x))
			case bool:
				w.SetBool(i, x)
			case string:
				w.SetString(i, x)
			}
		}
		require.NoError(t, w.WriteRow())
	}
	require.NoError(t, w.Close())
	got, err := os.ReadFile(path)
	require.NoError(t, err)
	if *update {
		require.NoError(t, os.WriteFile("testdata/written_by_parquettable.parquet", got, 0o644))
		meta := struct {
			Columns []map[string]string `json:"columns"`
			Rows    [][]any             `json:"rows"`
		}{}
		for _, c := range goldenColumns {
			meta.Columns = append(meta.Columns, map[string]string{"name": c.Name, "unit": c.Unit, "type": c.Type.String()})
		}
		for _, row := range goldenRows {
			var out []any
			for _, v := range row {
				switch x := v.(type) {
				case int64:
					out = append(out, strconv.FormatInt(x, 10))
				case float32:
					out = append(out, float64(x))
				case int:
					out = append(out, x)
				default:
					out = append(out, v)
				}
			}
			meta.Rows = append(meta.Rows, out)
		}
		b, err := json.MarshalIndent(meta, "", " ")
		require.NoError(t, err)
		require.NoError(t, os.WriteFile("testdata/written_by_parquettable.json", append(b, '\n'), 0o644))
	}
	want, err := os.ReadFile("testdata/written_by_parquettable.parquet")
	require.NoError(t, err)
	assert.True(t, bytes.Equal(want, got), "the writer's output changed; run go test -run TestWriterGolden -update, then node parquettable/testdata/parquet_reference.mjs --check")

	r := openPath(t, path)
	selectAll(t, r)
	for j := 0; r.Next(); j++ {
		for i, v := range goldenRows[j] {
			if v == nil {
				assert.True(t, r.IsNull(i))
				continue
			}
			if i == 3 { // int32 column
				n, _ := r.Int64(i)
				assert.Equal(t, v, n)
			}
		}
	}
	require.NoError(t, r.Err())
}
