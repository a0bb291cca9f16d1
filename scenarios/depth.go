package scenarios

// The TOML parser's time grows with the square of how deeply keys and
// tables nest, so a hostile or corrupted file a megabyte long could keep it
// busy for hours. No scenario nests more than a few levels; nestingTooDeep
// finds the first line that goes past maxNesting before the parser sees it.

// maxNesting bounds open brackets plus dotted-key pieces on one line.
const maxNesting = 64

// nestingTooDeep returns the 1-based line where nesting first exceeds
// maxNesting, or 0. It counts open [ and { outside strings and comments,
// plus the dots on the current line that can separate key pieces (one dot
// in a number-like token is its decimal point, not a separator). This is an
// upper bound on the parser's key depth, which is all it needs to be.
func nestingTooDeep(data []byte) int {
	line, depth, dots := 1, 0, 0
	for i := 0; i < len(data); i++ {
		c := data[i]
		switch {
		case c == '\n':
			line++
			dots = 0
		case c == '#':
			for i+1 < len(data) && data[i+1] != '\n' {
				i++
			}
		case c == '"' || c == '\'':
			var nl int
			i, nl = skipString(data, i)
			line += nl
		case c == '[' || c == '{':
			depth++
		case c == ']' || c == '}':
			if depth > 0 {
				depth--
			}
		case isBareKeyByte(c) || c == '.' || c == '+':
			j := i
			n := 0
			for j < len(data) && (isBareKeyByte(data[j]) || data[j] == '.' || data[j] == '+') {
				if data[j] == '.' {
					n++
				}
				j++
			}
			if n > 0 && (c >= '0' && c <= '9' || (c == '+' || c == '-') && i+1 < j && data[i+1] >= '0' && data[i+1] <= '9') {
				n-- // a decimal point
			}
			dots += n
			i = j - 1
		}
		if depth+dots > maxNesting {
			return line
		}
	}
	return 0
}

// skipString returns the index of the last byte of the string starting at
// data[i] (a quote) and the number of newlines inside it. An unterminated
// string runs to the end; the parser reports it.
func skipString(data []byte, i int) (end, newlines int) {
	q := data[i]
	multi := i+2 < len(data) && data[i+1] == q && data[i+2] == q
	if multi {
		i += 3
	} else {
		i++
	}
	for ; i < len(data); i++ {
		switch {
		case data[i] == '\\' && q == '"':
			i++
			if i < len(data) && data[i] == '\n' {
				newlines++
			}
		case data[i] == '\n':
			newlines++
			if !multi {
				return i - 1, newlines - 1 // a single-line string cannot span lines
			}
		case data[i] == q && !multi:
			return i, newlines
		case data[i] == q && i+2 < len(data) && data[i+1] == q && data[i+2] == q:
			return i + 2, newlines
		}
	}
	return len(data) - 1, newlines
}
