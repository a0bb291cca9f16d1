package pipeline_test

import (
	"io/fs"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/model"
	"spinpop/scenarios"
)

// readme returns the project README's text.
func readme(t *testing.T) string {
	t.Helper()
	b, err := os.ReadFile("../README.md")
	require.NoError(t, err)
	return string(b)
}

// README's list of catalog.csv columns is the column table's, in order.
func TestReadmeListsTheCatalogColumns(t *testing.T) {
	text := readme(t)
	start := strings.Index(text, "Columns of `catalog.csv`")
	require.GreaterOrEqual(t, start, 0, "README has no list of catalog.csv columns")
	row := regexp.MustCompile("^\\| `([a-z0-9_]+)` \\| (.*) \\|$")
	var listed, docs []string
	for _, line := range strings.Split(text[start:], "\n")[4:] {
		m := row.FindStringSubmatch(line)
		if m == nil {
			break
		}
		listed = append(listed, m[1])
		docs = append(docs, m[2])
	}
	assert.Equal(t, model.BuiltinColumnNames(), listed)
	for i, c := range model.CatalogColumns() {
		if i < len(docs) && c.Name == listed[i] {
			assert.Equal(t, c.Doc, docs[i], "README's description of %s", c.Name)
		}
	}
}

// What README says of the example survey is what base.toml sets, and the
// demo catalog's size it quotes is the embedded file's row count: numbers
// quoted in prose go stale silently otherwise.
func TestReadmeQuotesTheExampleSurveyAndDemoCatalog(t *testing.T) {
	text := readme(t)
	res, err := scenarios.LoadExample("base")
	require.NoError(t, err)
	sv := res.Scenario.Survey
	m := regexp.MustCompile(`a cone of radius ([0-9.]+)° at l = ([0-9.]+)°, b = ([−+]?[0-9.]+)°, out to ([0-9.]+) kpc\)\s+every ([0-9.]+) minutes for ([0-9.]+) days, V ([0-9.]+)–([0-9]+(?:\.[0-9]+)?)`).FindStringSubmatch(text)
	require.NotNil(t, m, "README describes the example survey's field, cadence, baseline and magnitudes")
	num := func(s string) float64 {
		x, err := strconv.ParseFloat(strings.Replace(s, "−", "-", 1), 64)
		require.NoError(t, err, s)
		return x
	}
	f := sv.Field
	assert.Equal(t, f.RadiusDeg, num(m[1]), "radius")
	assert.Equal(t, f.LDeg, num(m[2]), "l")
	assert.Equal(t, f.BDeg, num(m[3]), "b")
	assert.Equal(t, f.DistanceMaxPc, 1000*num(m[4]), "distance")
	assert.InDelta(t, sv.CadenceD*24*60, num(m[5]), 1e-9, "cadence in minutes")
	assert.Equal(t, sv.BaselineD, num(m[6]), "baseline")
	assert.Equal(t, sv.BrightLimitMag, num(m[7]), "bright limit")
	assert.Equal(t, sv.FaintLimitMag, num(m[8]), "faint limit")

	data, err := fs.ReadFile(scenarios.ExamplesFS(), "data/larkspur-rotation.csv")
	require.NoError(t, err)
	rows := 0
	for _, line := range strings.Split(strings.TrimSpace(string(data)), "\n")[1:] {
		if !strings.HasPrefix(line, "#") {
			rows++
		}
	}
	rows-- // the header
	quoted := regexp.MustCompile("(?i)the demo catalog \\((?:`[^`]+`, )?([0-9,]+) stars").FindAllStringSubmatch(text, -1)
	require.Len(t, quoted, 2, "README quotes the demo catalog's size where it tells how it was made and in the systematics example")
	for _, q := range quoted {
		assert.Equal(t, strconv.Itoa(rows), strings.ReplaceAll(q[1], ",", ""), "README: %q", q[0])
	}
}

// The README's snippet that frees the search completeness with starting
// values is a valid addition to a copy of example:fit, and gives the
// starting grid it says.
func TestReadmeSearchCompletenessSnippetResolves(t *testing.T) {
	text := readme(t)
	at := strings.Index(text, "Freeing it in a copy of\n`example:fit`")
	require.GreaterOrEqual(t, at, 0, "README shows how to free the search completeness")
	start := strings.Index(text[at:], "```toml\n")
	require.GreaterOrEqual(t, start, 0)
	body := text[at+start+len("```toml\n"):]
	body = body[:strings.Index(body, "```")]
	// Appended to example:fit's own list, as a copy of the file would be.
	fit, err := scenarios.ExampleText("fit")
	require.NoError(t, err)
	path := filepath.Join(t.TempDir(), "fit-search.toml")
	require.NoError(t, os.WriteFile(path, append(fit, []byte("\n"+body)...), 0o644))
	res, err := scenarios.Resolve(path)
	require.NoError(t, err)
	grid := 1
	for _, f := range res.Scenario.Compare.Free {
		if len(f.Starts) > 0 {
			grid *= len(f.Starts)
		}
	}
	assert.Equal(t, 15, grid, "the snippet's comment: 5 × 3 starting points")
	assert.Equal(t, 60.0, res.Scenario.Survey.SearchHalfD)
}
