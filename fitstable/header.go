package fitstable

import (
	"math"
	"strconv"
	"strings"
)

// BlockSize is the size of a FITS block: headers and data are padded to a
// multiple of it (FITS Standard 4.0 §3.1).
const BlockSize = 2880

// CardSize is the size of one header card (keyword record), 80 ASCII
// characters (§4.1).
const CardSize = 80

// maxHeaderCards bounds one header. The standard sets no limit, but a
// "header" of millions of cards is a damaged file or not a FITS file, and
// holding it would defeat streaming.
const maxHeaderCards = 100_000

// Kind is the kind of value a card holds.
type Kind int

const (
	// NoValue: commentary cards (COMMENT, HISTORY, blank keyword) and any
	// card without the "= " value indicator in columns 9–10.
	NoValue Kind = iota
	// Undefined: a value indicator followed by no value (§4.2.6).
	Undefined
	// StringValue: a quoted character string (§4.2.1).
	StringValue
	// LogicalValue: T or F (§4.2.2).
	LogicalValue
	// IntegerValue: an integer (§4.2.3). Int holds it when it fits in an
	// int64; Float always holds it (rounded beyond 2^53).
	IntegerValue
	// FloatValue: a real number, with E or D exponent (§4.2.4).
	FloatValue
	// OtherValue: a value this package does not interpret (complex numbers,
	// malformed text). Raw holds it as written.
	OtherValue
)

// Card is one parsed header card.
type Card struct {
	Keyword string // columns 1–8, trailing spaces removed
	Kind    Kind
	Str     string  // StringValue: the string, quotes undone, trailing spaces removed
	Bool    bool    // LogicalValue
	Int     int64   // IntegerValue, when IntOK
	IntOK   bool    // the integer fits in an int64
	Float   float64 // IntegerValue and FloatValue
	Raw     string  // the value as written (trimmed); for strings, with quotes
	Comment string  // the text after "/", trimmed
	Number  int     // position in the header, from 1
}

// Header is the ordered list of cards of one HDU, without the END card.
type Header struct {
	Cards []Card
	index map[string]int // first card of each keyword
}

// Get returns the first card with the keyword.
func (h *Header) Get(keyword string) (Card, bool) {
	if h.index == nil {
		return Card{}, false
	}
	i, ok := h.index[keyword]
	if !ok {
		return Card{}, false
	}
	return h.Cards[i], true
}

func (h *Header) add(c Card) {
	if h.index == nil {
		h.index = make(map[string]int)
	}
	if _, seen := h.index[c.Keyword]; !seen && c.Kind != NoValue {
		h.index[c.Keyword] = len(h.Cards)
	}
	h.Cards = append(h.Cards, c)
}

// parseCard parses one 80-byte card. ok is false when the card holds a byte
// outside printable ASCII (0x20–0x7E), which a header may not contain
// (§4.1.1): that is binary data where a card should be.
func parseCard(b []byte) (c Card, ok bool) {
	for _, ch := range b {
		if ch < 0x20 || ch > 0x7e {
			return Card{}, false
		}
	}
	s := string(b)
	c.Keyword = strings.TrimRight(s[:8], " ")
	if s[8:10] != "= " || c.Keyword == "COMMENT" || c.Keyword == "HISTORY" || c.Keyword == "" {
		c.Kind = NoValue
		c.Comment = strings.TrimSpace(s[8:])
		return c, true
	}
	parseValue(s[10:], &c)
	return c, true
}

// parseValue reads the value field (columns 11–80) into c.
func parseValue(v string, c *Card) {
	t := strings.TrimLeft(v, " ")
	if strings.HasPrefix(t, "'") {
		// A string: '' inside stands for one quote; the closing quote is a
		// single quote not followed by another (§4.2.1.1).
		var sb strings.Builder
		i := 1
		closed := false
		for i < len(t) {
			if t[i] == '\'' {
				if i+1 < len(t) && t[i+1] == '\'' {
					sb.WriteByte('\'')
					i += 2
					continue
				}
				closed = true
				i++
				break
			}
			sb.WriteByte(t[i])
			i++
		}
		c.Raw = t[:i]
		rest := t[i:]
		if !closed {
			c.Kind = OtherValue
			c.Raw = strings.TrimRight(t, " ")
			return
		}
		c.Kind = StringValue
		// Leading spaces are significant, trailing ones are not (§4.2.1.1).
		c.Str = strings.TrimRight(sb.String(), " ")
		if j := strings.IndexByte(rest, '/'); j >= 0 {
			c.Comment = strings.TrimSpace(rest[j+1:])
		}
		return
	}
	val := t
	if j := strings.IndexByte(t, '/'); j >= 0 {
		val = t[:j]
		c.Comment = strings.TrimSpace(t[j+1:])
	}
	val = strings.TrimSpace(val)
	c.Raw = val
	switch {
	case val == "":
		c.Kind = Undefined
	case val == "T" || val == "F":
		c.Kind = LogicalValue
		c.Bool = val == "T"
	case isInteger(val):
		c.Kind = IntegerValue
		if n, err := strconv.ParseInt(val, 10, 64); err == nil {
			c.Int, c.IntOK = n, true
			c.Float = float64(n)
		} else {
			c.Float, _ = strconv.ParseFloat(val, 64)
		}
	default:
		if f, ok := parseFloat(val); ok {
			c.Kind = FloatValue
			c.Float = f
		} else {
			c.Kind = OtherValue
		}
	}
}

func isInteger(s string) bool {
	if s[0] == '+' || s[0] == '-' {
		s = s[1:]
	}
	if s == "" {
		return false
	}
	for i := 0; i < len(s); i++ {
		if s[i] < '0' || s[i] > '9' {
			return false
		}
	}
	return true
}

// parseFloat reads a FITS real number: digits with an optional decimal
// point and an exponent introduced by E or D (§4.2.4). Go's parser would
// also take "Inf", "NaN", hexadecimal and underscores, which FITS does not
// allow, so the characters are checked first.
func parseFloat(s string) (float64, bool) {
	for i := 0; i < len(s); i++ {
		switch ch := s[i]; {
		case ch >= '0' && ch <= '9', ch == '.', ch == '+', ch == '-', ch == 'E', ch == 'e':
		case ch == 'D' || ch == 'd':
		default:
			return 0, false
		}
	}
	s = strings.Map(func(r rune) rune {
		if r == 'D' || r == 'd' {
			return 'E'
		}
		return r
	}, s)
	f, err := strconv.ParseFloat(s, 64)
	if err != nil || math.IsInf(f, 0) {
		return 0, false
	}
	return f, true
}

// isEndCard reports whether a card is the END card: "END" and spaces.
func isEndCard(b []byte) bool {
	if string(b[:3]) != "END" {
		return false
	}
	for _, ch := range b[3:] {
		if ch != ' ' {
			return false
		}
	}
	return true
}
