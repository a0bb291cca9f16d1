package scenarios

import (
	"fmt"
	"strings"
	"sync"

	"github.com/BurntSushi/toml"
)

// Overrides. An Override sets one key after a scenario's files, as the
// command line's --set key=value does and as a sweep does at each point. It
// is one more layer on top of the extends chain: merged by the same rule (a
// table that names its kind replaces the inherited one; kind = "none"
// removes a history part), decoded and validated by the same code, so it
// gets the same errors and ranges as the file would, blamed on the
// override's label instead of a file and line. Its value is in the
// canonical form and so in the hash.

// Override is one key = value setting applied on top of a scenario's
// files. Make one with ParseOverride or NewOverride.
type Override struct {
	// Label names the override in messages, in place of "file:line":
	// "--set spin.law=torque" for ParseOverride.
	Label string
	// Key is the dotted key path, e.g. "history.burst.age_gyr".
	Key string
	// Value is the value as decoded from TOML: string, int64, float64,
	// bool, []any, map[string]any.
	Value any

	layer *layer
}

// ParseOverride reads "key=value" as given to --set. The key is a dotted
// path (spin.law, history.burst.age_gyr; quoted pieces as in TOML). The
// value is TOML (0.8, 200, true, "text", [0.3, 0.6], {kind = "burst", …});
// a bare word that is not TOML (torque, cranmer-saar) is taken as a string,
// so the common case needs no shell quoting. Errors name the argument.
func ParseOverride(arg string) (Override, error) {
	label := "--set " + arg
	key, text, ok := strings.Cut(arg, "=")
	key, text = strings.TrimSpace(key), strings.TrimSpace(text)
	if !ok || key == "" {
		return Override{}, &Error{File: label, Msg: "want key=value, e.g. --set spin.law=torque or --set history.burst.age_gyr=0.8"}
	}
	v, err := parseOverrideValue(text)
	if err != nil {
		return Override{}, &Error{File: label, Key: key, Msg: err.Error()}
	}
	return NewOverride(label, key, v)
}

// ParseOverrides parses each argument and reports every bad one at once.
func ParseOverrides(args []string) ([]Override, error) {
	out := make([]Override, 0, len(args))
	var errs ValidationErrors
	for _, a := range args {
		o, err := ParseOverride(a)
		if err != nil {
			errs = append(errs, err.(*Error))
			continue
		}
		out = append(out, o)
	}
	if len(errs) > 0 {
		return nil, errs
	}
	return out, nil
}

// NewOverride sets key to a value already decoded from TOML (string,
// int64, float64, bool, []any, map[string]any, as BurntSushi/toml gives
// them), labelled for messages; a sweep builds its points this way. The
// key must be a dotted path of table keys: array elements cannot be set
// one by one.
func NewOverride(label, key string, value any) (Override, error) {
	pieces, rest, ok := parseKey(key)
	if !ok || rest != "" {
		msg := fmt.Sprintf("%s is not a dotted key path such as spin.law or history.burst.age_gyr", quoteString(key))
		if strings.Contains(key, "[") {
			msg += "; an array is set whole (compare.free = [ … ]), not element by element"
		}
		return Override{}, &Error{File: label, Key: key, Msg: msg}
	}
	if pieces[0] == "extends" {
		return Override{}, &Error{File: label, Key: key, Msg: "extends cannot be overridden; name the scenario to start from instead (a file or example:NAME)"}
	}
	if value == nil {
		return Override{}, &Error{File: label, Key: key, Msg: "no value given"}
	}
	data := make(map[string]any)
	t := data
	for _, p := range pieces[:len(pieces)-1] {
		next := make(map[string]any)
		t[p] = next
		t = next
	}
	t[pieces[len(pieces)-1]] = value
	path := joinPieces("", pieces)
	return Override{Label: label, Key: path, Value: value,
		layer: &layer{file: label, data: data, lines: lineIndex{}}}, nil
}

// parseOverrideValue reads the text after '=' as a TOML value, or as a
// string when it is a bare word that TOML would not accept.
func parseOverrideValue(text string) (v any, err error) {
	if text == "" {
		return nil, fmt.Errorf("no value after '='; for an empty string write key=\"\"")
	}
	if strings.ContainsAny(text, "\n\r") {
		return nil, fmt.Errorf("the value spans lines; give it on one line")
	}
	defer func() {
		if r := recover(); r != nil {
			v, err = nil, fmt.Errorf("%s is not a TOML value (the parser failed: %v)", text, r)
		}
	}()
	var m map[string]any
	_, perr := toml.Decode("v = "+text, &m)
	if perr == nil {
		if len(m) != 1 {
			return nil, fmt.Errorf("%s is more than one value", text)
		}
		return m["v"], nil
	}
	if isBareWord(text) {
		return text, nil
	}
	msg := perr.Error()
	if pe, ok := perr.(toml.ParseError); ok {
		msg = pe.Message
	}
	return nil, fmt.Errorf("%s is not a TOML value (%s); write strings in quotes, numbers as 0.8 or 200, lists as [1, 2]", text, msg)
}

// isBareWord: text a user means as a string without quoting it.
func isBareWord(text string) bool {
	return !strings.ContainsAny(text, "\"'[]{}=#,")
}

// defaults is the parsed bottom layer, parsed once: every resolve starts
// from a copy of it.
var defaults = sync.OnceValues(func() (*layer, error) {
	return parseLayer("", []byte(builtinDefaults))
})

// copyTree copies a parsed TOML tree deeply enough that merging into the
// copy leaves the original as it was.
func copyTree(m map[string]any) map[string]any {
	out := make(map[string]any, len(m))
	for k, v := range m {
		out[k] = copyValue(v)
	}
	return out
}

func copyValue(v any) any {
	switch t := v.(type) {
	case map[string]any:
		return copyTree(t)
	case []map[string]any:
		c := make([]map[string]any, len(t))
		for i, e := range t {
			c[i] = copyTree(e)
		}
		return c
	case []any:
		c := make([]any, len(t))
		for i, e := range t {
			c[i] = copyValue(e)
		}
		return c
	}
	return v
}

// copyLayer is l with a tree of its own.
func (l *layer) copyLayer() *layer {
	return &layer{file: l.file, data: copyTree(l.data), lines: l.lines}
}
