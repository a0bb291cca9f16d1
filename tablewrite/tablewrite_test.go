package tablewrite

import (
	"math"
	"os"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/compare/catalog"
)

var cols = []Column{
	{Name: "star_id", Kind: Int64},
	{Name: "period_d", Unit: "d", Kind: Float64},
	{Name: "b_v_mag", Unit: "mag", Kind: Float32},
	{Name: "abs_mag_v", Unit: "mag", Kind: Float64},
	{Name: "z_pc", Unit: "pc", Kind: Float64},
	{Name: "detected", Kind: Bool},
	{Name: "alias", Kind: String, Width: 6},
}

// One table, three formats: the catalog reader finds the same stars in
// each (CSV to its 6 significant digits), the same unusable rows, and the
// units where the format keeps them.
func TestThreeFormatsReadBackAlike(t *testing.T) {
	dir := t.TempDir()
	type row struct {
		p, bv, mv, z float64
		det          bool
		alias        string
	}
	rows := []row{{12.25, 0.8, 5.5, -30, false, ""}, {3.125, 1.1, 6.25, 120, true, "half"}, {math.NaN(), 0.9, 5.9, 10, false, "none"}, {40.5, 1.4, 7.75, 2.5, true, "double"}}
	m := catalog.Mapping{Period: "period_d", Color: "b_v_mag", AbsMag: "abs_mag_v", Height: "z_pc"}
	for _, format := range Formats {
		t.Run(format, func(t *testing.T) {
			path := filepath.Join(dir, "catalog"+FileExtension(format))
			w, err := Create(path, format, "CATALOG", cols)
			require.NoError(t, err)
			for i, r := range rows {
				w.SetInt64(0, int64(i+1))
				w.SetFloat64(1, r.p)
				w.SetFloat64(2, r.bv)
				w.SetFloat64(3, r.mv)
				w.SetFloat64(4, r.z)
				w.SetBool(5, r.det)
				if r.alias != "" {
					w.SetString(6, r.alias)
				}
				require.NoError(t, w.WriteRow())
			}
			assert.Equal(t, int64(len(rows)), w.Rows())
			_, err = os.Stat(path)
			assert.True(t, os.IsNotExist(err), "nothing at the target before Close")
			require.NoError(t, w.Close())

			var stars []catalog.Star
			sum, err := catalog.ReadFile(path, catalog.Options{Mapping: m, Format: format}, func(_ int, s catalog.Star) error {
				stars = append(stars, s)
				return nil
			})
			require.NoError(t, err)
			assert.Equal(t, format, sum.Format)
			assert.Equal(t, 4, sum.Rows)
			assert.Equal(t, 1, sum.Rejected[catalog.ReasonNotFinite]+sum.Rejected[catalog.ReasonMissing], "the NaN period")
			require.Len(t, stars, 3)
			for k, i := range []int{0, 1, 3} {
				assert.InDelta(t, rows[i].p, stars[k].PeriodD, 1e-5*rows[i].p)
				assert.InDelta(t, rows[i].bv, stars[k].Color, 1e-6)
				assert.InDelta(t, rows[i].z, stars[k].ZPc, 1e-5*math.Abs(rows[i].z))
			}
			if format != "csv" {
				assert.Equal(t, "d", sum.Columns[1].Unit)
				assert.Equal(t, "float32", sum.Columns[2].Datatype)
			}
		})
	}
}

func TestCSVLayout(t *testing.T) {
	path := filepath.Join(t.TempDir(), "t.csv")
	w, err := Create(path, "csv", "", cols)
	require.NoError(t, err)
	w.SetInt64(0, 7)
	w.SetFloat64(1, 1.0/3)
	w.SetFloat64(2, math.NaN())
	w.SetNull(3)
	w.SetFloat64(4, 1e-7)
	w.SetBool(5, true)
	w.SetString(6, `a,"b"`)
	require.NoError(t, w.WriteRow())
	require.NoError(t, w.WriteRow()) // all null
	require.NoError(t, w.Close())
	b, err := os.ReadFile(path)
	require.NoError(t, err)
	assert.Equal(t, "star_id,period_d,b_v_mag,abs_mag_v,z_pc,detected,alias\n"+
		"7,0.333333,nan,,1e-07,1,\"a,\"\"b\"\"\"\n"+
		",,,,,,\n", string(b))
}

func TestWriteErrorsLeaveNothing(t *testing.T) {
	dir := t.TempDir()
	for _, format := range Formats {
		path := filepath.Join(dir, "x"+FileExtension(format))
		w, err := Create(path, format, "", cols)
		require.NoError(t, err)
		w.SetBool(1, true) // a float column
		require.Error(t, w.WriteRow(), format)
		require.Error(t, w.Close(), format)
		_, err = os.Stat(path)
		assert.True(t, os.IsNotExist(err), format)

		w, err = Create(path, format, "", cols)
		require.NoError(t, err)
		require.NoError(t, w.WriteRow())
		w.Abort()
		_, err = os.Stat(path)
		assert.True(t, os.IsNotExist(err), format)
	}
	entries, err := os.ReadDir(dir)
	require.NoError(t, err)
	assert.Empty(t, entries, "no temporary files left")
	_, err = Create(filepath.Join(dir, "x.tsv"), "tsv", "", cols)
	assert.ErrorContains(t, err, `unknown format "tsv"; use one of csv, fits, parquet`)
}
