package catalog

import (
	"bytes"
	"errors"
	"math"
	"strconv"
	"strings"

	"spinpop/disk"
)

// rowSource gives the values of one row, whatever the file format: value
// reads column index i as a number, or says why it cannot be used.
type rowSource interface {
	value(i int) (float64, Reason, bool)
}

// textRow is a row of a CSV or ECSV file, split into fields.
type textRow struct{ fields [][]byte }

func (t *textRow) value(i int) (float64, Reason, bool) { return parseValue(t.fields[i]) }

// nullMarkers are values that mean "no value" in common table writers.
var nullMarkers = [][]byte{[]byte("NA"), []byte("N/A"), []byte("na"), []byte("null"),
	[]byte("NULL"), []byte("None"), []byte("--")}

// parseValue reads one numeric field.
func parseValue(b []byte) (float64, Reason, bool) {
	b = bytes.TrimSpace(b)
	if len(b) == 0 {
		return 0, ReasonMissing, false
	}
	for _, m := range nullMarkers {
		if bytes.Equal(b, m) {
			return 0, ReasonMissing, false
		}
	}
	if !plainNumber(b) {
		return 0, ReasonNotNumeric, false
	}
	v, err := strconv.ParseFloat(string(b), 64)
	if err != nil && !errors.Is(err, strconv.ErrRange) {
		return 0, ReasonNotNumeric, false
	}
	return finite(v)
}

// plainNumber reports whether b is written as a table writer writes a
// number: decimal digits, a sign, a point and an exponent (12, -0.5,
// 1.5e-3), or a word for infinity or not-a-number (refused later as not
// finite). strconv.ParseFloat alone also takes Go's own literals, such as
// 1_0.5 (underscores between digits) and 0x1p3 (hexadecimal): in a
// catalog those are typos or another program's syntax, and reading them
// as 10.5 and 8 would hide the mistake.
func plainNumber(b []byte) bool {
	for _, c := range b {
		switch {
		case c >= '0' && c <= '9', c == '.', c == '+', c == '-', c == 'e', c == 'E':
		default:
			return isSpecialWord(b)
		}
	}
	return true
}

// isSpecialWord reports the spellings of infinity and not-a-number that
// ParseFloat takes (any case, optional sign).
func isSpecialWord(b []byte) bool {
	if len(b) > 0 && (b[0] == '+' || b[0] == '-') {
		b = b[1:]
	}
	switch strings.ToLower(string(b)) {
	case "inf", "infinity", "nan":
		return true
	}
	return false
}

// finite accepts a number that is neither NaN nor infinite.
func finite(v float64) (float64, Reason, bool) {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, ReasonNotFinite, false
	}
	return v, 0, true
}

// binaryValue turns a value read from a FITS or Parquet column into a
// number: a null (TNULLn, a NaN float, a Parquet null) is a missing value,
// like an empty CSV cell; an infinity is not finite.
func binaryValue(v float64, null bool) (float64, Reason, bool) {
	if null {
		return 0, ReasonMissing, false
	}
	return finite(v)
}

// refs lists the mapped quantities in the order convert checks them.
func (p *plan) refs() []*fieldRef {
	out := []*fieldRef{&p.period, &p.color}
	for _, f := range []*fieldRef{p.absMag, p.height, p.appMag, p.parallax, p.l, p.b, p.ra, p.dec} {
		if f != nil {
			out = append(out, f)
		}
	}
	return out
}

// convert turns the mapped values of one row into a Star, or reports the
// first value that makes the row unusable.
func (p *plan) convert(row rowSource) (Star, *fieldRef, Reason) {
	s := Star{DistPc: math.NaN(), LDeg: math.NaN(), BDeg: math.NaN()}
	get := func(f *fieldRef) (float64, Reason, bool) { return row.value(f.index) }

	var ok bool
	var why Reason
	if s.PeriodD, why, ok = get(&p.period); !ok {
		return s, &p.period, why
	}
	if s.PeriodD <= 0 {
		return s, &p.period, ReasonPeriod
	}
	if s.Color, why, ok = get(&p.color); !ok {
		return s, &p.color, why
	}
	if p.absMag != nil {
		if s.AbsMag, why, ok = get(p.absMag); !ok {
			return s, p.absMag, why
		}
	}
	if p.height != nil {
		if s.ZPc, why, ok = get(p.height); !ok {
			return s, p.height, why
		}
	}
	var appMag float64
	if p.appMag != nil && p.absMag == nil {
		if appMag, why, ok = get(p.appMag); !ok {
			return s, p.appMag, why
		}
	}
	if p.parallax != nil {
		plx, why, ok := get(p.parallax)
		if !ok {
			return s, p.parallax, why
		}
		// A parallax so small that the distance overflows (1e-320 mas, a
		// fuzzer's find) is as unusable as a negative one.
		if plx <= 0 || math.IsInf(1000/plx, 0) {
			return s, p.parallax, ReasonParallax
		}
		s.DistPc = 1000 / plx
	}
	switch {
	case p.l != nil:
		l, why, ok := get(p.l)
		if !ok {
			return s, p.l, why
		}
		b, why, ok := get(p.b)
		if !ok {
			return s, p.b, why
		}
		if b < -90 || b > 90 {
			return s, p.b, ReasonPosition
		}
		s.LDeg, s.BDeg = math.Mod(math.Mod(l, 360)+360, 360), b
	case p.ra != nil:
		ra, why, ok := get(p.ra)
		if !ok {
			return s, p.ra, why
		}
		dec, why, ok := get(p.dec)
		if !ok {
			return s, p.dec, why
		}
		if dec < -90 || dec > 90 {
			return s, p.dec, ReasonPosition
		}
		s.LDeg, s.BDeg = disk.ICRSToGalactic(ra, dec)
	}
	if p.absMag == nil {
		s.AbsMag = appMag - 5*math.Log10(s.DistPc/10)
	}
	if p.height == nil {
		s.ZPc = s.DistPc*math.Sin(s.BDeg*math.Pi/180) + p.zSunPc
	}
	return s, nil, 0
}
