package catalog

import (
	"fmt"
	"regexp"
	"strconv"
	"strings"

	"go.yaml.in/yaml/v3"
)

// ECSV header.
//
// An ECSV file (Enhanced Character Separated Values, the astronomy
// community's text table format) starts with "# %ECSV <version>", then
// "# ---", then a YAML document in comment lines ("# " prefix), then the
// delimited body whose first row names the columns. The YAML is parsed by
// go.yaml.in/yaml/v3; of it, a reader needs the top-level keys
// "delimiter" and "datatype", the latter a sequence of mappings with
// "name", "unit" and "datatype", in flow style
//
//	# - {name: period, unit: d, datatype: float64}
//
// or block style
//
//	# - name: period
//	#   unit: d
//	#   datatype: float64
//
// Everything else (meta, schema, descriptions, formats) is skipped.

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
	last := lines[len(lines)-1].num

	// The YAML document, one line per header line, so that YAML line k is
	// file line rest[k-1].num.
	fileLine := func(k int) int {
		if k >= 1 && k <= len(rest) {
			return rest[k-1].num
		}
		return last
	}
	var doc strings.Builder
	for _, hl := range rest {
		indent := hl.text[:len(hl.text)-len(strings.TrimLeft(hl.text, " \t"))]
		if strings.ContainsRune(indent, '\t') {
			return nil, &lineError{hl.num, "ECSV header is not valid YAML: this line is indented with a tab, and YAML indents with spaces only"}
		}
		doc.WriteString(hl.text)
		doc.WriteByte('\n')
	}
	var root yaml.Node
	if err := yaml.Unmarshal([]byte(doc.String()), &root); err != nil {
		return nil, yamlError(err, fileLine, func(k int) string {
			if k >= 1 && k <= len(rest) {
				return rest[k-1].text
			}
			return ""
		})
	}
	if root.Kind == 0 || len(root.Content) == 0 {
		return nil, &lineError{last, `ECSV header has no "datatype:" list describing the columns`}
	}
	top := root.Content[0]
	if top.Kind != yaml.MappingNode {
		return nil, &lineError{fileLine(top.Line), fmt.Sprintf(`ECSV header must be a YAML mapping of "key: value" entries (delimiter, datatype, meta, schema); found %s`, nodeKind(top))}
	}
	var datatype *yaml.Node
	for i := 0; i+1 < len(top.Content); i += 2 {
		key, val := top.Content[i], top.Content[i+1]
		switch key.Value {
		case "delimiter":
			if val.Kind != yaml.ScalarNode {
				return nil, &lineError{fileLine(val.Line), fmt.Sprintf("ECSV delimiter must be a single character, not %s", nodeKind(val))}
			}
			switch val.Value {
			case " ":
				h.delimiter = ' '
			case ",":
				h.delimiter = ','
			default:
				return nil, &lineError{fileLine(val.Line), fmt.Sprintf("ECSV delimiter %q is not allowed; ECSV uses a space or a comma", val.Value)}
			}
		case "datatype":
			datatype = val
		}
	}
	if datatype == nil || datatype.Kind == yaml.ScalarNode && datatype.Value == "" {
		return nil, &lineError{last, `ECSV header has no "datatype:" list describing the columns`}
	}
	if datatype.Kind != yaml.SequenceNode {
		return nil, &lineError{fileLine(datatype.Line), fmt.Sprintf(`ECSV "datatype:" must be a list of columns ("- {name: …, datatype: …}"), not %s`, nodeKind(datatype))}
	}
	for i, item := range datatype.Content {
		if item.Kind != yaml.MappingNode {
			return nil, &lineError{fileLine(item.Line), fmt.Sprintf("ECSV datatype entry %d must be a mapping with name, datatype and unit, not %s", i+1, nodeKind(item))}
		}
		var c Column
		for k := 0; k+1 < len(item.Content); k += 2 {
			key, val := item.Content[k], item.Content[k+1]
			var dst *string
			switch key.Value {
			case "name":
				dst = &c.Name
			case "unit":
				dst = &c.Unit
			case "datatype":
				dst = &c.Datatype
			default:
				continue // description, format, meta, subtype
			}
			if val.Kind != yaml.ScalarNode {
				return nil, &lineError{fileLine(val.Line), fmt.Sprintf("ECSV datatype entry %d: %s must be a single value, not %s", i+1, key.Value, nodeKind(val))}
			}
			*dst = val.Value
		}
		if c.Name == "" {
			return nil, &lineError{fileLine(item.Line), fmt.Sprintf("ECSV datatype entry %d has no name", i+1)}
		}
		h.columns = append(h.columns, c)
	}
	if len(h.columns) == 0 {
		return nil, &lineError{fileLine(datatype.Line), `ECSV header's "datatype:" list is empty; it must describe every column`}
	}
	return h, nil
}

var yamlLine = regexp.MustCompile(`line (\d+)`)

// yamlError turns a YAML parser error into a lineError at the file line of
// the YAML line it names, with a hint for the commonest slip.
func yamlError(err error, fileLine func(int) int, textOf func(int) string) *lineError {
	msg := strings.TrimPrefix(err.Error(), "yaml: ")
	line := fileLine(1 << 30)
	text := ""
	if m := yamlLine.FindStringSubmatch(msg); m != nil {
		k, _ := strconv.Atoi(m[1])
		line, text = fileLine(k), textOf(k)
		msg = strings.TrimSpace(strings.Replace(msg, m[0]+":", "", 1))
	}
	hint := ""
	switch {
	case strings.Contains(text, "\t"):
		hint = " (this line holds a tab; YAML separates and indents with spaces)"
	case strings.Contains(msg, "quoted scalar") || strings.Contains(msg, "unexpected end of stream"):
		hint = " (an unclosed quote?)"
	}
	return &lineError{line, fmt.Sprintf("ECSV header is not valid YAML: %s%s", msg, hint)}
}

func nodeKind(n *yaml.Node) string {
	switch n.Kind {
	case yaml.ScalarNode:
		return fmt.Sprintf("the plain value %q", n.Value)
	case yaml.SequenceNode:
		return "a list"
	case yaml.MappingNode:
		return "a mapping"
	case yaml.AliasNode:
		return "an alias"
	}
	return "nothing"
}
