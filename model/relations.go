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

// Relations maps mass to main-sequence observables by monotone cubic
// interpolation in log10 mass through a mean dwarf sequence.
//
// The interpolant is tabulated once, at load, on a grid that is uniform in
// the bit pattern of the float64 mass: within each factor-of-two range of
// mass the nodes are evenly spaced (512 per octave, ≤ 0.2 % apart), so the
// grid is geometric to within a factor two in spacing, like a grid in log
// mass, yet the node below any mass is found from its bits with a subtract
// and a shift — no logarithm. At then blends two nodes linearly.
//
// A Relations is read-only after construction and safe for concurrent use.
type Relations struct {
	rows []Row // ascending mass

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

//go:embed tables/dwarf_sequence.csv
var dwarfSequenceCSV string

// DwarfSequenceFile is the name of the embedded table, for messages.
const DwarfSequenceFile = "tables/dwarf_sequence.csv"

var dwarfSequence = sync.OnceValues(func() (*Relations, error) {
	return ParseRelations(strings.NewReader(dwarfSequenceCSV), DwarfSequenceFile)
})

// DwarfSequence returns the relations of the embedded mean dwarf sequence
// (Pecaut & Mamajek 2013, values recalled from memory; see the table's
// header). It is parsed once and shared.
func DwarfSequence() (*Relations, error) { return dwarfSequence() }

// relationsColumns are the columns a table must have, in any order.
var relationsColumns = [...]string{
	"spectral_type", "mass_msun", "teff_k", "log_l_lsun", "radius_rsun",
	"b_v", "v_ks", "v_ic", "abs_mag_v", "abs_mag_ks",
}

// ParseRelations reads a dwarf-sequence table: comma-separated, lines
// starting with '#' are comments, the first other line names the columns
// (see relationsColumns; extra columns are ignored). name is used in errors.
// Masses must be positive and distinct; rows may come in any order. Colors
// must change strictly monotonically with mass (B−V is inverted by
// MassFromBV).
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
				return 0, fmt.Errorf("model: %s line %d column %s: %q is not a finite number", name, line, c, s)
			}
			return v, nil
		}
		var row Row
		row.SpectralType = strings.TrimSpace(rec[col["spectral_type"]])
		fields := [...]struct {
			c string
			p *float64
		}{
			{"mass_msun", &row.MassMsun}, {"teff_k", &row.TeffK}, {"log_l_lsun", &row.LogL},
			{"radius_rsun", &row.RadiusRsun}, {"b_v", &row.BV}, {"v_ks", &row.VKs},
			{"v_ic", &row.VIc}, {"abs_mag_v", &row.AbsMagV}, {"abs_mag_ks", &row.AbsMagKs},
		}
		for _, f := range fields {
			if *f.p, err = num(f.c); err != nil {
				return nil, err
			}
		}
		if row.MassMsun <= 0 || row.TeffK <= 0 || row.RadiusRsun <= 0 {
			return nil, fmt.Errorf("model: %s line %d (%s): mass_msun, teff_k and radius_rsun must be > 0", name, line, row.SpectralType)
		}
		rows = append(rows, row)
	}
	return NewRelations(rows, name)
}

// NewRelations builds relations from rows (copied; any order). name is used
// in errors.
func NewRelations(rows []Row, name string) (*Relations, error) {
	if len(rows) < 2 {
		return nil, fmt.Errorf("model: %s: %d rows; a dwarf sequence needs at least 2", name, len(rows))
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
		a, b := rs[i-1], rs[i]
		if !(b.BV < a.BV && b.VKs < a.VKs && b.VIc < a.VIc) {
			return nil, fmt.Errorf("model: %s: colors of %s (%g M☉) and %s (%g M☉) do not redden toward lower mass: each color must fall strictly as mass rises",
				name, a.SpectralType, a.MassMsun, b.SpectralType, b.MassMsun)
		}
	}
	x := make([]float64, len(rs))
	for i, r := range rs {
		x[i] = math.Log10(r.MassMsun)
	}
	rel := &Relations{
		rows:    rs,
		minMsun: rs[0].MassMsun,
		maxMsun: rs[len(rs)-1].MassMsun,
		bitsLo:  math.Float64bits(rs[0].MassMsun) &^ relationsGridMask,
	}
	// Nodes from the one at or below the lowest mass to the one at or above
	// the highest; the end secants extend the interpolant by under one cell.
	n := int((math.Float64bits(rel.maxMsun)-rel.bitsLo+relationsGridMask)>>relationsGridShift) + 1
	n = max(n, 2)
	rel.grid = make([]Point, n)
	nodeX := make([]float64, n)
	for i := range nodeX {
		nodeX[i] = math.Log10(rel.nodeMass(i))
	}
	y := make([]float64, len(rs))
	for _, field := range pointFields {
		for i := range rs {
			y[i] = *field(&rs[i].Point)
		}
		h := newPCHIP(x, y)
		for i := range rel.grid {
			*field(&rel.grid[i]) = h.at(nodeX[i])
		}
	}
	for i := 1; i < len(rel.grid); i++ {
		if !(rel.grid[i].BV < rel.grid[i-1].BV) {
			return nil, fmt.Errorf("model: %s: interpolated B−V is not strictly monotonic near %g M☉", name, rel.nodeMass(i))
		}
	}
	rel.indexBV()
	return rel, nil
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

// pointFields lists Point's fields for column-wise work.
var pointFields = [...]func(*Point) *float64{
	func(p *Point) *float64 { return &p.TeffK },
	func(p *Point) *float64 { return &p.LogL },
	func(p *Point) *float64 { return &p.RadiusRsun },
	func(p *Point) *float64 { return &p.BV },
	func(p *Point) *float64 { return &p.VKs },
	func(p *Point) *float64 { return &p.VIc },
	func(p *Point) *float64 { return &p.AbsMagV },
	func(p *Point) *float64 { return &p.AbsMagKs },
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

// pchip is a monotone piecewise cubic Hermite interpolant (Fritsch &
// Carlson 1980, SIAM J. Numer. Anal. 17, 238, with the tangents of Fritsch
// & Butland 1984): it never overshoots the data, so monotone columns stay
// monotone and no spurious wiggles appear between rows.
type pchip struct {
	x, y, d []float64
}

func newPCHIP(x, y []float64) pchip {
	n := len(x)
	h := make([]float64, n-1)
	del := make([]float64, n-1)
	for k := 0; k < n-1; k++ {
		h[k] = x[k+1] - x[k]
		del[k] = (y[k+1] - y[k]) / h[k]
	}
	d := make([]float64, n)
	if n == 2 {
		d[0], d[1] = del[0], del[0]
		return pchip{x: x, y: append([]float64(nil), y...), d: d}
	}
	for k := 1; k < n-1; k++ {
		if del[k-1]*del[k] <= 0 {
			continue // local extremum or flat: zero slope
		}
		// Weighted harmonic mean of the neighbouring secants.
		w1 := 2*h[k] + h[k-1]
		w2 := h[k] + 2*h[k-1]
		d[k] = (w1 + w2) / (w1/del[k-1] + w2/del[k])
	}
	d[0] = pchipEnd(h[0], h[1], del[0], del[1])
	d[n-1] = pchipEnd(h[n-2], h[n-3], del[n-2], del[n-3])
	return pchip{x: x, y: append([]float64(nil), y...), d: d}
}

// pchipEnd is the shape-preserving three-point end slope.
func pchipEnd(h0, h1, del0, del1 float64) float64 {
	d := ((2*h0+h1)*del0 - h0*del1) / (h0 + h1)
	switch {
	case math.Signbit(d) != math.Signbit(del0) || d == 0:
		return 0
	case math.Signbit(del0) != math.Signbit(del1) && math.Abs(d) > 3*math.Abs(del0):
		return 3 * del0
	}
	return d
}

// at evaluates the interpolant at t. Beyond the ends (the grid reaches
// less than one cell past them) it continues along the end secant, which
// keeps strictly monotone data strictly monotone.
func (p pchip) at(t float64) float64 {
	n := len(p.x)
	switch {
	case t < p.x[0]:
		return p.y[0] + (t-p.x[0])*(p.y[1]-p.y[0])/(p.x[1]-p.x[0])
	case t > p.x[n-1]:
		return p.y[n-1] + (t-p.x[n-1])*(p.y[n-1]-p.y[n-2])/(p.x[n-1]-p.x[n-2])
	}
	k := sort.SearchFloat64s(p.x, t) - 1
	k = max(0, min(k, n-2))
	h := p.x[k+1] - p.x[k]
	s := (t - p.x[k]) / h
	s2, s3 := s*s, s*s*s
	h00 := 2*s3 - 3*s2 + 1
	h10 := s3 - 2*s2 + s
	h01 := -2*s3 + 3*s2
	h11 := s3 - s2
	return h00*p.y[k] + h*h10*p.d[k] + h01*p.y[k+1] + h*h11*p.d[k+1]
}
