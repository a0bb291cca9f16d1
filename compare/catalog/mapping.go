package catalog

import (
	"fmt"
	"strings"
)

// Star is one usable catalog row in the model's units.
type Star struct {
	PeriodD float64 // rotation period (days)
	Color   float64 // the mapped color index (mag)
	AbsMag  float64 // absolute magnitude (mag)
	ZPc     float64 // height above the Galactic plane (pc)
	DistPc  float64 // distance (pc); NaN when no parallax column is mapped
	LDeg    float64 // Galactic longitude (deg); NaN when no position is mapped
	BDeg    float64 // Galactic latitude (deg); NaN when no position is mapped
}

// Mapping names the catalog columns for each quantity; "" means not
// present. Period and Color are always needed. Absolute magnitude comes
// from AbsMag if named, else from AppMag and Parallax; height from Height
// if named, else from Parallax and a sky position (RA and Dec in ICRS, or
// L and B). A Height column is taken as the height above the Galactic
// plane as it stands (z☉ already included).
type Mapping struct {
	Period, Color, AbsMag, Height, AppMag, Parallax, RA, Dec, L, B string
}

// ExpectedUnit returns the unit the named Mapping quantity ("Period",
// "Parallax", …) must have, or "" for an unknown quantity.
func ExpectedUnit(quantity string) string { return expectedUnits[quantity] }

// expectedUnits are the units each mapped quantity must have. ECSV columns
// that declare another unit are refused (ErrUnit) rather than converted:
// a parallax in arcseconds read as milliarcseconds would put every star a
// thousand times too far, and a silent conversion would hide which file
// was meant. Columns without a declared unit (all of plain CSV) are taken
// to be in these units.
var expectedUnits = map[string]string{
	"Period":   "d",
	"Color":    "mag",
	"AbsMag":   "mag",
	"Height":   "pc",
	"AppMag":   "mag",
	"Parallax": "mas",
	"RA":       "deg",
	"Dec":      "deg",
	"L":        "deg",
	"B":        "deg",
}

// unitAliases maps spellings of the same unit (as astropy writes them, or
// as people do) to one canonical form.
var unitAliases = map[string]string{
	"d": "d", "day": "d", "days": "d",
	"mag": "mag", "mags": "mag",
	"pc": "pc", "parsec": "pc", "parsecs": "pc",
	"mas": "mas", "milliarcsecond": "mas", "milliarcseconds": "mas",
	"deg": "deg", "degree": "deg", "degrees": "deg",
}

func canonicalUnit(u string) string {
	u = strings.TrimSpace(u)
	if c, ok := unitAliases[u]; ok {
		return c
	}
	return u
}

// fieldRef is one mapped quantity: which struct field, which column.
type fieldRef struct {
	quantity string // Mapping field name, e.g. "Parallax"
	column   string // catalog column name
	index    int    // column index in the header
}

// plan is a Mapping resolved against a header.
type plan struct {
	period, color          fieldRef
	absMag, height, appMag *fieldRef
	parallax               *fieldRef
	ra, dec, l, b          *fieldRef
	zSunPc                 float64
}

func (m Mapping) fields() []struct{ quantity, column string } {
	return []struct{ quantity, column string }{
		{"Period", m.Period}, {"Color", m.Color}, {"AbsMag", m.AbsMag}, {"Height", m.Height},
		{"AppMag", m.AppMag}, {"Parallax", m.Parallax}, {"RA", m.RA}, {"Dec", m.Dec},
		{"L", m.L}, {"B", m.B},
	}
}

// Validate checks that the Mapping can produce every Star quantity, without
// looking at a file.
func (m Mapping) Validate() error {
	var missing []string
	if m.Period == "" {
		missing = append(missing, "Period (the rotation-period column)")
	}
	if m.Color == "" {
		missing = append(missing, "Color (the color-index column)")
	}
	if (m.RA == "") != (m.Dec == "") {
		return fmt.Errorf("%w: RA and Dec must be named together (RA=%q, Dec=%q)", ErrMapping, m.RA, m.Dec)
	}
	if (m.L == "") != (m.B == "") {
		return fmt.Errorf("%w: L and B must be named together (L=%q, B=%q)", ErrMapping, m.L, m.B)
	}
	hasPos := m.RA != "" || m.L != ""
	if m.AbsMag == "" && (m.AppMag == "" || m.Parallax == "") {
		missing = append(missing, "AbsMag, or AppMag and Parallax (to derive it)")
	}
	if m.Height == "" && (m.Parallax == "" || !hasPos) {
		missing = append(missing, "Height, or Parallax and a position (RA and Dec, or L and B) to derive it")
	}
	if len(missing) > 0 {
		return fmt.Errorf("%w: the mapping needs %s", ErrMapping, strings.Join(missing, "; "))
	}
	return nil
}

// resolve matches the Mapping against the header columns.
func (m Mapping) resolve(cols []Column, zSunPc float64) (*plan, error) {
	if err := m.Validate(); err != nil {
		return nil, err
	}
	names := make([]string, len(cols))
	index := make(map[string]int, len(cols))
	dup := map[string]bool{}
	for i, c := range cols {
		names[i] = c.Name
		if _, ok := index[c.Name]; ok {
			dup[c.Name] = true
		}
		index[c.Name] = i
	}
	p := &plan{zSunPc: zSunPc}
	for _, f := range m.fields() {
		if f.column == "" {
			continue
		}
		i, ok := index[f.column]
		if !ok {
			return nil, fmt.Errorf("%w: %s column %q is not in the header; columns found: %s; closest match: %q",
				ErrColumn, f.quantity, f.column, listColumns(names), closest(f.column, names))
		}
		if dup[f.column] {
			return nil, fmt.Errorf("%w: %s column %q appears more than once in the header; rename one", ErrColumn, f.quantity, f.column)
		}
		c := cols[i]
		if want := expectedUnits[f.quantity]; c.Unit != "" && canonicalUnit(c.Unit) != want {
			return nil, fmt.Errorf("%w: column %q (%s) has unit %q, but %q is required; convert the column or map another",
				ErrUnit, c.Name, f.quantity, c.Unit, want)
		}
		if c.Datatype != "" && !numericDatatype(c.Datatype) {
			return nil, fmt.Errorf("%w: column %q (%s) has datatype %q; a numeric column (float or int) is required",
				ErrColumn, c.Name, f.quantity, c.Datatype)
		}
		ref := &fieldRef{quantity: f.quantity, column: f.column, index: i}
		switch f.quantity {
		case "Period":
			p.period = *ref
		case "Color":
			p.color = *ref
		case "AbsMag":
			p.absMag = ref
		case "Height":
			p.height = ref
		case "AppMag":
			p.appMag = ref
		case "Parallax":
			p.parallax = ref
		case "RA":
			p.ra = ref
		case "Dec":
			p.dec = ref
		case "L":
			p.l = ref
		case "B":
			p.b = ref
		}
	}
	return p, nil
}

func numericDatatype(dt string) bool {
	switch dt {
	case "float16", "float32", "float64", "float128",
		"int8", "int16", "int32", "int64", "uint8", "uint16", "uint32", "uint64":
		return true
	}
	return false
}
