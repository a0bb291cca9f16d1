package scenarios

// Merge rule. Layers apply in order: built-in defaults, then the most basic
// ancestor, ..., then the loaded file. Tables merge key by key; scalars and
// arrays (including arrays of tables) replace. One exception makes
// switching a component's kind safe: a table that sets `kind` replaces the
// inherited table of the same name wholesale, so no key of the old kind
// lingers. A history part whose merged kind is "none" is removed.

// origin is where a merged value came from.
type origin struct {
	file string // "" for the built-in defaults and derived defaults
	line int
	note string // for defaults: how the value was chosen
	// rank is the layer's place in the merge, from 1 for the built-in
	// defaults up (0: a derived default); a rule between two keys blames
	// the one set in the later layer, the user's own change.
	rank int
}

// merged is the merged tree and, for every key path in it (tables too),
// the layer that set it last.
type merged struct {
	top     string // the loaded file, for problems with no better place
	root    map[string]any
	origins map[string]origin
	layers  int // layers applied so far
}

func newMerged(top string) *merged {
	return &merged{top: top, root: make(map[string]any), origins: make(map[string]origin)}
}

func (m *merged) apply(l *layer) {
	m.layers++
	m.mergeTable(m.root, l.data, "", l, 0)
}

// mergeTable merges src into dst; line is the line of path in l.
func (m *merged) mergeTable(dst, src map[string]any, path string, l *layer, line int) {
	for k, v := range src {
		p := joinKey(path, k)
		pline := line
		if n, ok := l.lines[p]; ok {
			pline = n
		}
		sv, srcTable := v.(map[string]any)
		dv, dstTable := dst[k].(map[string]any)
		if srcTable && dstTable && !replacesTable(sv) {
			m.origins[p] = m.originIn(l, true, pline)
			m.mergeTable(dv, sv, p, l, pline)
			continue
		}
		if old, had := dst[k]; had {
			m.forget(p, old)
		}
		dst[k] = v
		m.record(p, v, l, pline)
	}
}

// replacesTable reports whether a table starts afresh instead of merging:
// it does when it names its kind.
func replacesTable(t map[string]any) bool {
	_, ok := t["kind"]
	return ok
}

// originIn is the origin of a value at line in layer l. A default table gets no note:
// problems inside it belong to the user's file, not to the defaults.
func (m *merged) originIn(l *layer, table bool, line int) origin {
	if l.file == "" {
		if table {
			return origin{rank: m.layers}
		}
		return origin{note: "built-in default", rank: m.layers}
	}
	return origin{file: l.file, line: line, rank: m.layers}
}

// record notes l as the origin of p and of everything below it. line is
// the line of p's nearest ancestor, handed down so that deep values cost
// one index look-up each.
func (m *merged) record(p string, v any, l *layer, line int) {
	if n, ok := l.lines[p]; ok {
		line = n
	}
	_, table := v.(map[string]any)
	m.origins[p] = m.originIn(l, table, line)
	switch t := v.(type) {
	case map[string]any:
		for k, c := range t {
			m.record(joinKey(p, k), c, l, line)
		}
	case []map[string]any:
		for i, c := range t {
			m.record(elemKey(p, i), c, l, line)
		}
	case []any:
		for i, c := range t {
			if _, ok := c.(map[string]any); ok {
				m.record(elemKey(p, i), c, l, line)
			}
		}
	}
}

// forget drops the origins of p and everything below it, walking the old
// value so that the cost is its size, not the size of the whole tree.
func (m *merged) forget(p string, old any) {
	delete(m.origins, p)
	switch t := old.(type) {
	case map[string]any:
		for k, c := range t {
			m.forget(joinKey(p, k), c)
		}
	case []map[string]any:
		for i, c := range t {
			m.forget(elemKey(p, i), c)
		}
	case []any:
		for i, c := range t {
			m.forget(elemKey(p, i), c)
		}
	}
}

// dropNoneParts removes history parts whose kind is "none".
func (m *merged) dropNoneParts() {
	h, ok := m.root["history"].(map[string]any)
	if !ok {
		return
	}
	for k, v := range h {
		if part, ok := v.(map[string]any); ok && part["kind"] == "none" {
			delete(h, k)
			m.forget(joinKey("history", k), part)
		}
	}
}

// present reports whether any layer set p.
func (m *merged) present(p string) bool {
	_, ok := m.origins[p]
	return ok
}

// locate finds the file and line to blame for p: its own origin or that of
// its nearest ancestor, else the loaded file.
func (m *merged) locate(p string) origin {
	for q := p; q != ""; q = parentKey(q) {
		if o, ok := m.origins[q]; ok {
			return o
		}
	}
	return origin{file: m.top}
}
