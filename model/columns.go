package model

import (
	"fmt"
	"math"
	"slices"
	"sync"

	"spinpop/disk"
)

// Column is one per-star quantity as a catalog lists it. The table of
// columns (CatalogColumns) is the single list that sizes a chunk's arrays,
// resets the columns worked out only for catalog candidates, and drives
// every writer of a synthetic catalog and the in-memory catalog, so a
// new quantity is added in one place.
//
// A column is one of four sorts, by which field is set:
//   - Stored: a float column of Chunk, filled by the generator;
//   - Derived: a float worked out from the stored columns when it is read
//     (the way to add a column from outside this package, see
//     RegisterColumn);
//   - Flag: 0 or 1 from the star's flags;
//   - Words: a word from the star's flags.
type Column struct {
	Name string // unit in the name, e.g. "period_true_d"
	Unit string // the unit as FITS and Parquet files state it ("d", "solMass"); "" for none
	Doc  string // what it holds, for readers of the file

	Stored  func(c *Chunk) *[]float64
	Derived func(c *Chunk, i int) float64
	Flag    Flag
	Words   func(f Flag) string

	// Integer marks a Stored or Derived column whose values are whole
	// numbers (an identifier): writers write them as integers (Int64 in
	// FITS and Parquet), not as rounded floats.
	Integer bool

	// Reset says when Fill sets a stored column to NaN before the stars of
	// a chunk are made: quantities worked out only for stars that pass the
	// photometric catalog cuts (see Chunk) start as "not worked out".
	Reset ResetRule
}

// ResetRule says when a stored column starts a chunk as NaN.
type ResetRule uint8

const (
	// NoReset: every star of the chunk gets a value.
	NoReset ResetRule = iota
	// ResetAlways: only catalog candidates get a value.
	ResetAlways
	// ResetJointDraw: only catalog candidates get a value when the
	// positions come from the joint sampler, which keeps a direction and
	// turns it into angles only for them; a plain Placer gives angles to
	// every star.
	ResetJointDraw
)

// Float returns the column's value for star i of c (NaN for a flag or
// word column).
func (col *Column) Float(c *Chunk, i int) float64 {
	switch {
	case col.Stored != nil:
		return (*col.Stored(c))[i]
	case col.Derived != nil:
		return col.Derived(c, i)
	case col.Flag != 0:
		if c.Flags[i]&col.Flag != 0 {
			return 1
		}
		return 0
	}
	return math.NaN()
}

// IsWords reports whether the column holds words rather than numbers.
func (col *Column) IsWords() bool { return col.Words != nil }

// builtinColumns are the catalog's columns, in file order.
var builtinColumns = []Column{
	{Name: "star_id", Doc: "the star's number in the run (from 1, in generation order): the same star has the same number in mock catalogs of the same scenario and seed", Stored: func(c *Chunk) *[]float64 { return &c.StarID }, Integer: true},
	{Name: "mass_msun", Unit: "solMass", Doc: "mass of the (primary) star", Stored: func(c *Chunk) *[]float64 { return &c.MassMsun }},
	{Name: "companion_mass_msun", Unit: "solMass", Doc: "mass of an unresolved companion; 0 when single", Stored: func(c *Chunk) *[]float64 { return &c.CompanionMsun }},
	{Name: "age_gyr", Unit: "Gyr", Doc: "age", Stored: func(c *Chunk) *[]float64 { return &c.AgeGyr }},
	{Name: "feh_dex", Unit: "dex", Doc: "[Fe/H]", Stored: func(c *Chunk) *[]float64 { return &c.FeH }},
	{Name: "teff_k", Unit: "K", Doc: "effective temperature of the primary", Stored: func(c *Chunk) *[]float64 { return &c.TeffK }},
	{Name: "b_v_mag", Unit: "mag", Doc: "intrinsic B−V of the system", Stored: func(c *Chunk) *[]float64 { return &c.BV }},
	{Name: "v_ks_mag", Unit: "mag", Doc: "intrinsic V−Ks of the system", Stored: func(c *Chunk) *[]float64 { return &c.VKs }},
	{Name: "obs_b_v_mag", Unit: "mag", Doc: "B−V as observed (reddened)", Stored: func(c *Chunk) *[]float64 { return &c.ObsBV }},
	{Name: "abs_mag_v", Unit: "mag", Doc: "absolute V of the system", Stored: func(c *Chunk) *[]float64 { return &c.AbsMagV }},
	{Name: "abs_mag_band", Unit: "mag", Doc: "absolute magnitude in the survey band", Stored: func(c *Chunk) *[]float64 { return &c.AbsMagBand }},
	{Name: "obs_abs_mag_band", Unit: "mag", Doc: "absolute V as derived from parallax, extinction still in", Stored: func(c *Chunk) *[]float64 { return &c.ObsAbsMag }},
	{Name: "app_mag_band", Unit: "mag", Doc: "apparent magnitude in the survey band", Stored: func(c *Chunk) *[]float64 { return &c.AppMag }},
	{Name: "a_v_mag", Unit: "mag", Doc: "extinction in V", Stored: func(c *Chunk) *[]float64 { return &c.AV }},
	{Name: "distance_pc", Unit: "pc", Doc: "distance from the Sun", Stored: func(c *Chunk) *[]float64 { return &c.DistPc }},
	{Name: "l_deg", Unit: "deg", Doc: "Galactic longitude", Stored: func(c *Chunk) *[]float64 { return &c.LDeg }, Reset: ResetJointDraw},
	{Name: "b_deg", Unit: "deg", Doc: "Galactic latitude", Stored: func(c *Chunk) *[]float64 { return &c.BDeg }, Reset: ResetJointDraw},
	{Name: "ra_deg", Unit: "deg", Doc: "right ascension (ICRS)", Derived: func(c *Chunk, i int) float64 { ra, _ := icrsOf(c, i); return ra }},
	{Name: "dec_deg", Unit: "deg", Doc: "declination (ICRS)", Derived: func(c *Chunk, i int) float64 { _, dec := icrsOf(c, i); return dec }},
	{Name: "z_pc", Unit: "pc", Doc: "height above the Galactic midplane", Stored: func(c *Chunk) *[]float64 { return &c.ZPc }},
	{Name: "period_true_d", Unit: "d", Doc: "true rotation period", Stored: func(c *Chunk) *[]float64 { return &c.PeriodD }, Reset: ResetAlways},
	{Name: "period_measured_d", Unit: "d", Doc: "period the survey reports", Stored: func(c *Chunk) *[]float64 { return &c.MeasPeriodD }, Reset: ResetAlways},
	{Name: "rossby", Doc: "Rossby number", Stored: func(c *Chunk) *[]float64 { return &c.Rossby }, Reset: ResetAlways},
	{Name: "amplitude_ppm", Unit: "ppm", Doc: "spot modulation semi-amplitude", Stored: func(c *Chunk) *[]float64 { return &c.AmpPpm }, Reset: ResetAlways},
	{Name: "noise_ppm", Unit: "ppm", Doc: "survey noise per cadence at the star's magnitude", Stored: func(c *Chunk) *[]float64 { return &c.NoisePpm }, Reset: ResetAlways},
	{Name: "detected", Doc: "1 if the survey measured a period", Flag: FlagDetected},
	{Name: "binary", Doc: "1 if the star has an unresolved companion", Flag: FlagBinary},
	{Name: "evolved", Doc: "1 if past its main-sequence lifetime (brightened)", Flag: FlagEvolved},
	{Name: "tidal_lock", Doc: "1 if a close binary whose period is the orbit's", Flag: FlagTidalLock},
	{Name: "alias", Doc: "half, double or none: the measured period against the true one", Words: aliasWord},
}

// chunkOnlyColumns are stored in a chunk but not written to a catalog.
var chunkOnlyColumns = []func(c *Chunk) *[]float64{
	func(c *Chunk) *[]float64 { return &c.DetectProb },
}

// icrsOf returns star i's ICRS position from its Galactic one (NaN when
// it has none).
func icrsOf(c *Chunk, i int) (raDeg, decDeg float64) {
	l, b := c.LDeg[i], c.BDeg[i]
	if math.IsNaN(l) || math.IsNaN(b) {
		return math.NaN(), math.NaN()
	}
	return disk.GalacticToICRS(l, b)
}

func aliasWord(f Flag) string {
	switch {
	case f&FlagHalfAlias != 0:
		return "half"
	case f&FlagDoubleAlias != 0:
		return "double"
	}
	return "none"
}

var (
	columnsMu  sync.RWMutex
	registered []Column

	// Stored columns by reset rule, worked out once from the table.
	storedColumns, resetAlways, resetJoint []func(c *Chunk) *[]float64
)

func init() {
	for _, col := range builtinColumns {
		if col.Stored == nil {
			continue
		}
		storedColumns = append(storedColumns, col.Stored)
		switch col.Reset {
		case ResetAlways:
			resetAlways = append(resetAlways, col.Stored)
		case ResetJointDraw:
			resetJoint = append(resetJoint, col.Stored)
		}
	}
	storedColumns = append(storedColumns, chunkOnlyColumns...)
}

// CatalogColumns returns the catalog's columns in file order: the
// built-in ones, then those added with RegisterColumn.
func CatalogColumns() []Column {
	columnsMu.RLock()
	defer columnsMu.RUnlock()
	return append(slices.Clone(builtinColumns), registered...)
}

// BuiltinColumnNames returns the names of the built-in catalog columns.
func BuiltinColumnNames() []string {
	names := make([]string, len(builtinColumns))
	for i, c := range builtinColumns {
		names[i] = c.Name
	}
	return names
}

// RegisterColumn adds a derived column after the built-in ones. Every
// catalog written afterwards carries it. Its name must be new, and it
// must be Derived (a column stored in a chunk needs a field of Chunk and is
// added to builtinColumns instead).
func RegisterColumn(col Column) error {
	if col.Derived == nil || col.Stored != nil || col.Flag != 0 || col.Words != nil {
		return fmt.Errorf("model: column %q: a registered column must be Derived and nothing else", col.Name)
	}
	if col.Name == "" {
		return fmt.Errorf("model: a registered column needs a name (with its unit, e.g. \"radius_rsun\")")
	}
	columnsMu.Lock()
	defer columnsMu.Unlock()
	for _, c := range append(slices.Clone(builtinColumns), registered...) {
		if c.Name == col.Name {
			return fmt.Errorf("model: column %q exists already", col.Name)
		}
	}
	registered = append(registered, col)
	return nil
}

// resetColumns sets the columns worked out only for catalog candidates
// to NaN for the first n stars of c; joint says whether the positions came
// from the joint sampler.
func resetColumns(c *Chunk, n int, joint bool) {
	for _, col := range resetAlways {
		fillNaN((*col(c))[:n])
	}
	if joint {
		for _, col := range resetJoint {
			fillNaN((*col(c))[:n])
		}
	}
}

// fillNaN sets every element of x to NaN.
func fillNaN(x []float64) {
	nan := math.NaN()
	for i := range x {
		x[i] = nan
	}
}

// AppendRow appends star i of src to c, column by column (flags and age bin
// included).
func (c *Chunk) AppendRow(src *Chunk, i int) {
	for _, col := range storedColumns {
		*col(c) = append((*col(c))[:c.N], (*col(src))[i])
	}
	c.AgeBin = append(c.AgeBin[:c.N], src.AgeBin[i])
	c.Flags = append(c.Flags[:c.N], src.Flags[i])
	c.dir = append(c.dir[:c.N], src.dir[i])
	c.N++
}
