package model

import (
	"encoding/csv"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func dwarfs(t testing.TB) *Relations {
	t.Helper()
	rel, err := DwarfSequence()
	require.NoError(t, err)
	return rel
}

// IAU 2015 Resolution B3 nominal solar values.
const (
	iauTeffSunK = 5772.0
	iauLSunW    = 3.828e26
	iauRSunM    = 6.957e8
	sigmaSB     = 5.670374419e-8 // W m⁻² K⁻⁴, CODATA 2018 (exact by SI definition)
)

// Source: IAU 2015 Resolution B3 — T_eff☉ = 5772 K, L☉ = 3.828e26 W,
// R☉ = 6.957e8 m. The relation is pinned to them at 1 M☉.
func TestRelationsSunAtOneSolarMass(t *testing.T) {
	p, ok := dwarfs(t).At(1)
	require.True(t, ok)
	assert.InDelta(t, iauTeffSunK, p.TeffK, 0.01)
	assert.InDelta(t, 0, p.LogL, 1e-6)
	assert.InDelta(t, 1, p.RadiusRsun, 1e-6)
	// The B3 nominal values themselves obey L = 4πR²σT⁴ to 0.1 %, which
	// is what licenses the solar-unit form of the radius.
	l := 4 * math.Pi * iauRSunM * iauRSunM * sigmaSB * math.Pow(iauTeffSunK, 4)
	assert.InEpsilon(t, iauLSunW, l, 1e-3)
}

// publishedRow is a row of the published table, read independently of
// the embedded copy: Pecaut & Mamajek (2013), ApJS 208, 9, Table 5,
// version 2024.05.15 (the values as published).
type publishedRow struct {
	spt                       string
	teffK, logL, radius, absV float64
	bv, vIc, vKs, massMsun    float64
}

var publishedSpotRows = []publishedRow{
	{"F5V", 6550, 0.556, 1.473, 3.37, 0.440, 0.506, 1.079, 1.32},
	{"G2V", 5770, 0.010, 1.012, 4.80, 0.650, 0.713, 1.564, 1.00},
	{"K5V", 4440, -0.780, 0.701, 7.28, 1.150, 1.272, 2.88, 0.70},
	{"M3.5V", 3270, -2.032, 0.300, 12.10, 1.60, 2.680, 5.00, 0.29},
}

// The embedded table is the published one: spot checks of whole rows.
// Source: Pecaut & Mamajek (2013), ApJS 208, 9, Table 5, version 2024.05.15.
func TestRelationsTableIsThePublishedOne(t *testing.T) {
	rows := dwarfs(t).Rows()
	require.Len(t, rows, 42, "F0V to M5V, 42 subtypes")
	by := map[string]Row{}
	for _, r := range rows {
		by[r.SpectralType] = r
	}
	for _, w := range publishedSpotRows {
		r, ok := by[w.spt]
		require.True(t, ok, w.spt)
		assert.Equal(t, [9]float64{w.teffK, w.logL, w.radius, w.absV, w.bv, w.vIc, w.vKs, w.massMsun, w.absV - w.vKs},
			[9]float64{r.TeffK, r.LogL, r.RadiusRsun, r.AbsMagV, r.BV, r.VIc, r.VKs, r.MassMsun, r.AbsMagKs}, w.spt)
	}
}

// relationResiduals are the rms and largest residuals of the relation from
// the published rows, evaluated at each row's published mass.
func relationResiduals(t testing.TB, rel *Relations) (rms, worst map[string]float64) {
	t.Helper()
	cols := []struct {
		name string
		diff func(p Point, r Row) float64
	}{
		{"T_eff [K]", func(p Point, r Row) float64 { return p.TeffK - r.TeffK }},
		{"log L", func(p Point, r Row) float64 { return p.LogL - r.LogL }},
		{"R [relative]", func(p Point, r Row) float64 { return p.RadiusRsun/r.RadiusRsun - 1 }},
		{"B−V", func(p Point, r Row) float64 { return p.BV - r.BV }},
		{"V−Ic", func(p Point, r Row) float64 { return p.VIc - r.VIc }},
		{"V−Ks", func(p Point, r Row) float64 { return p.VKs - r.VKs }},
		{"M_V", func(p Point, r Row) float64 { return p.AbsMagV - r.AbsMagV }},
		{"M_Ks", func(p Point, r Row) float64 { return p.AbsMagKs - r.AbsMagKs }},
	}
	rms, worst = map[string]float64{}, map[string]float64{}
	rows := rel.Rows()
	for _, c := range cols {
		s := 0.0
		for _, r := range rows {
			p, ok := rel.At(r.MassMsun)
			require.True(t, ok, r.SpectralType)
			d := c.diff(p, r)
			s += d * d
			worst[c.name] = max(worst[c.name], math.Abs(d))
		}
		rms[c.name] = math.Sqrt(s / float64(len(rows)))
		t.Logf("%-13s rms %.4f  largest %.4f", c.name, rms[c.name], worst[c.name])
	}
	return rms, worst
}

// The smooth relation stays close to the published rows at their masses.
// Source: Pecaut & Mamajek (2013), ApJS 208, 9, Table 5, version
// 2024.05.15. The B−V and M_V targets are issue 9's; the others hold the
// fit to what rounding the published masses (to 0.01–0.05 M☉) alone
// allows: at d(M_V)/d(log10 m) ≈ 10 mag, a 0.005 M☉ rounding of a
// 0.5 M☉ star moves M_V by 0.04 mag.
func TestRelationsResidualsFromPublishedRows(t *testing.T) {
	rms, worst := relationResiduals(t, dwarfs(t))
	assert.LessOrEqual(t, rms["B−V"], 0.015)
	assert.LessOrEqual(t, rms["M_V"], 0.1)
	assert.LessOrEqual(t, rms["T_eff [K]"], 40.0)
	assert.LessOrEqual(t, rms["log L"], 0.025)
	assert.LessOrEqual(t, rms["V−Ic"], 0.025)
	assert.LessOrEqual(t, rms["V−Ks"], 0.04)
	assert.LessOrEqual(t, rms["M_Ks"], 0.04)
	// The radius is not fitted: it follows from L = 4πR²σT⁴, so this
	// compares it with the published radius column.
	assert.LessOrEqual(t, rms["R [relative]"], 0.02)
	assert.LessOrEqual(t, worst["B−V"], 0.05)
	assert.LessOrEqual(t, worst["M_V"], 0.2)
}

// Every spectral subtype from F0V to M5V is present.
func TestRelationsCoverSubtypes(t *testing.T) {
	have := map[string]bool{}
	for _, r := range dwarfs(t).Rows() {
		have[r.SpectralType] = true
	}
	for _, cls := range []string{"F", "G", "K", "M"} {
		for n := 0; n <= 9; n++ {
			if cls == "M" && n > 5 {
				break
			}
			st := cls + strconv.Itoa(n) + "V"
			assert.True(t, have[st], "missing %s", st)
		}
	}
}

// Colors and magnitudes redden and fade, T_eff, L and R fall,
// monotonically toward lower mass, everywhere. Source: Pecaut & Mamajek
// (2013) — the mean dwarf sequence is monotonic in these columns over
// F0V–M5V, up to the rounding of single rows (G0V–G1V in V−Ic).
func TestRelationsMonotonicWithMass(t *testing.T) {
	rel := dwarfs(t)
	lo, hi := rel.MassRange()
	prev, ok := rel.At(lo)
	require.True(t, ok)
	for i := 1; i <= 5000; i++ {
		m := min(hi, lo*math.Pow(hi/lo, float64(i)/5000))
		p, ok := rel.At(m)
		require.True(t, ok, "mass %g", m)
		require.Less(t, p.BV, prev.BV, "B−V at %g", m)
		require.Less(t, p.VKs, prev.VKs, "V−Ks at %g", m)
		require.Less(t, p.VIc, prev.VIc, "V−Ic at %g", m)
		require.Less(t, p.AbsMagV, prev.AbsMagV, "M_V at %g", m)
		require.Less(t, p.AbsMagKs, prev.AbsMagKs, "M_Ks at %g", m)
		require.Greater(t, p.TeffK, prev.TeffK, "T_eff at %g", m)
		require.Greater(t, p.LogL, prev.LogL, "log L at %g", m)
		require.Greater(t, p.RadiusRsun, prev.RadiusRsun, "R at %g", m)
		prev = p
	}
}

// The relation obeys the identities it is built on at every mass:
// L/L☉ = (R/R☉)² (T/5772 K)⁴ (IAU 2015 Resolution B3 units) and
// M_Ks = M_V − (V−Ks).
func TestRelationsIdentities(t *testing.T) {
	rel := dwarfs(t)
	lo, hi := rel.MassRange()
	for i := 0; i <= 300; i++ {
		m := min(hi, lo*math.Pow(hi/lo, float64(i)/300))
		p, ok := rel.At(m)
		require.True(t, ok)
		lSB := p.RadiusRsun * p.RadiusRsun * math.Pow(p.TeffK/iauTeffSunK, 4)
		// At blends grid nodes linearly, which bends a product by ~1e-6.
		assert.InEpsilon(t, math.Pow(10, p.LogL), lSB, 1e-5, "mass %g", m)
		assert.InDelta(t, p.AbsMagV-p.VKs, p.AbsMagKs, 1e-12, "mass %g", m)
	}
}

// At follows the cubic smoothing spline computed independently by scipy
// 1.10's make_smoothing_spline with the same λ and the pinned Sun
// (testdata/dwarf_sequence_smooth.py); the grid adds an error far below
// the table's own.
func TestRelationsMatchScipySmoothingSpline(t *testing.T) {
	rel := dwarfs(t)
	f, err := os.Open(filepath.Join("..", "testdata", "dwarf_sequence_smooth.csv"))
	require.NoError(t, err)
	defer f.Close()
	cr := csv.NewReader(f)
	cr.Comment = '#'
	recs, err := cr.ReadAll()
	require.NoError(t, err)
	require.Greater(t, len(recs), 100)
	col := map[string]int{}
	for i, h := range recs[0] {
		col[h] = i
	}
	get := func(rec []string, c string) float64 {
		v, err := strconv.ParseFloat(rec[col[c]], 64)
		require.NoError(t, err)
		return v
	}
	for _, rec := range recs[1:] {
		m := get(rec, "mass_msun")
		p, ok := rel.At(m)
		require.True(t, ok, "mass %g", m)
		assert.InDelta(t, get(rec, "teff_k"), p.TeffK, 0.05, "T_eff at %g", m)
		assert.InDelta(t, get(rec, "log_l_lsun"), p.LogL, 2e-5, "log L at %g", m)
		assert.InEpsilon(t, get(rec, "radius_rsun"), p.RadiusRsun, 5e-5, "R at %g", m)
		assert.InDelta(t, get(rec, "b_v"), p.BV, 2e-5, "B−V at %g", m)
		assert.InDelta(t, get(rec, "v_ks"), p.VKs, 5e-5, "V−Ks at %g", m)
		assert.InDelta(t, get(rec, "v_ic"), p.VIc, 5e-5, "V−Ic at %g", m)
		assert.InDelta(t, get(rec, "abs_mag_v"), p.AbsMagV, 1e-4, "M_V at %g", m)
		assert.InDelta(t, get(rec, "abs_mag_ks"), p.AbsMagKs, 1e-4, "M_Ks at %g", m)
	}
}

func TestRelationsOutOfRange(t *testing.T) {
	rel := dwarfs(t)
	lo, hi := rel.MassRange()
	for _, m := range []float64{0, -1, lo * 0.999, hi * 1.001, math.NaN(), math.Inf(1)} {
		p, ok := rel.At(m)
		assert.False(t, ok, "mass %g", m)
		assert.Equal(t, Point{}, p)
	}
	for _, m := range []float64{lo, hi} {
		_, ok := rel.At(m)
		assert.True(t, ok, "mass %g is the edge of the range", m)
	}
	bvMin, bvMax := rel.BVRange()
	for _, bv := range []float64{bvMin - 0.01, bvMax + 0.01, math.NaN()} {
		_, ok := rel.MassFromBV(bv)
		assert.False(t, ok, "B−V %g", bv)
		_, ok = rel.AbsMagVAtBV(bv)
		assert.False(t, ok, "B−V %g", bv)
	}
}

// MassFromBV inverts At's B−V.
func TestMassFromBVRoundTrip(t *testing.T) {
	rel := dwarfs(t)
	lo, hi := rel.MassRange()
	for i := 0; i <= 1000; i++ {
		m := min(hi, lo*math.Pow(hi/lo, float64(i)/1000))
		p, ok := rel.At(m)
		require.True(t, ok)
		back, ok := rel.MassFromBV(p.BV)
		require.True(t, ok, "B−V %g", p.BV)
		assert.InEpsilon(t, m, back, 1e-9, "mass %g", m)
		absV, ok := rel.AbsMagVAtBV(p.BV)
		require.True(t, ok)
		assert.InDelta(t, p.AbsMagV, absV, 1e-9, "M_V at B−V %g", p.BV)
	}
}

// At 1 M☉ the colors and M_V (not pinned) follow the published G dwarfs,
// and land near the Sun's own. From memory of Ramírez et al. (2012), ApJ
// 752, 5 (B−V☉ = 0.653 ± 0.003) and Willmer (2018), ApJS 236, 47
// (M_V☉ = 4.81); tolerances reflect that and the published G2V row
// (B−V 0.650, M_V 4.80). The inverse reads them back by color.
func TestSunByColor(t *testing.T) {
	rel := dwarfs(t)
	p, ok := rel.At(1)
	require.True(t, ok)
	assert.InDelta(t, 0.653, p.BV, 0.01)
	assert.InDelta(t, 4.81, p.AbsMagV, 0.06)
	m, ok := rel.MassFromBV(0.653)
	require.True(t, ok)
	assert.InDelta(t, 1, m, 0.01)
	v, ok := rel.AbsMagVAtBV(p.BV)
	require.True(t, ok)
	assert.InDelta(t, p.AbsMagV, v, 1e-9)
}

func TestBandMag(t *testing.T) {
	p := Point{AbsMagV: 4.81, AbsMagKs: 3.25}
	v, err := BandMag(p, "V")
	require.NoError(t, err)
	assert.Equal(t, 4.81, v)
	ks, err := BandMag(p, "ks")
	require.NoError(t, err)
	assert.Equal(t, 3.25, ks)
	_, err = BandMag(p, "G")
	require.Error(t, err)
	assert.Contains(t, err.Error(), "Ks")
	b, err := ParseBand("Ks")
	require.NoError(t, err)
	assert.Equal(t, "Ks", b.String())
	assert.Equal(t, 3.25, p.Mag(b))
}

func TestParseRelationsErrors(t *testing.T) {
	head := "spt,teff_k,log_l_lsun,radius_rsun,abs_v_mag,b_v_mag,v_ic_mag,v_ks_mag,mass_msun\n"
	good := []string{
		"A,6000,0.2,1.2,4.3,0.55,0.62,1.3,1.1\n",
		"B,5772,0,1,4.81,0.65,0.70,1.56,1.0\n",
		"C,4500,-0.7,0.7,7.1,1.10,1.2,2.8,0.72\n",
		"D,3700,-1.3,0.5,9.5,1.45,1.9,4.0,0.5\n",
	}
	all := strings.Join(good, "")
	for _, c := range []struct {
		name, text, want string
	}{
		{"missing column", strings.Replace(head, ",v_ic_mag", "", 1) + all, `column "v_ic_mag" is missing`},
		{"bad number", head + all + "E,hot,-1.3,0.5,9.5,1.45,1.9,4.0,0.4\n", "line 6 column teff_k"},
		{"blank", head + all + "E,3500,-1.3,0.5,9.5,,1.9,4.0,0.4\n", "line 6 column b_v_mag"},
		{"duplicate mass", head + all + strings.Replace(good[3], ",0.5\n", ",1.0\n", 1), "share mass"},
		{"two rows", head + good[0] + good[1], "at least 3"},
		{"negative mass", head + all + strings.Replace(good[3], ",0.5\n", ",-0.5\n", 1), "must be > 0"},
		{"colors not monotonic", head + strings.Replace(all, "1.10,1.2", "0.30,1.2", 1), "not strictly monotonic"},
	} {
		_, err := ParseRelations(strings.NewReader(c.text), "test.csv")
		require.Error(t, err, c.name)
		assert.Contains(t, err.Error(), c.want, c.name)
		assert.Contains(t, err.Error(), "test.csv", c.name)
	}
	rel, err := ParseRelations(strings.NewReader("# comment\n"+head+good[3]+good[1]+good[0]+good[2]), "test.csv")
	require.NoError(t, err)
	lo, hi := rel.MassRange()
	assert.Equal(t, 0.5, lo)
	assert.Equal(t, 1.1, hi)
	// Without a row at 1 M☉ the pinned Sun joins the rows.
	rel, err = ParseRelations(strings.NewReader(head+good[0]+good[2]+good[3]), "test.csv")
	require.NoError(t, err)
	p, ok := rel.At(1)
	require.True(t, ok)
	assert.InDelta(t, iauTeffSunK, p.TeffK, 0.01)
}

// atMain, the generator's cut-down At, must give At's values bit for bit,
// in range and out of it.
func TestAtMainMatchesAt(t *testing.T) {
	rel := dwarfs(t)
	lo, hi := rel.MassRange()
	r := rand.New(rand.NewPCG(4, 4))
	masses := []float64{lo, hi, lo * 0.999, hi * 1.001, math.NaN(), 1}
	for range 20000 {
		masses = append(masses, lo*math.Pow(hi/lo, r.Float64()))
	}
	for _, m := range masses {
		p, ok := rel.At(m)
		teff, bv, absV, absKs, ok2 := rel.atMain(m)
		require.Equal(t, ok, ok2, "mass %v", m)
		require.Equal(t, [4]float64{p.TeffK, p.BV, p.AbsMagV, p.AbsMagKs}, [4]float64{teff, bv, absV, absKs}, "mass %v", m)
	}
}

func TestRelationsAtAllocationFree(t *testing.T) {
	rel := dwarfs(t)
	assert.Zero(t, testing.AllocsPerRun(1000, func() { rel.At(0.8) }))
	assert.Zero(t, testing.AllocsPerRun(1000, func() { rel.AbsMagVAtBV(0.8) }))
}

func BenchmarkRelationsAt(b *testing.B) {
	rel := dwarfs(b)
	lo, hi := rel.MassRange()
	ms := make([]float64, 1024)
	for i := range ms {
		ms[i] = lo * math.Pow(hi/lo, (float64(i)+0.5)/float64(len(ms)))
	}
	s := 0.0
	i := 0
	for b.Loop() {
		p, _ := rel.At(ms[i&1023])
		s += p.TeffK
		i++
	}
	_ = s
}

func BenchmarkRelationsAbsMagVAtBV(b *testing.B) {
	rel := dwarfs(b)
	lo, hi := rel.BVRange()
	s := 0.0
	i := 0
	for b.Loop() {
		v, _ := rel.AbsMagVAtBV(lo + (hi-lo)*float64(i&1023)/1024)
		s += v
		i++
	}
	_ = s
}

// LinearShift: values worked by hand from the nodes (0.5, +0.1) and
// (1.0, −0.1): −0.4 mag per mag of B−V between them, flat beyond.
func TestLinearShift(t *testing.T) {
	assert.Nil(t, LinearShift(nil, nil), "no nodes, no shift")
	f := LinearShift([]float64{0.5, 1.0}, []float64{0.1, -0.1})
	for _, c := range []struct{ bv, want float64 }{
		{0.3, 0.1}, {0.5, 0.1}, {0.6, 0.06}, {0.75, 0}, {1.0, -0.1}, {1.4, -0.1},
	} {
		assert.InDelta(t, c.want, f(c.bv), 1e-12, "B−V %g", c.bv)
	}
}

// ShiftedInMV moves M_V and M_Ks at a color by exactly the shift there and
// leaves what the spin-down law reads (mass, color, temperature) alone.
func TestShiftedInMV(t *testing.T) {
	rel, err := DwarfSequence()
	require.NoError(t, err)
	shift := LinearShift([]float64{0.5, 1.0, 1.4}, []float64{0.2, -0.05, 0.1})
	moved, err := rel.ShiftedInMV(shift)
	require.NoError(t, err)
	for _, bv := range []float64{0.5, 0.62, 0.8, 1.0, 1.2, 1.4} {
		m0, ok0 := rel.AbsMagVAtBV(bv)
		m1, ok1 := moved.AbsMagVAtBV(bv)
		require.True(t, ok0 && ok1)
		assert.InDelta(t, shift(bv), m1-m0, 2e-3, "M_V at B−V %g", bv) // the grid's linear blend between nodes 0.2 % apart in mass
	}
	for _, m := range []float64{0.6, 0.85, 1.0, 1.2} {
		p0, _ := rel.At(m)
		p1, _ := moved.At(m)
		assert.Equal(t, p0.BV, p1.BV)
		assert.Equal(t, p0.TeffK, p1.TeffK)
		assert.InDelta(t, p1.AbsMagV-p0.AbsMagV, p1.AbsMagKs-p0.AbsMagKs, 1e-12, "V−Ks kept at %g M☉", m)
		assert.InDelta(t, shift(p0.BV), p1.AbsMagV-p0.AbsMagV, 1e-3, "at %g M☉", m)
	}
	m0, _ := rel.AbsMagVAtBV(0.8)
	again, _ := DwarfSequence()
	m2, _ := again.AbsMagVAtBV(0.8)
	assert.Equal(t, m0, m2, "the shared table is not moved")

	// A shift that falls 100 mag per mag of B−V undoes the sequence's own
	// rise (4.5–7 mag per mag over B−V 0.45–1.4 in this table): M_V would
	// rise with mass.
	_, err = rel.ShiftedInMV(LinearShift([]float64{0.70, 0.71}, []float64{0.5, -0.5}))
	require.Error(t, err)
	assert.Contains(t, err.Error(), "steeper than the sequence")
}
