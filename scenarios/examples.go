package scenarios

import (
	"embed"
	"io/fs"
	"slices"
	"strings"
)

// The data directory is embedded too, so that an example's data.file
// resolves within the same file system (Resolved.DataFS) and opens with
// Resolved.OpenData wherever the program runs.
//
//go:embed examples/*.toml examples/data
var examplesRoot embed.FS

// exampleFS is the examples directory itself, so that example names and
// their extends paths read as they do on disk ("burst.toml" extends
// "base.toml").
var exampleFS = mustSub(examplesRoot, "examples")

func mustSub(fsys fs.FS, dir string) fs.FS {
	sub, err := fs.Sub(fsys, dir)
	if err != nil {
		panic("scenarios: embedded examples: " + err.Error()) // unreachable: dir is a literal
	}
	return sub
}

// Examples lists the embedded example scenarios by name, without ".toml",
// sorted.
func Examples() []string {
	entries, _ := fs.ReadDir(exampleFS, ".") // cannot fail on an embed.FS
	var names []string
	for _, e := range entries {
		if n, ok := strings.CutSuffix(e.Name(), ".toml"); ok && !e.IsDir() {
			names = append(names, n)
		}
	}
	slices.Sort(names)
	return names
}

// LoadExample resolves the embedded example name ("burst" or "burst.toml").
func LoadExample(name string) (*Resolved, error) {
	if !slices.Contains(Examples(), strings.TrimSuffix(name, ".toml")) {
		return nil, ValidationErrors{{File: exampleFile(name), Msg: "no such example; the examples are " + listWords(Examples())}}
	}
	return Resolve(ExamplePrefix + name)
}

// ExampleText returns the text of the embedded example name, for a user
// who wants a copy to edit.
func ExampleText(name string) ([]byte, error) {
	data, err := fs.ReadFile(exampleFS, exampleFile(name))
	if err != nil || !slices.Contains(Examples(), strings.TrimSuffix(name, ".toml")) {
		return nil, &Error{File: exampleFile(name), Msg: "no such example; the examples are " + listWords(Examples()), Err: err}
	}
	return data, nil
}

// ExamplesFS is the file system of the embedded examples, for LoadBytes.
func ExamplesFS() fs.FS { return exampleFS }

func exampleFile(name string) string {
	if strings.HasSuffix(name, ".toml") {
		return name
	}
	return name + ".toml"
}
