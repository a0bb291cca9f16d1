package pipeline_test

import (
	"os"
	"regexp"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/model"
)

// README's list of catalog.csv columns is the column table's, in order.
func TestReadmeListsTheCatalogColumns(t *testing.T) {
	b, err := os.ReadFile("../README.md")
	require.NoError(t, err)
	text := string(b)
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
