package scenarios

import (
	"fmt"
	"sort"
	"strings"

	"spinpop/internal/suggest"
)

// Error is one problem with a scenario: where it is and what would be
// right. File and Line are zero when the problem has no single place, for
// example a value that came from a built-in default.
type Error struct {
	File string // file the offending key came from, as given to the loader
	Line int    // 1-based line in File; 0 when unknown
	Key  string // dotted key path, e.g. "history.burst.mass_fraction"; may be empty
	Msg  string // what was wrong and what would be right
	Err  error  // underlying cause (e.g. an fs error), if any
}

// Error formats the problem like a compiler message: "file:line: message".
func (e *Error) Error() string {
	switch {
	case e.File != "" && e.Line > 0:
		return fmt.Sprintf("%s:%d: %s", e.File, e.Line, e.Msg)
	case e.File != "":
		return e.File + ": " + e.Msg
	}
	return e.Msg
}

// Unwrap gives errors.Is and errors.As access to the cause.
func (e *Error) Unwrap() error { return e.Err }

// ValidationErrors collects every problem found in a scenario, so that a
// user fixes a file in one pass rather than one error per run.
type ValidationErrors []*Error

// Error prints one problem per line.
func (v ValidationErrors) Error() string {
	lines := make([]string, len(v))
	for i, e := range v {
		lines[i] = e.Error()
	}
	return strings.Join(lines, "\n")
}

// Unwrap exposes the individual errors to errors.Is and errors.As.
func (v ValidationErrors) Unwrap() []error {
	errs := make([]error, len(v))
	for i, e := range v {
		errs[i] = e
	}
	return errs
}

// maxErrors bounds the list: past this many, a file is not a scenario with
// typos but something else, and more lines would not help.
const maxErrors = 100

// errorList accumulates errors and remembers which keys already have one,
// so a key with a wrong type is not also reported as out of range.
type errorList struct {
	errs    ValidationErrors
	dropped int
	bad     map[string]bool
}

func (l *errorList) add(e *Error) {
	if l.bad == nil {
		l.bad = make(map[string]bool)
	}
	if e.Key != "" {
		l.bad[e.Key] = true
	}
	if len(l.errs) >= maxErrors {
		l.dropped++
		return
	}
	l.errs = append(l.errs, e)
}

// full reports whether the list holds maxErrors already; callers then
// skip the work of composing a message that would be dropped.
func (l *errorList) full() bool { return len(l.errs) >= maxErrors }

// markBad notes that key has a problem reported under another key.
func (l *errorList) markBad(key string) {
	if l.bad == nil {
		l.bad = make(map[string]bool)
	}
	l.bad[key] = true
}

// isBad reports whether key, or a table holding it, already has an error.
func (l *errorList) isBad(key string) bool {
	for k := key; k != ""; k = parentKey(k) {
		if l.bad[k] {
			return true
		}
	}
	return false
}

// result returns the collected errors sorted by file and line, or nil.
func (l *errorList) result() error {
	if len(l.errs) == 0 {
		return nil
	}
	errs := append(ValidationErrors(nil), l.errs...)
	sort.SliceStable(errs, func(i, j int) bool {
		if errs[i].File != errs[j].File {
			return errs[i].File < errs[j].File
		}
		return errs[i].Line < errs[j].Line
	})
	if l.dropped > 0 {
		errs = append(errs, &Error{Msg: fmt.Sprintf("... and %d more errors; fix the ones above first", l.dropped)})
	}
	return errs
}

// nearest returns the candidate closest to key in edit distance (see
// internal/suggest); ties go to the earlier candidate. It returns "" when
// there are no candidates.
func nearest(key string, candidates []string) string {
	best, _ := suggest.Nearest(key, candidates, nil)
	return best
}

// levenshtein is the edit distance between a and b (see internal/suggest).
func levenshtein(a, b string) int { return suggest.Distance(a, b) }
