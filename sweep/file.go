package sweep

import (
	"errors"
	"fmt"
	"math"
	"path/filepath"
	"slices"
	"strconv"
	"strings"

	"github.com/BurntSushi/toml"

	"spinpop/internal/regular"
	"spinpop/scenarios"
)

// The sweep file (TOML):
//
//	name = "laws"                    # optional; default: the file name
//	scenario = "example:fit"         # the base: a path relative to this file, or example:NAME
//	work = ["test-burst"]            # at each point, in this order: simulate, compare, test-burst, test-alternatives
//
//	[set]                            # keys set at every point, as in a scenario file
//	compare.bootstrap = 200
//
//	[[axis]]
//	key = "spin.law"
//	choices = "all"                  # every name the key accepts
//
//	[[axis]]
//	key = "history.burst.age_gyr"
//	from = 0.3
//	to = 1.2
//	step = 0.3                       # or count = 4 (from and to included)
//
//	[[axis]]
//	key = "run.seed"
//	values = [1, 2, 3]               # any TOML values
//	zip = "seeds"                    # axes with the same zip label vary together
//
// Axes without a zip label, and zip groups, are crossed, the last one
// varying fastest.

// Work steps a sweep can ask for, in the order they run at a point.
const (
	StepSimulate     = "simulate"
	StepCompare      = "compare"
	StepTestBurst    = "test-burst"
	StepAlternatives = "test-alternatives"
)

// Steps lists the work steps in their order.
var Steps = []string{StepSimulate, StepCompare, StepTestBurst, StepAlternatives}

// needsData: steps that compare with an observed catalog.
var needsData = map[string]bool{StepCompare: true, StepTestBurst: true, StepAlternatives: true}

// minAltReplicates is the fewest bootstrap replicates the comparison of
// alternatives accepts (as spinpop test-alternatives does).
const minAltReplicates = 20

// maxPoints bounds a sweep: past this a file is a mistake (a step of
// 1e-9), not a plan.
const maxPoints = 1_000_000

// Axis is one key varied over a list of values.
type Axis struct {
	Key    string `json:"key"`
	Values []any  `json:"values"` // as TOML gives them: string, int64, float64, bool, []any, map[string]any
	Zip    string `json:"zip,omitempty"`

	line      int
	overrides []scenarios.Override // one per value
}

// Sweep is a parsed sweep file with its base scenario read.
type Sweep struct {
	File     string   // the sweep file, as given
	Name     string   // name, or the file name without .toml
	Scenario string   // the base as written in the file
	Work     []string // the steps at each point, in Steps order
	Axes     []Axis

	base   *scenarios.Base
	set    []scenarios.Override
	groups [][]int // axis indices per crossed group, in file order
	sizes  []int   // values per group
	n      int
	lines  func(string) int
}

// Load reads and checks a sweep file (or a built-in one, example:NAME)
// and reads its base scenario. Every problem found is reported at once,
// naming the file, line and key.
func Load(path string) (*Sweep, error) {
	if isExample(path) {
		data, err := exampleData(path)
		if err != nil {
			return nil, err
		}
		return parse(path, data)
	}
	data, err := regular.ReadFile(path) // a FIFO would block for ever
	if err != nil {
		return nil, scenarios.ValidationErrors{{File: path, Msg: "cannot read sweep file: " + err.Error(), Err: err}}
	}
	return parse(path, data)
}

type parser struct {
	file  string
	lines func(string) int
	errs  scenarios.ValidationErrors
}

func (p *parser) errAt(key, format string, args ...any) {
	p.errs = append(p.errs, &scenarios.Error{File: p.file, Line: p.lines(key), Key: key, Msg: fmt.Sprintf(format, args...)})
}

func parse(path string, data []byte) (*Sweep, error) {
	p := &parser{file: path, lines: scenarios.KeyLines(data)}
	var raw map[string]any
	if _, err := toml.Decode(string(data), &raw); err != nil {
		e := &scenarios.Error{File: path, Msg: "not valid TOML: " + err.Error(), Err: err}
		var pe toml.ParseError
		if errors.As(err, &pe) {
			e.Line, e.Msg = pe.Position.Line, "not valid TOML: "+pe.Message
		}
		return nil, scenarios.ValidationErrors{e}
	}
	s := &Sweep{File: path, lines: p.lines}
	p.unknownKeys("", raw, []string{"name", "description", "scenario", "work", "set", "axis"})

	s.Name = strings.TrimSuffix(filepath.Base(path), ".toml")
	if v, ok := raw["name"]; ok {
		if str, ok := v.(string); ok && str != "" {
			s.Name = str
		} else {
			p.errAt("name", "name must be a non-empty string")
		}
	}
	if v, ok := raw["description"]; ok {
		if _, ok := v.(string); !ok {
			p.errAt("description", "description must be a string")
		}
	}
	switch v := raw["scenario"].(type) {
	case string:
		s.Scenario = v
	case nil:
		p.errAt("scenario", "scenario is missing: name the base scenario, a file relative to this one or example:NAME (scenario = \"example:fit\")")
	default:
		p.errAt("scenario", "scenario must be a string naming a file or example:NAME")
	}
	s.Work = p.work(raw["work"])
	if len(p.errs) == 0 {
		ref := s.Scenario
		if isExample(path) && !isExample(ref) {
			p.errAt("scenario", "a built-in sweep file's base must be a built-in scenario (example:NAME), not %q", ref)
			return nil, p.errs
		}
		if !strings.HasPrefix(ref, scenarios.ExamplePrefix) && !filepath.IsAbs(ref) {
			ref = filepath.Join(filepath.Dir(path), ref)
		}
		b, err := scenarios.ReadBase(ref)
		if err != nil {
			p.errAt("scenario", "scenario = %q: %v", s.Scenario, err)
		}
		s.base = b
	}
	if v, ok := raw["set"]; ok {
		s.set = p.setTable(v)
	}
	s.Axes = p.axes(raw["axis"])
	if len(p.errs) > 0 {
		return nil, p.errs
	}
	if err := s.group(p); err != nil {
		return nil, err
	}
	// The base with [set] alone must resolve: its problems are the file's,
	// not every point's.
	res, err := s.base.Resolve(s.set...)
	if err != nil {
		return nil, err
	}
	for _, w := range s.Work {
		if needsData[w] && res.Scenario.Data.File == "" {
			p.errAt("work", "work %q compares with an observed catalog, but scenario %s names none ([data] file = …)", w, s.Scenario)
			return nil, p.errs
		}
	}
	if slices.Contains(s.Work, StepAlternatives) {
		if len(res.Scenario.Compare.Alternatives) == 0 {
			p.errAt("work", "work %q compares the scenario with its [[compare.alternatives]], but scenario %s names none (example:fit names two)", StepAlternatives, s.Scenario)
			return nil, p.errs
		}
		if b := res.Scenario.Compare.Bootstrap; b < minAltReplicates {
			p.errAt("work", "work %q needs compare.bootstrap ≥ %d replicates per explanation (it is %d); set it in [set]", StepAlternatives, minAltReplicates, b)
			return nil, p.errs
		}
	}
	return s, nil
}

// unknownKeys reports keys of table that are not in valid, suggesting the
// nearest.
func (p *parser) unknownKeys(path string, table map[string]any, valid []string) {
	for _, k := range sortedKeys(table) {
		if slices.Contains(valid, k) {
			continue
		}
		key := k
		if path != "" {
			key = path + "." + k
		}
		msg := fmt.Sprintf("unknown key %q", k)
		if s := nearest(k, valid); s != "" {
			msg += fmt.Sprintf("; did you mean %q?", s)
		} else {
			msg += "; the keys here are " + strings.Join(valid, ", ")
		}
		p.errAt(key, "%s", msg)
	}
}

func (p *parser) work(v any) []string {
	if v == nil {
		p.errAt("work", "work is missing: list what to do at each point, from %s (work = [\"simulate\"])", strings.Join(Steps, ", "))
		return nil
	}
	list, ok := v.([]any)
	if !ok {
		if s, isStr := v.(string); isStr {
			list = []any{s}
		} else {
			p.errAt("work", "work must be a list of steps from %s", strings.Join(Steps, ", "))
			return nil
		}
	}
	var out []string
	for _, e := range list {
		name, ok := e.(string)
		if !ok || !slices.Contains(Steps, name) {
			msg := fmt.Sprintf("work step %v is not one of %s", e, strings.Join(Steps, ", "))
			if ok {
				if s := nearest(name, Steps); s != "" {
					msg += fmt.Sprintf("; did you mean %q?", s)
				}
			}
			p.errAt("work", "%s", msg)
			continue
		}
		if slices.Contains(out, name) {
			p.errAt("work", "work step %q is listed twice", name)
			continue
		}
		out = append(out, name)
	}
	if len(list) == 0 {
		p.errAt("work", "work is empty: list at least one step from %s", strings.Join(Steps, ", "))
	}
	slices.SortFunc(out, func(a, b string) int { return slices.Index(Steps, a) - slices.Index(Steps, b) })
	return out
}

// setTable makes one override per top-level key of [set]: a subtree
// merges into the scenario exactly as the same text in a scenario file
// would (a table naming its kind replaces the inherited one).
func (p *parser) setTable(v any) []scenarios.Override {
	t, ok := v.(map[string]any)
	if !ok {
		p.errAt("set", "set must be a table of scenario keys ([set] then compare.bootstrap = 200)")
		return nil
	}
	var out []scenarios.Override
	for _, k := range sortedKeys(t) {
		key := "set." + k
		label := fmt.Sprintf("%s:%d ([set] %s)", p.file, p.lines(key), k)
		o, err := scenarios.NewOverride(label, quoteKeyPiece(k), t[k])
		if err != nil {
			p.errAt(key, "%v", err)
			continue
		}
		out = append(out, o)
	}
	return out
}

func (p *parser) axes(v any) []Axis {
	if v == nil {
		return nil // a sweep of one point: the base with [set]
	}
	list, ok := v.([]map[string]any)
	if !ok {
		p.errAt("axis", "axis must be an array of tables: write each axis as [[axis]] with key = … and its values")
		return nil
	}
	var out []Axis
	seen := map[string]int{}
	for i, t := range list {
		at := fmt.Sprintf("axis[%d]", i)
		p.unknownKeys(at, t, []string{"key", "values", "choices", "from", "to", "step", "count", "zip"})
		a := Axis{line: p.lines(at)}
		key, ok := t["key"].(string)
		if !ok || key == "" {
			p.errAt(at+".key", "each axis needs key = \"…\", the scenario key it varies (e.g. key = \"spin.law\")")
			continue
		}
		a.Key = key
		if j, dup := seen[key]; dup {
			p.errAt(at+".key", "key %q is already varied by axis %d; vary each key on one axis", key, j+1)
			continue
		}
		seen[key] = i
		if z, has := t["zip"]; has {
			if zs, ok := z.(string); ok && zs != "" {
				a.Zip = zs
			} else {
				p.errAt(at+".zip", "zip must be a non-empty label; axes with the same label vary together")
			}
		}
		_, hasValues := t["values"]
		_, hasChoices := t["choices"]
		_, hasFrom := t["from"]
		kinds := 0
		for _, h := range []bool{hasValues, hasChoices, hasFrom} {
			if h {
				kinds++
			}
		}
		if kinds != 1 {
			p.errAt(at, "axis %q needs exactly one of: values = [ … ], choices = \"all\", or from = … to = … with step or count", key)
			continue
		}
		switch {
		case hasValues:
			vals, ok := t["values"].([]any)
			if !ok || len(vals) == 0 {
				p.errAt(at+".values", "values must be a non-empty list, e.g. values = [0.3, 0.6]")
				continue
			}
			a.Values = vals
		case hasChoices:
			c, ok := t["choices"].(string)
			names, known := scenarios.Choices(key)
			switch {
			case !ok || c != "all":
				p.errAt(at+".choices", "choices must be \"all\" (every name %s accepts); list a subset with values = [ … ]", key)
				continue
			case !known:
				p.errAt(at+".choices", "%s has no fixed set of names; choices = \"all\" works for %s", key, strings.Join(scenarios.ChoiceKeys(), ", "))
				continue
			}
			for _, n := range names {
				a.Values = append(a.Values, n)
			}
		default:
			a.Values = p.rangeValues(at, t)
			if a.Values == nil {
				continue
			}
		}
		out = append(out, a)
	}
	return out
}

// rangeValues expands from/to with step or count. Integers stay integers
// (run.seed); floats are rounded to 12 significant digits so that 0.1 + 0.2
// reads 0.3 in the table and the scenario.
func (p *parser) rangeValues(at string, t map[string]any) []any {
	_, hasStep := t["step"]
	_, hasCount := t["count"]
	if _, hasTo := t["to"]; !hasTo {
		p.errAt(at+".to", "a range needs to = … as well as from")
		return nil
	}
	if hasStep && hasCount {
		p.errAt(at, "give step or count, not both")
		return nil
	}
	fromI, fromInt := t["from"].(int64)
	toI, toInt := t["to"].(int64)
	stepI, stepInt := t["step"].(int64)
	if fromInt && toInt && (stepInt || (!hasStep && !hasCount)) {
		if !hasStep {
			stepI = 1
		}
		if stepI <= 0 {
			p.errAt(at+".step", "step must be positive")
			return nil
		}
		if toI < fromI {
			p.errAt(at+".to", "to = %d is below from = %d", toI, fromI)
			return nil
		}
		if (toI-fromI)/stepI+1 > maxPoints {
			p.errAt(at, "the range has more than %d values", maxPoints)
			return nil
		}
		var out []any
		for v := fromI; v <= toI; v += stepI {
			out = append(out, v)
		}
		return out
	}
	from, ok1 := number(t["from"])
	to, ok2 := number(t["to"])
	if !ok1 || !ok2 {
		p.errAt(at, "from and to must be numbers")
		return nil
	}
	if to < from {
		p.errAt(at+".to", "to = %s is below from = %s", fmtNum(to), fmtNum(from))
		return nil
	}
	var out []any
	switch {
	case hasCount:
		c, ok := t["count"].(int64)
		if !ok || c < 1 || c > maxPoints {
			p.errAt(at+".count", "count must be an integer from 1 to %d", maxPoints)
			return nil
		}
		if c == 1 {
			if from != to {
				p.errAt(at+".count", "count = 1 needs from = to")
				return nil
			}
			return []any{from}
		}
		for i := range c {
			out = append(out, round12(from+(to-from)*float64(i)/float64(c-1)))
		}
	case hasStep:
		step, ok := number(t["step"])
		if !ok || !(step > 0) {
			p.errAt(at+".step", "step must be a positive number")
			return nil
		}
		n := math.Floor((to-from)/step + 1e-9)
		if n+1 > maxPoints {
			p.errAt(at+".step", "step = %s gives more than %d values from %s to %s", fmtNum(step), maxPoints, fmtNum(from), fmtNum(to))
			return nil
		}
		for i := 0; i <= int(n); i++ {
			out = append(out, round12(from+float64(i)*step))
		}
	default:
		p.errAt(at, "a range of non-integers needs step = … or count = …")
		return nil
	}
	return out
}

// group forms the crossed groups: each axis alone, or all axes sharing a
// zip label (which must have equally many values).
func (s *Sweep) group(p *parser) error {
	byZip := map[string]int{}
	for i, a := range s.Axes {
		if a.Zip != "" {
			if g, ok := byZip[a.Zip]; ok {
				first := s.Axes[s.groups[g][0]]
				if len(first.Values) != len(a.Values) {
					p.errAt(fmt.Sprintf("axis[%d]", i), "axis %q has %d values but axis %q, zipped with it (zip = %q), has %d; zipped axes vary together and need equally many",
						a.Key, len(a.Values), first.Key, a.Zip, len(first.Values))
					continue
				}
				s.groups[g] = append(s.groups[g], i)
				continue
			}
			byZip[a.Zip] = len(s.groups)
		}
		s.groups = append(s.groups, []int{i})
		s.sizes = append(s.sizes, len(a.Values))
	}
	s.n = 1
	for _, n := range s.sizes {
		if s.n > maxPoints/n {
			p.errAt("axis", "the axes cross to more than %d points", maxPoints)
			break
		}
		s.n *= n
	}
	if len(p.errs) > 0 {
		return p.errs
	}
	for i := range s.Axes {
		a := &s.Axes[i]
		a.overrides = make([]scenarios.Override, len(a.Values))
		for j, v := range a.Values {
			label := fmt.Sprintf("%s:%d (axis %s = %s)", s.File, a.line, a.Key, ValueText(v))
			o, err := scenarios.NewOverride(label, a.Key, v)
			if err != nil {
				p.errAt(fmt.Sprintf("axis[%d].key", i), "%v", err)
				break
			}
			a.overrides[j] = o
		}
	}
	if len(p.errs) > 0 {
		return p.errs
	}
	return nil
}

// ValueText writes an axis value as TOML would, for labels and tables.
func ValueText(v any) string {
	switch t := v.(type) {
	case string:
		return strconv.Quote(t)
	case float64:
		return fmtNum(t)
	case int64:
		return strconv.FormatInt(t, 10)
	case bool:
		return strconv.FormatBool(t)
	}
	var b strings.Builder
	if err := toml.NewEncoder(&b).Encode(map[string]any{"v": v}); err == nil {
		if s, ok := strings.CutPrefix(strings.TrimSpace(b.String()), "v = "); ok {
			return s
		}
	}
	return fmt.Sprint(v)
}

func fmtNum(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }

func round12(x float64) float64 {
	r, _ := strconv.ParseFloat(strconv.FormatFloat(x, 'g', 12, 64), 64)
	return r
}

func number(v any) (float64, bool) {
	switch t := v.(type) {
	case int64:
		return float64(t), true
	case float64:
		return t, !math.IsNaN(t) && !math.IsInf(t, 0)
	}
	return 0, false
}

func sortedKeys(m map[string]any) []string {
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	slices.Sort(keys)
	return keys
}

// quoteKeyPiece quotes a [set] key that is not a bare TOML key.
func quoteKeyPiece(k string) string {
	for _, r := range k {
		if !(r == '_' || r == '-' || ('a' <= r && r <= 'z') || ('A' <= r && r <= 'Z') || ('0' <= r && r <= '9')) {
			return strconv.Quote(k)
		}
	}
	return k
}

func nearest(w string, valid []string) string { return scenarios.Suggest(w, valid) }
