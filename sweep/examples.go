package sweep

import (
	"embed"
	"io/fs"
	"slices"
	"strings"

	"spinpop/scenarios"
)

// Built-in sweep files, named example:NAME like the built-in scenarios
// (spinpop sweep example:systematics). Their base scenarios are built-in
// examples too, so they run from any folder.
//
//go:embed examples/*.toml
var exampleFiles embed.FS

// Examples lists the built-in sweep files' names.
func Examples() []string {
	entries, _ := fs.ReadDir(exampleFiles, "examples")
	var out []string
	for _, e := range entries {
		out = append(out, strings.TrimSuffix(e.Name(), ".toml"))
	}
	slices.Sort(out)
	return out
}

// isExample reports whether ref names a built-in sweep file.
func isExample(ref string) bool { return strings.HasPrefix(ref, scenarios.ExamplePrefix) }

// exampleData returns the text of built-in sweep file ref
// ("example:NAME"), or an error listing the names there are.
func exampleData(ref string) ([]byte, error) {
	name := strings.TrimSuffix(strings.TrimPrefix(ref, scenarios.ExamplePrefix), ".toml")
	b, err := exampleFiles.ReadFile("examples/" + name + ".toml")
	if err != nil {
		return nil, scenarios.ValidationErrors{{File: ref, Msg: "no built-in sweep file " + name + "; there are example:" + strings.Join(Examples(), ", example:")}}
	}
	return b, nil
}

// ExampleText returns the text of built-in sweep file NAME, to print and
// copy (a copy runs from any folder: its base is a built-in scenario).
func ExampleText(name string) ([]byte, error) { return exampleData(scenarios.ExamplePrefix + name) }
