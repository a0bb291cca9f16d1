package scenarios

import (
	"errors"
	"fmt"
	"io/fs"
	"path"
	"slices"
	"strings"

	"github.com/BurntSushi/toml"
)

// Resolved is a scenario after extends, defaults and validation: what a run
// actually uses.
type Resolved struct {
	// Scenario holds every value, defaults filled in. Canonical, Hash and
	// PartHash render it afresh on each call, so they follow any change a
	// caller makes; such changes are not validated again.
	Scenario Scenario
	// Files lists the files merged, the most basic ancestor first and the
	// loaded file last, with paths as the loader resolved them.
	Files []string
	// Overrides lists the labels of the overrides applied after the
	// files, in order (e.g. "--set spin.law=torque").
	Overrides []string
	// DataPath is data.file resolved relative to the scenario file that
	// set it (which may be an ancestor in the extends chain): a path in
	// the operating system's file system after Load and after LoadBytes
	// without a file system, a slash-separated path within DataFS after
	// LoadFS, LoadExample and LoadBytes with a file system. It is "" when
	// the scenario names no data. Loading does not open the file; see
	// OpenData. DataPath is not part of the canonical form, which keeps
	// data.file as written, so that a collaborator's copy of a scenario
	// in another directory has the same hash.
	DataPath string
	// DataFS is the file system DataPath lies in; nil means the operating
	// system's.
	DataFS fs.FS

	dataAt, shaAt origin // where data.file and data.sha256 were set, for messages
}

// maxChain bounds an extends chain. Cycles are caught by name; this catches
// the same file reached under different names (e.g. through symbolic links).
const maxChain = 32

// Load reads the scenario file at path, follows its extends chain (paths
// relative to the file naming them), fills defaults, validates and
// resolves data.file (relative to the file that set it; not opened).
// Every problem found is reported at once, as ValidationErrors.
func Load(path string) (*Resolved, error) {
	data, err := osSource{}.read(path)
	if err != nil {
		return nil, ValidationErrors{{File: path, Msg: "cannot read scenario: " + errText(err), Err: err}}
	}
	return load(path, data, osSource{})
}

// LoadBytes resolves the scenario text data, known to the user as name.
// Its extends paths are resolved within fsys, relative to name's
// directory there; fsys may be nil for a scenario that extends nothing.
// When no name is given in the scenario, name without ".toml" becomes it.
// data.file is resolved within fsys too, or, when fsys is nil, in the
// operating system's file system relative to name's directory.
func LoadBytes(name string, data []byte, fsys fs.FS) (*Resolved, error) {
	var src source = noSource{}
	if fsys != nil {
		src = fsSource{fsys}
	}
	if len(data) > maxFileBytes {
		return nil, ValidationErrors{{File: name, Msg: errTooBig.Error(), Err: errTooBig}}
	}
	return load(name, data, src)
}

// LoadFS reads the scenario name from fsys and resolves it like Load,
// with extends and data.file paths resolved within fsys.
func LoadFS(fsys fs.FS, name string) (*Resolved, error) {
	data, err := fsSource{fsys}.read(name)
	if err != nil {
		return nil, ValidationErrors{{File: name, Msg: "cannot read scenario: " + errText(err), Err: err}}
	}
	return load(name, data, fsSource{fsys})
}

// load runs the pipeline: chain of files, merge over the built-in
// defaults, decode, derived defaults, validation.
func load(name string, data []byte, src source) (*Resolved, error) {
	b, err := readBase(name, data, src)
	if err != nil {
		return nil, err
	}
	return b.Resolve()
}

// Base is a scenario's extends chain, read and parsed once, to be resolved
// with different overrides (the points of a sweep) without reading or
// parsing its files again. Resolve may be called from several goroutines.
type Base struct {
	name   string
	src    source
	layers []*layer // most basic first
}

// ReadBase reads the scenario ref and its extends chain: a file path, or a
// built-in example as example:NAME.
func ReadBase(ref string) (*Base, error) {
	if name, ok := strings.CutPrefix(ref, ExamplePrefix); ok {
		if !slices.Contains(Examples(), strings.TrimSuffix(name, ".toml")) {
			return nil, ValidationErrors{{File: ref, Msg: "no such example; the examples are " + listWords(Examples())}}
		}
		src := fsSource{exampleFS}
		data, err := src.read(exampleFile(name))
		if err != nil {
			return nil, ValidationErrors{{File: ref, Msg: "cannot read example: " + errText(err), Err: err}}
		}
		return readBase(exampleFile(name), data, src)
	}
	data, err := osSource{}.read(ref)
	if err != nil {
		return nil, ValidationErrors{{File: ref, Msg: "cannot read scenario: " + errText(err), Err: err}}
	}
	return readBase(ref, data, osSource{})
}

// Resolve reads the scenario ref (a file path or example:NAME) and applies
// the overrides in order after its files.
func Resolve(ref string, overrides ...Override) (*Resolved, error) {
	b, err := ReadBase(ref)
	if err != nil {
		return nil, err
	}
	return b.Resolve(overrides...)
}

func readBase(name string, data []byte, src source) (*Base, error) {
	_, inExamples := src.(fsSource)
	inExamples = inExamples && src.(fsSource).fsys == exampleFS
	src = withExamples{base: src, inExamples: inExamples}
	layers, err := readChain(name, data, src)
	if err != nil {
		return nil, err
	}
	return &Base{name: name, src: src, layers: layers}, nil
}

// Resolve merges the chain over the built-in defaults, then the overrides
// in order, fills derived defaults, validates, and resolves data.file.
func (b *Base) Resolve(overrides ...Override) (*Resolved, error) {
	def, err := defaultLayer()
	if err != nil {
		return nil, err
	}
	m := newMerged(b.name)
	m.apply(def)
	files := make([]string, len(b.layers))
	for i, l := range b.layers {
		m.apply(l.copyLayer())
		files[i] = l.file
	}
	src := b.src
	var labels []string
	if len(overrides) > 0 {
		w := b.src.(withExamples)
		w.overrides = make(map[string]bool, len(overrides))
		for _, o := range overrides {
			if o.layer == nil {
				return nil, fmt.Errorf("scenarios: override %q was not made by ParseOverride or NewOverride", o.Key)
			}
			m.apply(o.layer.copyLayer())
			w.overrides[o.Label] = true
			labels = append(labels, o.Label)
		}
		src = w
	}
	m.dropNoneParts()

	d := &decoder{merged: m}
	var s Scenario
	d.decodeStruct("", m.root, &s)
	d.fillDerived(&s, stem(b.name))
	d.validate(&s)
	dataPath, dataFS, dataAt := d.resolveData(s.Data.File, src)
	if err := d.errs.result(); err != nil {
		return nil, err
	}
	return &Resolved{Scenario: s, Files: files, Overrides: labels, DataPath: dataPath, DataFS: dataFS,
		dataAt: dataAt, shaAt: d.locate("data.sha256")}, nil
}

// layer is one parsed scenario file.
type layer struct {
	file  string // "" for the built-in defaults
	data  map[string]any
	lines lineIndex
}

// readChain parses name and every file it extends, most basic first.
func readChain(name string, data []byte, src source) ([]*layer, error) {
	var layers []*layer
	seen := make(map[string]bool)
	for {
		l, err := parseLayer(name, data)
		if err != nil {
			return nil, err
		}
		seen[name] = true
		layers = append(layers, l)
		ext, ok := l.data["extends"]
		if !ok {
			break
		}
		delete(l.data, "extends")
		here := &Error{File: name, Line: l.lines.lookup("extends"), Key: "extends"}
		target, ok := ext.(string)
		if !ok {
			here.Msg = fmt.Sprintf("extends must be a string naming another scenario file, e.g. extends = \"base.toml\", not %s", describe(ext))
			return nil, ValidationErrors{here}
		}
		next, err := src.join(name, target)
		if err != nil {
			here.Msg, here.Err = fmt.Sprintf("extends = %s: %s", quoteString(target), errText(err)), err
			return nil, ValidationErrors{here}
		}
		if seen[next] {
			chain := make([]string, 0, len(layers)+1)
			for _, l := range layers {
				chain = append(chain, l.file)
			}
			chain = append(chain, next)
			here.Msg = "extends cycle: " + strings.Join(chain, " -> ") + "; a scenario cannot extend itself, directly or through others"
			return nil, ValidationErrors{here}
		}
		if len(layers) >= maxChain {
			here.Msg = fmt.Sprintf("extends chain is longer than %d files; is a file reached under two names?", maxChain)
			return nil, ValidationErrors{here}
		}
		nextData, err := src.read(next)
		if err != nil {
			here.Msg, here.Err = fmt.Sprintf("extends = %s: cannot read %s: %s", quoteString(target), next, errText(err)), err
			return nil, ValidationErrors{here}
		}
		name, data = next, nextData
	}
	for i, j := 0, len(layers)-1; i < j; i, j = i+1, j-1 {
		layers[i], layers[j] = layers[j], layers[i]
	}
	return layers, nil
}

// parseLayer parses TOML text into a generic tree. The parser is
// third-party code: a panic in it becomes an error so that no input can
// crash a run.
func parseLayer(name string, data []byte) (l *layer, err error) {
	defer func() {
		if r := recover(); r != nil {
			l, err = nil, ValidationErrors{{File: name, Msg: fmt.Sprintf("not a readable TOML file (the parser failed: %v)", r)}}
		}
	}()
	if line, b := binaryByte(data); line > 0 {
		return nil, ValidationErrors{{File: name, Line: line,
			Msg: fmt.Sprintf("holds the byte 0x%02x, which no text file holds: this is binary data, not a TOML scenario (was another file given by mistake?)", b)}}
	}
	if line := nestingTooDeep(data); line > 0 {
		return nil, ValidationErrors{{File: name, Line: line,
			Msg: fmt.Sprintf("keys or tables nest more than %d levels deep here; a scenario needs a few at most (is this a scenario file?)", maxNesting)}}
	}
	m := make(map[string]any)
	if _, perr := toml.Decode(string(data), &m); perr != nil {
		e := &Error{File: name, Msg: "not valid TOML: " + perr.Error(), Err: perr}
		var pe toml.ParseError
		if errors.As(perr, &pe) {
			e.Line = pe.Position.Line
			e.Msg = "not valid TOML: " + pe.Message
			if pe.LastKey != "" {
				e.Msg += fmt.Sprintf(" (after key %q)", pe.LastKey)
			}
		}
		return nil, ValidationErrors{e}
	}
	return &layer{file: name, data: m, lines: indexLines(data)}, nil
}

// stem is a file name without directory and ".toml".
func stem(name string) string {
	base := path.Base(strings.ReplaceAll(name, "\\", "/"))
	if base == "." || base == "/" {
		return ""
	}
	return strings.TrimSuffix(base, ".toml")
}

// errText is an error's text without the "open " prefix noise of fs errors.
func errText(err error) string {
	var pe *fs.PathError
	if errors.As(err, &pe) {
		return pe.Err.Error()
	}
	return err.Error()
}

// binaryByte returns the line of the first control byte a text file does
// not hold (anything below 0x20 but tab, line feed and carriage return, or
// DEL), and the byte; line 0 when there is none. TOML forbids them outside
// comments too, but its parser's message ("expected '=' but got '<'")
// hides that the file is not text at all.
func binaryByte(data []byte) (line int, b byte) {
	line = 1
	for _, c := range data {
		switch {
		case c == '\n':
			line++
		case c < 0x20 && c != '\t' && c != '\r' || c == 0x7f:
			return line, c
		}
	}
	return 0, 0
}
