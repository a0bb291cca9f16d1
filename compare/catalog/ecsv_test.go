package catalog

import (
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func headerLines(s string) []headerLine {
	var out []headerLine
	for i, l := range strings.Split(strings.TrimSuffix(s, "\n"), "\n") {
		l = strings.TrimPrefix(l, "#")
		l = strings.TrimPrefix(l, " ")
		out = append(out, headerLine{i + 1, l})
	}
	return out
}

func TestParseECSVBlockStyle(t *testing.T) {
	// Source: the ECSV 1.0 specification allows any YAML for the header;
	// block-style entries with nested meta are what a hand-written file
	// may contain (From memory of the ECSV specification, astropy APE 6).
	h, err := parseECSVHeader(headerLines(`# %ECSV 1.0
# ---
# delimiter: ','
# datatype:
# - name: period
#   unit: d
#   datatype: float64
#   description: "rotation period, \"best\" peak"
#   meta:
#     name: not-a-column
#     nested:
#     - {name: also-not}
# -   name: 'it''s'
#     datatype: int32
# - {name: plain}
# -
#   name: dash-alone
#   unit: pc
# meta: !!omap
# - {name: table-meta-not-a-column}
# schema: astropy-2.0
`))
	require.Nil(t, err)
	assert.Equal(t, byte(','), h.delimiter)
	assert.Equal(t, "1.0", h.version)
	require.Len(t, h.columns, 4)
	assert.Equal(t, Column{Name: "period", Unit: "d", Datatype: "float64"}, h.columns[0])
	assert.Equal(t, Column{Name: "it's", Datatype: "int32"}, h.columns[1])
	assert.Equal(t, Column{Name: "plain"}, h.columns[2])
	assert.Equal(t, Column{Name: "dash-alone", Unit: "pc"}, h.columns[3])
}

func TestParseECSVFlowQuoting(t *testing.T) {
	h, err := parseECSVHeader(headerLines(`# %ECSV 0.9
# ---
# datatype:
# - {name: 'a, b', unit: "km / s", datatype: float64, description: 'x: {y}, z'}
# - {name: c, datatype: float64, meta: {name: nested, list: [1, 2]}}
`))
	require.Nil(t, err)
	assert.Equal(t, byte(' '), h.delimiter, "space is the ECSV default")
	require.Len(t, h.columns, 2)
	assert.Equal(t, Column{Name: "a, b", Unit: "km / s", Datatype: "float64"}, h.columns[0])
	assert.Equal(t, "c", h.columns[1].Name)
}

func TestParseECSVErrors(t *testing.T) {
	cases := map[string]string{
		"# %ECSV 2.0\n# ---\n# datatype:\n# - {name: a}\n":                   "unsupported ECSV version",
		"# %ECSV 1.0\n# datatype:\n":                                         "# ---",
		"# %ECSV 1.0\n# ---\n# delimiter: ';'\n# datatype:\n# - {name: a}\n": "delimiter",
		"# %ECSV 1.0\n# ---\n# schema: astropy-2.0\n":                        "no \"datatype:\"",
		"# %ECSV 1.0\n# ---\n# datatype:\n# - {name: 'a}\n":                  "unclosed quote",
		"# %ECSV 1.0\n# ---\n# datatype:\n# - {unit: m}\n":                   "has no name",
		"# %ECSV 1.0\n# ---\n# this is not yaml\n":                           "key: value",
	}
	for in, want := range cases {
		_, err := parseECSVHeader(headerLines(in))
		require.NotNil(t, err, "input %q", in)
		assert.Contains(t, err.msg, want, "input %q", in)
		assert.Greater(t, err.line, 0, "input %q", in)
	}
}

// YAML mistakes are named as such, at the file line where they are.
func TestParseECSVYAMLErrors(t *testing.T) {
	cases := []struct {
		in   string
		line int
		want string
	}{
		{"# %ECSV 1.0\n# ---\n# datatype:\n# - name: a\n#\tunit: d\n", 5, "indented with a tab"},
		{"# %ECSV 1.0\n# ---\n# datatype:\n# -\tname: a\n", 4, "holds a tab"},
		{"# %ECSV 1.0\n# ---\n# datatype:\n# - name: a\n#  unit: d\n", 4, "not valid YAML"},
		{"# %ECSV 1.0\n# ---\n# datatype: float64\n", 3, `must be a list of columns`},
		{"# %ECSV 1.0\n# ---\n# datatype:\n# - a\n", 4, "entry 1 must be a mapping"},
		{"# %ECSV 1.0\n# ---\n# datatype:\n# - {name: [a, b]}\n", 4, "name must be a single value"},
		{"# %ECSV 1.0\n# ---\n# delimiter: [',']\n# datatype:\n# - {name: a}\n", 3, "delimiter must be a single character"},
	}
	for _, c := range cases {
		_, err := parseECSVHeader(headerLines(c.in))
		require.NotNil(t, err, c.in)
		assert.Contains(t, err.msg, c.want, c.in)
		assert.Equal(t, c.line, err.line, c.in)
	}
	// Through Read: a tab-indented header is a YAML problem at its line,
	// not a mismatch between the header and the column names.
	in := "# %ECSV 1.0\n# ---\n# datatype:\n# - name: prot\n#\tdatatype: float64\nprot\n1\n"
	_, rerr := readString(t, in, directMapping)
	require.ErrorIs(t, rerr, ErrFormat)
	assert.Contains(t, rerr.Error(), "test.csv:5: ECSV header is not valid YAML")
	assert.NotContains(t, rerr.Error(), "does not match")
}

func TestSplitter(t *testing.T) {
	sp := splitter{delim: ','}
	f, err := sp.split([]byte(` a , "b,c" ,"d""e",,f `))
	require.NoError(t, err)
	assert.Equal(t, []string{"a", "b,c", `d"e`, "", "f"}, toStrings(f))
	f, err = sp.split([]byte("x,"))
	require.NoError(t, err)
	assert.Equal(t, []string{"x", ""}, toStrings(f), "a trailing comma ends an empty field")
	_, err = sp.split([]byte(`"ab"c,d`))
	require.Error(t, err)

	sp = splitter{delim: ' '}
	f, err = sp.split([]byte(`  1   2.5 "" "a ""b"" c"	9 `))
	require.NoError(t, err)
	assert.Equal(t, []string{"1", "2.5", "", `a "b" c`, "9"}, toStrings(f))
	_, err = sp.split([]byte(`1 "open`))
	require.Error(t, err)
}

func toStrings(f [][]byte) []string {
	out := make([]string, len(f))
	for i, b := range f {
		out[i] = string(b)
	}
	return out
}
