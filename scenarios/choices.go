package scenarios

import (
	"slices"

	"spinpop/model/spin"
)

// choices are the keys that take one of a fixed set of names: the
// format's own, the registered spin-down laws, and the word options those
// laws declare.
func choices() map[string][]string {
	c := map[string][]string{
		"imf.form":               imfForms,
		"dust.model":             dustModels,
		"stars.relations":        relationsTables,
		"spin.law":               spin.Names(),
		"spin.turnover":          turnovers,
		"survey.band":            bands,
		"compare.normalisation":  normalisations,
		"compare.template_noise": templateNoises,
	}
	tables, _ := spin.OptionTables()
	for _, t := range tables {
		for _, k := range t.Keys {
			if len(k.OneOf) > 0 {
				c["spin."+t.Name+"."+k.Name] = k.OneOf
			}
		}
	}
	return c
}

// Choices returns the names a key with a fixed set of them accepts
// (spin.law, spin.turnover, stars.relations, …), in the order the
// validation lists them, and whether key is such a key. A sweep's
// choices = "all" expands to these.
func Choices(key string) ([]string, bool) {
	c, ok := choices()[key]
	return slices.Clone(c), ok
}

// ChoiceKeys lists the keys Choices knows, sorted.
func ChoiceKeys() []string {
	c := choices()
	keys := make([]string, 0, len(c))
	for k := range c {
		keys = append(keys, k)
	}
	slices.Sort(keys)
	return keys
}

// KeyLines indexes the lines of the keys in a TOML text, as the scenario
// loader does for its messages, for other files of the project (sweep
// files): the returned function gives the 1-based line of a key path
// (axis[1].step; arrays of tables by element) or of its nearest enclosing
// key, and 0 when none is known.
func KeyLines(data []byte) func(path string) int {
	return indexLines(data).lookup
}

// Suggest returns the word of valid closest to w when it is close enough
// to be a typo of it (the rule the scenario loader uses for unknown keys),
// else "". Other files of the project use it for their own keys.
func Suggest(w string, valid []string) string {
	s := nearest(w, valid)
	if s != "" && levenshtein(w, s) <= max(2, max(len(w), len(s))/2) {
		return s
	}
	return ""
}
