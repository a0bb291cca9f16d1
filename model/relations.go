package model

import (
	_ "embed"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"sort"
	"strconv"
	"strings"
	"sync"
)

// Point is a main-sequence star's observables at one mass.
type Point struct {
	TeffK      float64 // effective temperature
	LogL       float64 // log10 of the luminosity in L☉ (IAU 2015 B3 nominal)
	RadiusRsun float64
	BV         float64 // B−V color
	VKs        float64 // V−Ks color
	VIc        float64 // V−Ic color (Cousins I)
	AbsMagV    float64
	AbsMagKs   float64
}

// Row is one row of a dwarf-sequence table.
type Row struct {
	SpectralType string
	MassMsun     float64
	Point
}

// Relations maps mass to main-sequence observables through a mean dwarf
// sequence, smoothed.
//
// The published masses are rounded (to 0.01–0.05 M☉), so the slope of any
// interpolant through the rows jumps from row to row, and so does the
// density of stars in color (dN/d(B−V) = dN/dm / |d(B−V)/dm|): an exact
// interpolant puts stripes into every period–color plot. Each column is
// therefore fitted by a cubic smoothing spline in log10 mass (see
// smoothingSpline) with one smoothing parameter, RelationsSmoothing, for
// all columns: the noise is in the shared mass column, so every column
// needs the same bandwidth in mass. The Sun is pinned: at 1 M☉ the fit
// passes through the IAU 2015 Resolution B3 nominal T_eff = 5772 K and
// L = 1 L☉. The radius follows from L = 4πR²σT⁴ and M_Ks = M_V − (V−Ks),
// so the relation obeys both identities exactly. NewRelations checks that
// every column is strictly monotonic in mass.
//
// The smooth relation is tabulated once, at load, on a grid that is uniform
// in the bit pattern of the float64 mass: within each factor-of-two range of
// mass the nodes are evenly spaced (512 per octave, ≤ 0.2 % apart), so the
// grid is geometric to within a factor two in spacing, like a grid in log
// mass, yet the node below any mass is found from its bits with a subtract
// and a shift — no logarithm. At then blends two nodes linearly.
//
// A Relations is read-only after construction and safe for concurrent use.
type Relations struct {
	rows []Row // ascending mass, as read

	minMsun, maxMsun float64
	bitsLo           uint64  // bit pattern of grid node 0 (≤ minMsun)
	grid             []Point // grid[i] at mass Float64frombits(bitsLo + i<<relationsGridShift)

	// B−V falls along the grid. bvStart[k] is the last node whose B−V is at
	// or above bvTop − k/bvInvWidth: the start of a short walk for colors in
	// bucket k.
	bvTop, bvBottom float64
	bvInvWidth      float64
	bvStart         []int32
	// bvMag holds each node's B−V and M_V together, a quarter of the grid's
	// size, so that color lookups on the hot path stay in cache.
	bvMag []bvMagNode
}

type bvMagNode struct{ bv, absMagV float64 }

// relationsGridShift sets the grid: 2^(52−shift) = 512 nodes per octave of
// mass. A table spanning a decade in mass gets ~1700 nodes.
const (
	relationsGridShift = 43
	relationsGridMask  = 1<<relationsGridShift - 1
	relationsBVBuckets = 4096
)

// RelationsSmoothing is λ of the smoothing splines, for x = log10(M/M☉) and
// unit weights per row. It is the largest value of a scan (3e-5 … 1e-3)
// that keeps the fit within the residual targets of issue 9 (B−V rms ≤
// 0.015 mag, M_V rms ≤ 0.1 mag): B−V 0.012, M_V 0.05 mag, T_eff 30 K,
// comparable to what rounding the masses to 0.01 M☉ alone does. Smaller
// values follow the rounded masses and bring the stripes back (at 3e-5 the
// early-M-dwarf color pile-up has a spike 12 % above its local trend
// beyond Poisson noise); see testdata/SOURCES-dwarf-sequence.md for the
// scan.
const RelationsSmoothing = 1e-4

// The Sun as pinned in the relation: IAU 2015 Resolution B3 nominal values.
const (
	sunTeffK = 5772.0
	sunLogL  = 0.0
	// sunWeight is the pinned point's weight against 1 for each row: the
	// fit passes through it to ~1e-8 of the rows' scatter.
	sunWeight = 1e8
)

//go:embed tables/mean-dwarf-sequence.csv
var dwarfSequenceCSV string

// DwarfSequenceFile is the name of the embedded table, for messages.
const DwarfSequenceFile = "tables/mean-dwarf-sequence.csv"

var dwarfSequence = sync.OnceValues(func() (*Relations, error) {
	return ParseRelations(strings.NewReader(dwarfSequenceCSV), DwarfSequenceFile)
})

// DwarfSequence returns the relations of the embedded mean dwarf sequence
// (Pecaut & Mamajek 2013, ApJS 208, 9, Table 5, version 2024.05.15, values
// as published; see the table's header), smoothed. It is built once and
// shared.
func DwarfSequence() (*Relations, error) { return dwarfSequence() }

// relationsColumns are the columns a table must have, in any order: the
// published table's own names.
var relationsColumns = [...]string{
	"spt", "mass_msun", "teff_k", "log_l_lsun", "radius_rsun",
	"b_v_mag", "v_ks_mag", "v_ic_mag", "abs_v_mag",
}

// ParseRelations reads a dwarf-sequence table in the published layout:
// comma-separated, lines starting with '#' are comments, the first other
// line names the columns (see relationsColumns; extra columns are ignored).
// name is used in errors. Masses must be positive and distinct; rows may
// come in any order. M_Ks is M_V − (V−Ks).
func ParseRelations(r io.Reader, name string) (*Relations, error) {
	cr := csv.NewReader(r)
	cr.Comment = '#'
	cr.TrimLeadingSpace = true
	header, err := cr.Read()
	if err != nil {
		return nil, fmt.Errorf("model: %s: reading the header: %w", name, err)
	}
	col := make(map[string]int, len(header))
	for i, h := range header {
		col[strings.TrimSpace(h)] = i
	}
	for _, c := range relationsColumns {
		if _, ok := col[c]; !ok {
			return nil, fmt.Errorf("model: %s: column %q is missing: the header must name %s",
				name, c, strings.Join(relationsColumns[:], ","))
		}
	}
	var rows []Row
	for {
		rec, err := cr.Read()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			return nil, fmt.Errorf("model: %s: %w", name, err)
		}
		line, _ := cr.FieldPos(0)
		num := func(c string) (float64, error) {
			s := strings.TrimSpace(rec[col[c]])
			v, err := strconv.ParseFloat(s, 64)
			if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
				return 0, fmt.Errorf("model: %s line %d column %s: %q is not a finite number (every row needs every column)", name, line, c, s)
			}
			return v, nil
		}
		var row Row
		row.SpectralType = strings.TrimSpace(rec[col["spt"]])
		fields := [...]struct {
			c string
			p *float64
		}{
			{"mass_msun", &row.MassMsun}, {"teff_k", &row.TeffK}, {"log_l_lsun", &row.LogL},
			{"radius_rsun", &row.RadiusRsun}, {"b_v_mag", &row.BV}, {"v_ks_mag", &row.VKs},
			{"v_ic_mag", &row.VIc}, {"abs_v_mag", &row.AbsMagV},
		}
		for _, f := range fields {
			if *f.p, err = num(f.c); err != nil {
				return nil, err
			}
		}
		row.AbsMagKs = row.AbsMagV - row.VKs
		if row.MassMsun <= 0 || row.TeffK <= 0 || row.RadiusRsun <= 0 {
			return nil, fmt.Errorf("model: %s line %d (%s): mass_msun, teff_k and radius_rsun must be > 0", name, line, row.SpectralType)
		}
		rows = append(rows, row)
	}
	return NewRelations(rows, name)
}

// NewRelations builds the smoothed relations from rows (copied; any order;
// at least 3). name is used in errors.
func NewRelations(rows []Row, name string) (*Relations, error) {
	return newRelations(rows, name, RelationsSmoothing)
}

// newRelations is NewRelations with smoothing parameter lambda.
func newRelations(rows []Row, name string, lambda float64) (*Relations, error) {
	if len(rows) < 3 {
		return nil, fmt.Errorf("model: %s: %d rows; a dwarf sequence needs at least 3", name, len(rows))
	}
	for _, r := range rows {
		if !(r.MassMsun > 0 && r.TeffK > 0 && r.RadiusRsun > 0) || math.IsInf(r.MassMsun, 0) {
			return nil, fmt.Errorf("model: %s: row %s: mass_msun, teff_k and radius_rsun must be finite and > 0", name, r.SpectralType)
		}
	}
	rs := append([]Row(nil), rows...)
	sort.SliceStable(rs, func(i, j int) bool { return rs[i].MassMsun < rs[j].MassMsun })
	for i := 1; i < len(rs); i++ {
		if !(rs[i].MassMsun > rs[i-1].MassMsun) {
			return nil, fmt.Errorf("model: %s: rows %s and %s share mass %g M☉: masses must be distinct",
				name, rs[i-1].SpectralType, rs[i].SpectralType, rs[i].MassMsun)
		}
	}
	rel := &Relations{
		rows:    rs,
		minMsun: rs[0].MassMsun,
		maxMsun: rs[len(rs)-1].MassMsun,
		bitsLo:  math.Float64bits(rs[0].MassMsun) &^ relationsGridMask,
	}
	// Nodes from the one at or below the lowest mass to the one at or above
	// the highest; the end tangents extend the fit by under one cell.
	n := int((math.Float64bits(rel.maxMsun)-rel.bitsLo+relationsGridMask)>>relationsGridShift) + 1
	n = max(n, 2)
	rel.grid = make([]Point, n)
	nodeX := make([]float64, n)
	for i := range nodeX {
		nodeX[i] = math.Log10(rel.nodeMass(i))
	}
	if err := rel.fit(nodeX, lambda); err != nil {
		return nil, fmt.Errorf("model: %s: %w", name, err)
	}
	if err := rel.checkMonotonic(); err != nil {
		return nil, fmt.Errorf("model: %s: %w", name, err)
	}
	rel.indexBV()
	return rel, nil
}

// fit smooths every fitted column through the rows and fills the grid.
func (rel *Relations) fit(nodeX []float64, lambda float64) error {
	rs := rel.rows
	x := make([]float64, len(rs))
	sunRow := -1
	for i, r := range rs {
		x[i] = math.Log10(r.MassMsun)
		if r.MassMsun == 1 {
			sunRow = i
		}
	}
	for _, c := range fittedColumns {
		cx, y, w := x, make([]float64, len(rs)), []float64(nil)
		for i := range rs {
			y[i] = *c.field(&rs[i].Point)
		}
		if c.pinSun {
			// The Sun replaces the row at 1 M☉, or joins the rows there.
			w = make([]float64, len(rs))
			for i := range w {
				w[i] = 1
			}
			if sunRow >= 0 {
				y[sunRow], w[sunRow] = c.sun, sunWeight
			} else {
				k := sort.SearchFloat64s(x, 0)
				cx = append(append(append([]float64(nil), x[:k]...), 0), x[k:]...)
				y = append(append(append([]float64(nil), y[:k]...), c.sun), y[k:]...)
				w = append(append(append([]float64(nil), w[:k]...), sunWeight), w[k:]...)
			}
		}
		s, err := newSmoothingSpline(cx, y, w, lambda)
		if err != nil {
			return fmt.Errorf("column %s: %w", c.name, err)
		}
		for i := range rel.grid {
			*c.field(&rel.grid[i]) = s.at(nodeX[i])
		}
	}
	for i := range rel.grid {
		p := &rel.grid[i]
		// L/L☉ = (R/R☉)² (T/T☉)⁴ in IAU 2015 B3 nominal units.
		t := p.TeffK / sunTeffK
		p.RadiusRsun = math.Pow(10, 0.5*p.LogL) / (t * t)
		p.AbsMagKs = p.AbsMagV - p.VKs
	}
	return nil
}

// fittedColumns are the columns smoothed through the rows; the radius and
// M_Ks follow from them.
var fittedColumns = [...]struct {
	name   string
	field  func(*Point) *float64
	pinSun bool
	sun    float64
}{
	{"teff_k", func(p *Point) *float64 { return &p.TeffK }, true, sunTeffK},
	{"log_l_lsun", func(p *Point) *float64 { return &p.LogL }, true, sunLogL},
	{"b_v_mag", func(p *Point) *float64 { return &p.BV }, false, 0},
	{"v_ks_mag", func(p *Point) *float64 { return &p.VKs }, false, 0},
	{"v_ic_mag", func(p *Point) *float64 { return &p.VIc }, false, 0},
	{"abs_v_mag", func(p *Point) *float64 { return &p.AbsMagV }, false, 0},
}

// checkMonotonic reports the first grid cell where a column does not change
// strictly monotonically with mass: T_eff, L and R rise, colors and
// magnitudes fall. Inverses (MassFromBV) and the main-sequence cut need it.
func (rel *Relations) checkMonotonic() error {
	cols := [...]struct {
		name   string
		get    func(Point) float64
		rising bool
	}{
		{"T_eff", func(p Point) float64 { return p.TeffK }, true},
		{"log L", func(p Point) float64 { return p.LogL }, true},
		{"radius", func(p Point) float64 { return p.RadiusRsun }, true},
		{"B−V", func(p Point) float64 { return p.BV }, false},
		{"V−Ks", func(p Point) float64 { return p.VKs }, false},
		{"V−Ic", func(p Point) float64 { return p.VIc }, false},
		{"M_V", func(p Point) float64 { return p.AbsMagV }, false},
		{"M_Ks", func(p Point) float64 { return p.AbsMagKs }, false},
	}
	for _, c := range cols {
		for i := 1; i < len(rel.grid); i++ {
			a, b := c.get(rel.grid[i-1]), c.get(rel.grid[i])
			if (c.rising && !(b > a)) || (!c.rising && !(b < a)) {
				return fmt.Errorf("the smoothed %s is not strictly monotonic in mass near %.4g M☉", c.name, rel.nodeMass(i))
			}
		}
	}
	return nil
}

func (rel *Relations) nodeMass(i int) float64 {
	return math.Float64frombits(rel.bitsLo + uint64(i)<<relationsGridShift)
}

// indexBV builds the guide table that makes color lookups O(1).
func (rel *Relations) indexBV() {
	top, _ := rel.At(rel.minMsun)
	bottom, _ := rel.At(rel.maxMsun)
	rel.bvTop, rel.bvBottom = top.BV, bottom.BV
	rel.bvInvWidth = relationsBVBuckets / (rel.bvTop - rel.bvBottom)
	rel.bvMag = make([]bvMagNode, len(rel.grid))
	for i, g := range rel.grid {
		rel.bvMag[i] = bvMagNode{bv: g.BV, absMagV: g.AbsMagV}
	}
	rel.bvStart = make([]int32, relationsBVBuckets+1)
	i := 0
	for k := range rel.bvStart {
		edge := rel.bvTop - float64(k)/rel.bvInvWidth
		for i+1 < len(rel.grid) && rel.grid[i+1].BV >= edge {
			i++
		}
		rel.bvStart[k] = int32(i)
	}
}

// At returns the observables of a main-sequence star of the given mass.
// ok is false (and the Point zero) outside MassRange.
func (rel *Relations) At(massMsun float64) (p Point, ok bool) {
	if !(massMsun >= rel.minMsun && massMsun <= rel.maxMsun) {
		return Point{}, false
	}
	d := math.Float64bits(massMsun) - rel.bitsLo
	i := int(d >> relationsGridShift)
	f := float64(d&relationsGridMask) * (1.0 / (1 << relationsGridShift))
	if i >= len(rel.grid)-1 { // only when massMsun sits exactly on the last node
		i, f = len(rel.grid)-2, 1
	}
	return rel.blend(i, f), true
}

// atMain is At cut down to what the population generator needs, with the
// same values: T_eff, B−V, M_V and M_Ks. ok is false (and all zero) outside
// MassRange.
func (rel *Relations) atMain(massMsun float64) (teffK, bv, absMagV, absMagKs float64, ok bool) {
	if !(massMsun >= rel.minMsun && massMsun <= rel.maxMsun) {
		return 0, 0, 0, 0, false
	}
	d := math.Float64bits(massMsun) - rel.bitsLo
	i := int(d >> relationsGridShift)
	f := float64(d&relationsGridMask) * (1.0 / (1 << relationsGridShift))
	if i >= len(rel.grid)-1 {
		i, f = len(rel.grid)-2, 1
	}
	a, b := &rel.grid[i], &rel.grid[i+1]
	g := 1 - f
	return g*a.TeffK + f*b.TeffK, g*a.BV + f*b.BV, g*a.AbsMagV + f*b.AbsMagV, g*a.AbsMagKs + f*b.AbsMagKs, true
}

// blend interpolates linearly between grid nodes i and i+1.
func (rel *Relations) blend(i int, f float64) Point {
	a, b := &rel.grid[i], &rel.grid[i+1]
	g := 1 - f
	return Point{
		TeffK:      g*a.TeffK + f*b.TeffK,
		LogL:       g*a.LogL + f*b.LogL,
		RadiusRsun: g*a.RadiusRsun + f*b.RadiusRsun,
		BV:         g*a.BV + f*b.BV,
		VKs:        g*a.VKs + f*b.VKs,
		VIc:        g*a.VIc + f*b.VIc,
		AbsMagV:    g*a.AbsMagV + f*b.AbsMagV,
		AbsMagKs:   g*a.AbsMagKs + f*b.AbsMagKs,
	}
}

// MassRange is the range of masses At accepts, in M☉.
func (rel *Relations) MassRange() (minMsun, maxMsun float64) { return rel.minMsun, rel.maxMsun }

// Rows returns a copy of the table rows in ascending mass.
func (rel *Relations) Rows() []Row { return append([]Row(nil), rel.rows...) }

// BVRange is the range of B−V colors the sequence covers.
func (rel *Relations) BVRange() (bvMin, bvMax float64) { return rel.bvBottom, rel.bvTop }

// bracketBV finds the grid cell holding bv (B−V falls along the grid) and
// the fraction f of the way from node i to i+1. ok is false out of range.
func (rel *Relations) bracketBV(bv float64) (i int, f float64, ok bool) {
	if !(bv <= rel.bvTop && bv >= rel.bvBottom) {
		return 0, 0, false
	}
	k := int((rel.bvTop - bv) * rel.bvInvWidth)
	k = min(k, relationsBVBuckets)
	g := rel.bvMag
	i = int(rel.bvStart[k])
	for i+2 < len(g) && g[i+1].bv > bv {
		i++
	}
	return i, (g[i].bv - bv) / (g[i].bv - g[i+1].bv), true
}

// MassFromBV inverts the B−V relation: the mass in M☉ of the main-sequence
// star with color bv. It is the exact inverse of At's B−V (both are linear
// in mass between the same grid nodes). ok is false outside BVRange.
func (rel *Relations) MassFromBV(bv float64) (massMsun float64, ok bool) {
	i, f, ok := rel.bracketBV(bv)
	if !ok {
		return 0, false
	}
	a, b := rel.nodeMass(i), rel.nodeMass(i+1)
	return min(max(a+f*(b-a), rel.minMsun), rel.maxMsun), true
}

// AbsMagVAtBV is the single-star main sequence in the color–magnitude
// plane: M_V of the main-sequence star with color bv. ok is false outside
// BVRange.
func (rel *Relations) AbsMagVAtBV(bv float64) (absMagV float64, ok bool) {
	i, f, ok := rel.bracketBV(bv)
	if !ok {
		return 0, false
	}
	return (1-f)*rel.bvMag[i].absMagV + f*rel.bvMag[i+1].absMagV, true
}

// Band is a photometric band with an absolute magnitude in Point.
type Band uint8

// Bands with absolute magnitudes in the table.
const (
	BandV Band = iota
	BandKs
)

// ParseBand turns "V" or "Ks" (case-insensitive) into a Band.
func ParseBand(name string) (Band, error) {
	switch strings.ToLower(strings.TrimSpace(name)) {
	case "v":
		return BandV, nil
	case "ks":
		return BandKs, nil
	}
	return 0, fmt.Errorf("model: unknown band %q: want \"V\" or \"Ks\"", name)
}

// String returns the band's name.
func (b Band) String() string {
	if b == BandKs {
		return "Ks"
	}
	return "V"
}

// Mag is the absolute magnitude of p in band b.
func (p Point) Mag(b Band) float64 {
	if b == BandKs {
		return p.AbsMagKs
	}
	return p.AbsMagV
}

// BandMag is the absolute magnitude of p in the named band ("V" or "Ks").
// In hot loops parse the band once with ParseBand and use Point.Mag.
func BandMag(p Point, band string) (float64, error) {
	b, err := ParseBand(band)
	if err != nil {
		return 0, err
	}
	return p.Mag(b), nil
}

// ShiftedInMV returns the relations with every star's M_V and M_Ks moved
// by shift(B−V) (> 0 fainter) at its own color, colors, temperatures and
// luminosities unchanged: the same table placed where a catalog's main
// sequence lies (a metallicity other than the table's, a photometric
// system's zero point). The shift is applied to the smoothed grid, so the
// sequence at a color moves by exactly shift there. Rows keeps the table
// as published. An error means the shift would make M_V rise with mass
// somewhere: a shift steeper than the sequence.
func (rel *Relations) ShiftedInMV(shift func(bv float64) float64) (*Relations, error) {
	out := *rel
	out.grid = append([]Point(nil), rel.grid...)
	for i := range out.grid {
		d := shift(out.grid[i].BV)
		out.grid[i].AbsMagV += d
		out.grid[i].AbsMagKs += d
	}
	if err := out.checkMonotonic(); err != nil {
		return nil, fmt.Errorf("model: the sequence shifted in M_V: %w; the shift is steeper than the sequence", err)
	}
	out.indexBV()
	return &out, nil
}

// LinearShift is the piecewise-linear function through (bv[i], mag[i]),
// flat beyond the first and last nodes; nil when there are no nodes. bv
// must be strictly increasing and as long as mag (scenarios checks both).
func LinearShift(bv, mag []float64) func(float64) float64 {
	if len(bv) == 0 {
		return nil
	}
	xs, ys := append([]float64(nil), bv...), append([]float64(nil), mag...)
	return func(x float64) float64 {
		switch {
		case x <= xs[0]:
			return ys[0]
		case x >= xs[len(xs)-1]:
			return ys[len(ys)-1]
		}
		k := sort.SearchFloat64s(xs, x) // xs[k-1] < x ≤ xs[k]
		f := (x - xs[k-1]) / (xs[k] - xs[k-1])
		return ys[k-1] + f*(ys[k]-ys[k-1])
	}
}
