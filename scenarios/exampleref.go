package scenarios

import (
	"fmt"
	"io/fs"
	"path"
	"slices"
	"strings"
)

// ExamplePrefix names a built-in example wherever a scenario is expected:
// as a reference (example:fit), in extends (extends = "example:burst"), and
// in data.file, where it names a file among the examples' data
// (file = "example:data/larkspur-rotation.csv"). So a copy of an example
// works from any folder.
const ExamplePrefix = "example:"

// withExamples lets any source follow extends = "example:NAME" into the
// embedded examples and find data.file = "example:…" there. Layers read
// from the examples carry the prefix in their name (example:burst.toml), so
// messages say where a value came from, and relative paths inside them stay
// inside the examples.
type withExamples struct {
	base source
	// inExamples: base is the examples' own file system, where names need
	// no prefix (burst.toml extends base.toml as on disk).
	inExamples bool
	// overrides are the labels of the override layers applied (see
	// Override): a data.file set by one is relative to the working
	// directory.
	overrides map[string]bool
}

func (s withExamples) read(name string) ([]byte, error) {
	if rest, ok := strings.CutPrefix(name, ExamplePrefix); ok {
		return fsSource{exampleFS}.read(rest)
	}
	return s.base.read(name)
}

func (s withExamples) join(from, extends string) (string, error) {
	if rest, ok := strings.CutPrefix(extends, ExamplePrefix); ok {
		if !slices.Contains(Examples(), strings.TrimSuffix(rest, ".toml")) {
			return "", fmt.Errorf("no such example; the examples are %s", listWords(Examples()))
		}
		if s.inExamples {
			return exampleFile(rest), nil
		}
		return ExamplePrefix + exampleFile(rest), nil
	}
	if rest, ok := strings.CutPrefix(from, ExamplePrefix); ok {
		p, err := fsSource{exampleFS}.join(rest, extends)
		return ExamplePrefix + p, err
	}
	return s.base.join(from, extends)
}

func (s withExamples) locateData(from, file string) (string, fs.FS, error) {
	if rest, ok := strings.CutPrefix(file, ExamplePrefix); ok {
		p := path.Clean(rest)
		if rest == "" || !fs.ValidPath(p) {
			return "", nil, fmt.Errorf("%s names no file among the examples' data (want e.g. %sdata/larkspur-rotation.csv)", quoteString(file), ExamplePrefix)
		}
		return p, exampleFS, nil
	}
	if s.overrides[from] {
		// A path given on the command line is relative to where the user is.
		return osSource{}.locateData(".", file)
	}
	if rest, ok := strings.CutPrefix(from, ExamplePrefix); ok {
		return fsSource{exampleFS}.locateData(rest, file)
	}
	return s.base.locateData(from, file)
}
