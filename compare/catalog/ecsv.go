package catalog

import (
	"fmt"
	"strings"
)

// ECSV header.
//
// An ECSV file (Enhanced Character Separated Values, the astronomy
// community's text table format) starts with "# %ECSV <version>", then
// "# ---", then a YAML document in comment lines ("# " prefix), then the
// delimited body whose first row names the columns. Only the part of the
// YAML that a reader needs is parsed here, by hand: the top-level keys
// "delimiter" and "datatype", the latter a sequence of mappings with
// "name", "unit" and "datatype" in either flow style
//
//	# - {name: period, unit: d, datatype: float64}
//
// or block style
//
//	# - name: period
//	#   unit: d
//	#   datatype: float64
//
// Scalars may be plain, 'single-quoted' ('' escapes a quote) or
// "double-quoted" (backslash escapes). Everything else (meta, schema,
// descriptions, formats) is skipped.

// Column describes one column of a catalog.
type Column struct {
	Name     string
	Unit     string // "" when the file gives none (always, for plain CSV)
	Datatype string // ECSV datatype such as "float64"; "" for plain CSV
}

type ecsvHeader struct {
	version   string
	delimiter byte
	columns   []Column
}

// headerLine is one comment line of the header with its file line number.
type headerLine struct {
	num  int
	text string // without the leading "#" and one following space
}

func parseECSVHeader(lines []headerLine) (*ecsvHeader, *lineError) {
	h := &ecsvHeader{delimiter: ' '}
	if len(lines) == 0 {
		return nil, &lineError{0, "empty ECSV header"}
	}
	first := strings.TrimSpace(lines[0].text)
	h.version = strings.TrimSpace(strings.TrimPrefix(first, "%ECSV"))
	if !strings.HasPrefix(h.version, "0.") && !strings.HasPrefix(h.version, "1.") {
		return nil, &lineError{lines[0].num, fmt.Sprintf("unsupported ECSV version %q (this reader knows 0.9 and 1.x)", h.version)}
	}
	rest := lines[1:]
	for len(rest) > 0 && strings.TrimSpace(rest[0].text) == "" {
		rest = rest[1:]
	}
	if len(rest) == 0 || strings.TrimSpace(rest[0].text) != "---" {
		num := lines[0].num + 1
		if len(rest) > 0 {
			num = rest[0].num
		}
		return nil, &lineError{num, `ECSV header must continue with "# ---" after the "# %ECSV" line`}
	}
	rest = rest[1:]

	topKey := ""
	var cur *Column  // block-style item being filled
	itemIndent := -1 // column of the "-" of the datatype items
	keyIndent := -1  // column of the first key of the current block item
	for _, hl := range rest {
		text := hl.text
		if strings.TrimSpace(text) == "" || strings.HasPrefix(strings.TrimSpace(text), "#") {
			continue
		}
		indent := len(text) - len(strings.TrimLeft(text, " "))
		body := strings.TrimSpace(text)
		if indent == 0 && !strings.HasPrefix(body, "- ") && body != "-" {
			// A new top-level key.
			cur = nil
			key, val, ok := splitKeyValue(body)
			if !ok {
				return nil, &lineError{hl.num, fmt.Sprintf("cannot read ECSV header line %q (expected \"key: value\")", body)}
			}
			topKey = key
			if key == "delimiter" {
				d, err := unquoteScalar(val)
				if err != nil {
					return nil, &lineError{hl.num, err.Error()}
				}
				switch d {
				case " ":
					h.delimiter = ' '
				case ",":
					h.delimiter = ','
				default:
					return nil, &lineError{hl.num, fmt.Sprintf("ECSV delimiter %q is not allowed; ECSV uses a space or a comma", d)}
				}
			}
			continue
		}
		if topKey != "datatype" {
			continue // inside meta, schema or another key we skip
		}
		if strings.HasPrefix(body, "- ") || body == "-" {
			item := strings.TrimSpace(strings.TrimPrefix(body, "-"))
			if itemIndent >= 0 && indent != itemIndent {
				// A sequence nested inside a column's entry (e.g. its meta).
				continue
			}
			itemIndent = indent
			afterDash := strings.TrimPrefix(body, "-")
			keyIndent = indent + 1 + len(afterDash) - len(strings.TrimLeft(afterDash, " "))
			h.columns = append(h.columns, Column{})
			cur = &h.columns[len(h.columns)-1]
			if strings.HasPrefix(item, "{") {
				if err := parseFlowMapping(item, cur); err != nil {
					return nil, &lineError{hl.num, err.Error()}
				}
				cur = nil
				continue
			}
			if item == "" {
				keyIndent = -1 // the keys start on the next line
				continue
			}
			if err := setColumnKey(item, cur); err != nil {
				return nil, &lineError{hl.num, err.Error()}
			}
			continue
		}
		// A continuation line of a block-style item: only the item's own
		// keys, aligned under its first key, count; deeper lines are
		// nested values.
		if cur != nil && keyIndent < 0 && indent > itemIndent {
			keyIndent = indent
		}
		if cur == nil || indent != keyIndent {
			continue
		}
		if err := setColumnKey(body, cur); err != nil {
			return nil, &lineError{hl.num, err.Error()}
		}
	}
	if len(h.columns) == 0 {
		return nil, &lineError{lines[len(lines)-1].num, `ECSV header has no "datatype:" list describing the columns`}
	}
	for i, c := range h.columns {
		if c.Name == "" {
			return nil, &lineError{lines[0].num, fmt.Sprintf("ECSV datatype entry %d has no name", i+1)}
		}
	}
	return h, nil
}

// setColumnKey reads one "key: value" of a column entry into c. Keys other
// than name, unit and datatype are ignored, and so are nested values.
func setColumnKey(kv string, c *Column) error {
	key, val, ok := splitKeyValue(kv)
	if !ok {
		return fmt.Errorf("cannot read ECSV column entry %q (expected \"key: value\")", kv)
	}
	switch key {
	case "name", "unit", "datatype":
		v, err := unquoteScalar(val)
		if err != nil {
			return err
		}
		switch key {
		case "name":
			c.Name = v
		case "unit":
			c.Unit = v
		case "datatype":
			c.Datatype = v
		}
	}
	return nil
}

// splitKeyValue splits "key: value" at the first ": " (or a trailing ":").
func splitKeyValue(s string) (key, val string, ok bool) {
	if strings.HasSuffix(s, ":") {
		return strings.TrimSpace(s[:len(s)-1]), "", true
	}
	i := strings.Index(s, ": ")
	if i < 0 {
		return "", "", false
	}
	return strings.TrimSpace(s[:i]), strings.TrimSpace(s[i+2:]), true
}

// parseFlowMapping reads "{k: v, k: v, ...}" into c, honouring quotes so
// that commas and colons inside quoted values do not split.
func parseFlowMapping(s string, c *Column) error {
	s = strings.TrimSpace(s)
	if !strings.HasPrefix(s, "{") || !strings.HasSuffix(s, "}") {
		return fmt.Errorf("ECSV column entry %q: a flow mapping must be enclosed in { }", s)
	}
	inner := s[1 : len(s)-1]
	var parts []string
	start := 0
	var quote byte
	depth := 0
	for i := 0; i < len(inner); i++ {
		ch := inner[i]
		switch {
		case quote != 0:
			if ch == '\\' && quote == '"' {
				i++
			} else if ch == quote {
				if quote == '\'' && i+1 < len(inner) && inner[i+1] == '\'' {
					i++
				} else {
					quote = 0
				}
			}
		case ch == '\'' || ch == '"':
			quote = ch
		case ch == '{' || ch == '[':
			depth++
		case ch == '}' || ch == ']':
			depth--
		case ch == ',' && depth == 0:
			parts = append(parts, inner[start:i])
			start = i + 1
		}
	}
	if quote != 0 {
		return fmt.Errorf("ECSV column entry %q has an unclosed quote", s)
	}
	parts = append(parts, inner[start:])
	for _, p := range parts {
		p = strings.TrimSpace(p)
		if p == "" {
			continue
		}
		if err := setColumnKey(p, c); err != nil {
			return err
		}
	}
	return nil
}

// unquoteScalar returns the value of a YAML scalar: plain, 'single' or
// "double" quoted.
func unquoteScalar(v string) (string, error) {
	v = strings.TrimSpace(v)
	if len(v) >= 2 && v[0] == '\'' && v[len(v)-1] == '\'' {
		return strings.ReplaceAll(v[1:len(v)-1], "''", "'"), nil
	}
	if len(v) >= 2 && v[0] == '"' && v[len(v)-1] == '"' {
		var b strings.Builder
		in := v[1 : len(v)-1]
		for i := 0; i < len(in); i++ {
			if in[i] == '\\' && i+1 < len(in) {
				i++
				switch in[i] {
				case 'n':
					b.WriteByte('\n')
				case 't':
					b.WriteByte('\t')
				default:
					b.WriteByte(in[i])
				}
				continue
			}
			b.WriteByte(in[i])
		}
		return b.String(), nil
	}
	if strings.HasPrefix(v, "'") || strings.HasPrefix(v, "\"") {
		return "", fmt.Errorf("unclosed quote in ECSV header value %s", v)
	}
	return v, nil
}
