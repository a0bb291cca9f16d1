package scenarios

import (
	"strconv"
	"strings"
)

// The TOML parser keeps key positions to itself, so the loader finds the
// line of a key by reading the file text once more. The scan understands
// table headers, arrays of tables and (dotted, quoted) keys at the start of
// a line; anything subtler (keys inside inline tables, say) falls back to
// the line of the nearest enclosing key, which is still the right place to
// look.

// lineIndex maps a key path (see joinKey) to the 1-based line defining it.
type lineIndex map[string]int

// lookup returns the line of path or of its nearest ancestor with a known
// line; 0 if none.
func (ix lineIndex) lookup(path string) int {
	for path != "" {
		if n, ok := ix[path]; ok {
			return n
		}
		path = parentKey(path)
	}
	return 0
}

// indexLines scans TOML text for the lines of its keys and headers.
func indexLines(data []byte) lineIndex {
	ix := make(lineIndex)
	table := ""
	arrays := make(map[string]int) // array-of-tables path → elements seen
	inBasic, inLiteral := false, false
	for i, line := range strings.Split(string(data), "\n") {
		n := i + 1
		// Skip the body of multi-line strings: only the line that opens
		// one can hold a key.
		if inBasic || inLiteral {
			if inBasic && strings.Count(line, `"""`)%2 == 1 {
				inBasic = false
			} else if inLiteral && strings.Count(line, `'''`)%2 == 1 {
				inLiteral = false
			}
			continue
		}
		if strings.Count(line, `"""`)%2 == 1 {
			inBasic = true
		} else if strings.Count(line, `'''`)%2 == 1 {
			inLiteral = true
		}
		s := strings.TrimSpace(line)
		switch {
		case s == "" || s[0] == '#':
		case strings.HasPrefix(s, "[["):
			pieces, rest, ok := parseKey(s[2:])
			if !ok || !strings.HasPrefix(strings.TrimSpace(rest), "]]") {
				continue
			}
			p := joinPieces("", pieces)
			k := arrays[p]
			arrays[p] = k + 1
			for q := p; q != ""; q = parentKey(q) {
				setFirst(ix, q, n)
			}
			table = p + "[" + strconv.Itoa(k) + "]"
			ix[table] = n
		case s[0] == '[':
			pieces, rest, ok := parseKey(s[1:])
			if !ok || !strings.HasPrefix(strings.TrimSpace(rest), "]") {
				continue
			}
			table = resolveArrays(joinPieces("", pieces), arrays)
			for q := table; q != ""; q = parentKey(q) {
				setFirst(ix, q, n) // [a.b] defines a too
			}
		default:
			pieces, rest, ok := parseKey(s)
			if !ok || !strings.HasPrefix(strings.TrimSpace(rest), "=") {
				continue
			}
			// Dotted keys define their intermediate tables too.
			p := table
			for _, piece := range pieces {
				p = joinKey(p, piece)
				setFirst(ix, p, n)
			}
		}
	}
	return ix
}

// resolveArrays rewrites a header path that runs through an array of
// tables to name its latest element, as TOML does: after [[a]] the header
// [a.b] means a sub-table of the last element of a.
func resolveArrays(p string, arrays map[string]int) string {
	if len(arrays) == 0 {
		return p
	}
	for a := p; a != ""; a = parentKey(a) {
		if n, ok := arrays[a]; ok {
			return a + "[" + strconv.Itoa(n-1) + "]" + p[len(a):]
		}
	}
	return p
}

func setFirst(ix lineIndex, p string, n int) {
	if _, ok := ix[p]; !ok {
		ix[p] = n
	}
}

// parseKey reads a dotted TOML key from the start of s and returns its
// unquoted pieces and the text after it.
func parseKey(s string) (pieces []string, rest string, ok bool) {
	for {
		s = strings.TrimLeft(s, " \t")
		if s == "" {
			return nil, "", false
		}
		var piece string
		switch s[0] {
		case '"':
			end := 1
			for end < len(s) && s[end] != '"' {
				if s[end] == '\\' {
					end++
				}
				end++
			}
			if end >= len(s) {
				return nil, "", false
			}
			raw := s[:end+1]
			if u, err := strconv.Unquote(raw); err == nil {
				piece = u
			} else {
				piece = raw[1 : len(raw)-1]
			}
			s = s[end+1:]
		case '\'':
			end := strings.IndexByte(s[1:], '\'')
			if end < 0 {
				return nil, "", false
			}
			piece = s[1 : end+1]
			s = s[end+2:]
		default:
			end := 0
			for end < len(s) && isBareKeyByte(s[end]) {
				end++
			}
			if end == 0 {
				return nil, "", false
			}
			piece = s[:end]
			s = s[end:]
		}
		pieces = append(pieces, piece)
		s = strings.TrimLeft(s, " \t")
		if s == "" || s[0] != '.' {
			return pieces, s, true
		}
		s = s[1:]
	}
}

func isBareKeyByte(c byte) bool {
	return c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || c >= '0' && c <= '9' || c == '_' || c == '-'
}

// isBareKey reports whether k can be written unquoted in TOML.
func isBareKey(k string) bool {
	if k == "" {
		return false
	}
	for i := 0; i < len(k); i++ {
		if !isBareKeyByte(k[i]) {
			return false
		}
	}
	return true
}

// quoteKey writes k as a TOML key: bare when it can be, quoted otherwise.
func quoteKey(k string) string {
	if isBareKey(k) {
		return k
	}
	return quoteString(k)
}

// joinKey appends one key to a dotted path, quoting it when needed, so that
// paths are unambiguous and read the way a user would write them.
func joinKey(parent, k string) string {
	if parent == "" {
		return quoteKey(k)
	}
	return parent + "." + quoteKey(k)
}

func joinPieces(parent string, pieces []string) string {
	for _, p := range pieces {
		parent = joinKey(parent, p)
	}
	return parent
}

// elemKey names element i of the array at path.
func elemKey(path string, i int) string { return path + "[" + strconv.Itoa(i) + "]" }

// parentKey strips the last piece (or array index) of a path. Quoted pieces
// may contain dots; the scan respects quotes.
func parentKey(p string) string {
	if strings.HasSuffix(p, "]") {
		if i := strings.LastIndexByte(p, '['); i >= 0 {
			return p[:i]
		}
	}
	cut, inQuote := -1, false
	for i := 0; i < len(p); i++ {
		switch {
		case p[i] == '\\' && inQuote:
			i++
		case p[i] == '"':
			inQuote = !inQuote
		case p[i] == '.' && !inQuote:
			cut = i
		}
	}
	if cut < 0 {
		return ""
	}
	return p[:cut]
}
