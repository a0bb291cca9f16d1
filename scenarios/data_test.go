package scenarios

import (
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"io"
	"io/fs"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"testing/fstest"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/compare/catalog"
)

// withData is a valid [data] section mapping a catalog with derived
// magnitudes and heights.
const withData = `[data]
file = "cat.csv"
[data.columns]
app_mag_v = "v"
parallax_mas = "plx"
l_deg = "glon"
b_deg = "glat"
`

func TestDataPathRelativeToTheFileThatSetIt(t *testing.T) {
	dir := t.TempDir()
	writeFiles(t, dir, map[string]string{
		// The base, in another folder, names the catalog relative to itself.
		"common/base.toml": parentText + strings.Replace(withData, "cat.csv", "../catalogs/field.csv", 1),
		"runs/deep/child.toml": `extends = "../../common/base.toml"
[run]
seed = 9
`,
		// A file that names its own catalog resolves it relative to itself.
		"runs/deep/own.toml": "extends = \"child.toml\"\n[data]\nfile = \"local.csv\"\n",
		"catalogs/field.csv": "prot_d\n",
	})
	r, err := Load(filepath.Join(dir, "runs", "deep", "child.toml"))
	require.NoError(t, err)
	assert.Equal(t, "../catalogs/field.csv", r.Scenario.Data.File, "the scenario keeps the path as written")
	assert.Equal(t, filepath.Join(dir, "catalogs", "field.csv"), r.DataPath, "relative to common/base.toml, not to child.toml")
	assert.Nil(t, r.DataFS)
	assert.Contains(t, string(r.Canonical()), "file = \"../catalogs/field.csv\"\n")
	f, err := r.OpenData()
	require.NoError(t, err)
	text, err := io.ReadAll(f)
	require.NoError(t, err)
	require.NoError(t, f.Close())
	assert.Equal(t, "prot_d\n", string(text))

	own, err := Load(filepath.Join(dir, "runs", "deep", "own.toml"))
	require.NoError(t, err)
	assert.Equal(t, filepath.Join(dir, "runs", "deep", "local.csv"), own.DataPath)
	assert.Equal(t, r.Scenario.Data.Columns, own.Scenario.Data.Columns, "the columns are inherited")

	// The resolved path is not part of the identity: a copy of the two
	// files elsewhere hashes the same.
	other := t.TempDir()
	writeFiles(t, other, map[string]string{
		"common/base.toml":     parentText + strings.Replace(withData, "cat.csv", "../catalogs/field.csv", 1),
		"runs/deep/child.toml": "extends = \"../../common/base.toml\"\n[run]\nseed = 9\n",
	})
	r2, err := Load(filepath.Join(other, "runs", "deep", "child.toml"))
	require.NoError(t, err)
	assert.NotEqual(t, r.DataPath, r2.DataPath)
	assert.Equal(t, r.Hash(), r2.Hash())
}

func TestDataPathWithinFS(t *testing.T) {
	fsys := fstest.MapFS{
		"set/parent.toml":      {Data: []byte(parentText + strings.Replace(withData, "cat.csv", "obs/cat.csv", 1))},
		"set/sub/child.toml":   {Data: []byte("extends = \"../parent.toml\"\n")},
		"set/obs/cat.csv":      {Data: []byte("a,b\n1,2\n")},
		"set/escape.toml":      {Data: []byte(parentText + strings.Replace(withData, "cat.csv", "../../cat.csv", 1))},
		"set/absolute.toml":    {Data: []byte(parentText + strings.Replace(withData, "cat.csv", "/tmp/cat.csv", 1))},
		"set/sub/missing.toml": {Data: []byte("extends = \"../parent.toml\"\n[data]\nfile = \"nope.csv\"\n")},
	}
	r, err := LoadFS(fsys, "set/sub/child.toml")
	require.NoError(t, err)
	assert.Equal(t, "set/obs/cat.csv", r.DataPath)
	assert.Equal(t, fs.FS(fsys), r.DataFS)
	f, err := r.OpenData()
	require.NoError(t, err)
	text, err := io.ReadAll(f)
	require.NoError(t, err)
	require.NoError(t, f.Close())
	assert.Equal(t, "a,b\n1,2\n", string(text))

	// LoadBytes with a file system resolves alike.
	data, err := fs.ReadFile(fsys, "set/sub/child.toml")
	require.NoError(t, err)
	rb, err := LoadBytes("set/sub/child.toml", data, fsys)
	require.NoError(t, err)
	assert.Equal(t, r.DataPath, rb.DataPath)

	line := lineOf(t, parentText+withData, "file =")
	_, err = LoadFS(fsys, "set/escape.toml")
	require.Error(t, err)
	assert.Contains(t, err.Error(), "set/escape.toml:"+strconv.Itoa(line)+`: data.file = "../../cat.csv": ../cat.csv leaves the directory tree`)
	_, err = LoadFS(fsys, "set/absolute.toml")
	require.Error(t, err)
	assert.Contains(t, err.Error(), `data.file = "/tmp/cat.csv": an absolute path cannot be used here`)

	// A missing catalog does not stop loading; opening it names the file
	// and line that named it.
	m, err := LoadFS(fsys, "set/sub/missing.toml")
	require.NoError(t, err)
	_, err = m.OpenData()
	require.Error(t, err)
	assert.ErrorIs(t, err, fs.ErrNotExist)
	var e *Error
	require.ErrorAs(t, err, &e)
	assert.Equal(t, "data.file", e.Key)
	assert.Equal(t, "set/sub/missing.toml:3: data.file = \"nope.csv\": cannot open set/sub/nope.csv: file does not exist", err.Error())
}

func TestDataPathFromBytesWithoutFS(t *testing.T) {
	r, err := LoadBytes(filepath.Join("some", "dir", "s.toml"), []byte(minimal+withData), nil)
	require.NoError(t, err)
	assert.Equal(t, filepath.Join("some", "dir", "cat.csv"), r.DataPath, "relative to the name, in the OS file system")
	assert.Nil(t, r.DataFS)

	none := loadMinimal(t, "")
	assert.Empty(t, none.DataPath)
	_, err = none.OpenData()
	require.Error(t, err)
	assert.Contains(t, err.Error(), "minimal.toml: the scenario names no observed catalog; add [data] file = ")
}

func TestCheckDataSHA256(t *testing.T) {
	content := []byte("prot_d,bv_mag\n12.5,0.8\n")
	sum := sha256.Sum256(content)
	want := hex.EncodeToString(sum[:])
	upper := strings.ToUpper(want)
	text := minimal + strings.Replace(withData, "[data.columns]", "sha256 = \""+upper+"\"\n[data.columns]", 1)
	r, err := LoadBytes("s.toml", []byte(text), nil)
	require.NoError(t, err)
	assert.Equal(t, want, r.Scenario.Data.SHA256, "checksums are kept in lower case")
	lower, err := LoadBytes("s.toml", []byte(strings.Replace(text, upper, want, 1)), nil)
	require.NoError(t, err)
	assert.Equal(t, lower.Hash(), r.Hash(), "the case of a checksum does not change the scenario")

	// Source: FIPS 180-4 SHA-256, computed here with crypto/sha256 over the
	// same bytes the catalog reader would hash.
	assert.NoError(t, r.CheckDataSHA256(want))
	assert.NoError(t, r.CheckDataSHA256(upper))
	bad := strings.Repeat("0", 64)
	err = r.CheckDataSHA256(bad)
	require.Error(t, err)
	assert.Contains(t, err.Error(), "s.toml:8: cat.csv has SHA-256 "+bad+", but data.sha256 = "+want+": this is not the file the scenario was written for; if it is the intended new version, set data.sha256 = \""+bad+"\"")

	assert.NoError(t, loadMinimal(t, withData).CheckDataSHA256(bad), "no checksum stated, nothing to check")
}

// TestColumnRuleMatchesCatalog checks every combination of the optional
// columns: a scenario loads exactly when compare/catalog accepts the same
// mapping, so no scenario fails on its mapping only when its data are read.
func TestColumnRuleMatchesCatalog(t *testing.T) {
	keys := []string{"abs_mag_v", "z_pc", "app_mag_v", "parallax_mas", "ra_deg", "dec_deg", "l_deg", "b_deg"}
	accepted := 0
	for mask := range 1 << len(keys) {
		var b strings.Builder
		b.WriteString(minimal + "[data]\nfile = \"c.csv\"\n[data.columns]\n")
		m := catalog.Mapping{Period: "p", Color: "c"}
		fields := []*string{&m.AbsMag, &m.Height, &m.AppMag, &m.Parallax, &m.RA, &m.Dec, &m.L, &m.B}
		for i, k := range keys {
			if mask&(1<<i) != 0 {
				b.WriteString(k + " = \"col_" + k + "\"\n")
				*fields[i] = "col_" + k
			}
		}
		_, err := LoadBytes("x.toml", []byte(b.String()), nil)
		catErr := m.Validate()
		if catErr == nil {
			accepted++
		}
		assert.Equal(t, catErr == nil, err == nil, "columns %s: scenario error %v, catalog error %v", b.String()[len(minimal):], err, catErr)
		if err != nil {
			var verrs ValidationErrors
			require.True(t, errors.As(err, &verrs))
			for _, e := range verrs {
				assert.True(t, strings.HasPrefix(e.Key, "data.columns"), "only the columns are at fault: %v", e)
			}
		}
	}
	assert.Greater(t, accepted, 10)
}
