package model

import (
	"fmt"
	"math"
	"math/rand/v2"
)

// CombineMags is the magnitude of two unresolved sources of magnitudes m1
// and m2 in the same band: fluxes add. A source at +Inf magnitude (no
// light) leaves the other unchanged.
func CombineMags(m1, m2 float64) float64 {
	if m2 < m1 {
		m1, m2 = m2, m1
	}
	if math.IsInf(m2, 1) {
		return m1
	}
	// m1 − 2.5 log10(1 + 10^(−0.4 (m2 − m1))), written around the brighter
	// source so that no flux underflows.
	return m1 - 2.5*math.Log10(1+math.Exp(-0.4*math.Ln10*(m2-m1)))
}

// FracFunc gives the fraction of primaries of a given mass (M☉) that have
// an unresolved companion.
type FracFunc func(primaryMassMsun float64) float64

// binaryFractionNodes are (mass, multiplicity fraction) pairs, joined
// linearly in log10 mass and held flat beyond the ends. They are a
// documented approximation of the reviews' multiplicity fractions by
// primary mass [memory]: ≈ 0.22 for very-low-mass primaries (≲ 0.1 M☉),
// ≈ 0.26 for M dwarfs (0.1–0.5 M☉), ≈ 0.44 for Sun-like stars (0.7–1.3 M☉)
// and ≈ 0.5 above 1.5 M☉ (Raghavan et al. 2010, ApJS 190, 1; Duchêne &
// Kraus 2013, ARA&A 51, 269). Where the reviews quote a mass range the node
// sits near its middle in log mass.
var binaryFractionNodes = [...]struct{ massMsun, frac float64 }{
	{0.08, 0.22},
	{0.3, 0.26},
	{1.0, 0.44},
	{2.0, 0.50},
}

// binaryFractionInvLogStep[i] is 1/ln(m_{i+1}/m_i) between the nodes.
var binaryFractionInvLogStep = func() (inv [len(binaryFractionNodes) - 1]float64) {
	n := binaryFractionNodes
	for i := range inv {
		inv[i] = 1 / math.Log(n[i+1].massMsun/n[i].massMsun)
	}
	return inv
}()

// BinaryFraction is the approximate fraction of primaries of the given mass
// that have a companion (see binaryFractionNodes for the sources). It rises
// monotonically from 0.22 below 0.08 M☉ to 0.5 above 2 M☉ and is 0.44 at
// 1 M☉.
func BinaryFraction(primaryMassMsun float64) float64 {
	n := binaryFractionNodes
	if !(primaryMassMsun > n[0].massMsun) {
		return n[0].frac
	}
	for i := 1; i < len(n); i++ {
		if primaryMassMsun <= n[i].massMsun {
			a, b := n[i-1], n[i]
			t := math.Log(primaryMassMsun/a.massMsun) * binaryFractionInvLogStep[i-1]
			return a.frac + t*(b.frac-a.frac)
		}
	}
	return n[len(n)-1].frac
}

// CheckQMin reports whether qMin is a usable lower limit of the mass ratio
// q = m2/m1 for Companion: it must lie in [0, 1].
func CheckQMin(qMin float64) error {
	if !(qMin >= 0 && qMin <= 1) {
		return fmt.Errorf("model: binary mass-ratio minimum %g is outside [0, 1]: give a value such as 0.1", qMin)
	}
	return nil
}

// Companion decides whether a primary of the given mass has an unresolved
// companion and draws its mass from a flat mass-ratio distribution,
// q = m2/m1 uniform in [qMin, 1] [memory: flat q distributions are the
// reviews' summary for solar-type primaries; Raghavan et al. 2010].
// frac gives the companion fraction by primary mass (nil means
// BinaryFraction). qMin outside [0, 1] is clamped to it; validate user
// input with CheckQMin first.
//
// It always draws exactly two uniform numbers from r, whatever the
// outcome, so one star's fate never shifts the stream of the next. The
// companion may fall below the mass range of the relations; such a
// companion adds little light and callers may ignore it.
func Companion(primary float64, r *rand.Rand, frac FracFunc, qMin float64) (massMsun float64, has bool) {
	u, v := r.Float64(), r.Float64()
	var f float64
	if frac == nil {
		f = BinaryFraction(primary)
	} else {
		f = frac(primary)
	}
	return companionFrom(primary, u, v, f, qMin)
}

// companionFrom is Companion given its two uniform numbers u and v and the
// companion fraction f: a companion exists when u < f, with mass ratio
// qMin + v (1 − qMin). A caller that knows f lies in [fLo, fHi] may pass
// fLo whenever u < fLo or u ≥ fHi, which decides alike.
func companionFrom(primary, u, v, f, qMin float64) (massMsun float64, has bool) {
	if !(u < f) {
		return 0, false
	}
	qMin = min(max(qMin, 0), 1)
	q := qMin + v*(1-qMin)
	return q * primary, true
}

// binaryFractionCells brackets BinaryFraction on cells of mass 1/64 of an
// octave wide, from 2⁻⁵ to 2⁵ M☉, indexed by the bits of the mass as in
// Relations: the generator decides most companions from the bracket of
// the primary's cell and works the fraction out only when its uniform
// number falls inside it (a fraction of a per cent of stars).
const (
	fracCellShift = 52 - 6
	fracCellLo    = -5
	fracCells     = 10 << 6
)

var (
	fracCellBitsLo = math.Float64bits(math.Ldexp(1, fracCellLo))
	fracCellBounds = func() (b [fracCells][2]float64) {
		for i := range b {
			lo := math.Float64frombits(fracCellBitsLo + uint64(i)<<fracCellShift)
			hi := math.Float64frombits(fracCellBitsLo + uint64(i+1)<<fracCellShift)
			// BinaryFraction rises with mass; the margin covers its
			// rounding.
			b[i] = [2]float64{BinaryFraction(lo) - 1e-12, BinaryFraction(hi) + 1e-12}
		}
		return b
	}()
)

// binaryFractionBounds returns lo ≤ BinaryFraction(m) ≤ hi.
func binaryFractionBounds(m float64) (lo, hi float64) {
	if i := (math.Float64bits(m) - fracCellBitsLo) >> fracCellShift; m > 0 && i < fracCells {
		b := &fracCellBounds[i]
		return b[0], b[1]
	}
	return binaryFractionMin, binaryFractionMax
}

// binaryFractionRange returns the smallest and largest BinaryFraction.
func binaryFractionRange() (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, n := range binaryFractionNodes {
		lo, hi = min(lo, n.frac), max(hi, n.frac)
	}
	return lo, hi
}
