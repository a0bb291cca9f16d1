package spin

import (
	"fmt"
	"math"
	"strings"
)

// TurnoverTime selects a prescription for the convective turnover time τ_c,
// the clock against which rotation is measured: the Rossby number
// Ro = P/τ_c orders magnetic activity, spot amplitude and wind braking
// across masses far better than the period alone.
//
// The two scales differ by ~10 % for the Sun, so a Rossby number is only
// meaningful together with the scale it was computed in.
type TurnoverTime int

const (
	// CranmerSaar2011 is the fit of Cranmer & Saar (2011, ApJ 741, 54) in
	// effective temperature, τ_c = 314.24 exp[−T/1952.5 K − (T/6250 K)^18]
	// + 0.002 d [memory], valid for 3300 K ≤ T_eff ≤ 7000 K [memory].
	CranmerSaar2011 TurnoverTime = iota + 1
	// Wright2018 is the fit of Wright et al. (2018, MNRAS 479, 2351) in
	// mass, log10 τ_c = 2.33 − 1.50 m + 0.31 m² [memory], valid for
	// 0.08 ≤ m ≤ 1.36 M☉ [memory].
	Wright2018
)

// Validity ranges of the turnover fits. [memory]: recalled, not read.
const (
	csMinTeffK    = 3300.0 // [memory]
	csMaxTeffK    = 7000.0 // [memory]
	wrightMinMsun = 0.08   // [memory]
	wrightMaxMsun = 1.36   // [memory]
	solarTeffK    = 5772.0 // IAU 2015 Resolution B3 nominal solar T_eff
	solarMassMsun = 1.0
)

var turnoverNames = [...]string{CranmerSaar2011: "cranmer-saar2011", Wright2018: "wright2018"}

// TurnoverNames lists the names TurnoverByName accepts.
func TurnoverNames() []string {
	return []string{turnoverNames[CranmerSaar2011], turnoverNames[Wright2018]}
}

// TurnoverByName returns the prescription with the given scenario name.
func TurnoverByName(name string) (TurnoverTime, error) {
	for t := CranmerSaar2011; t <= Wright2018; t++ {
		if strings.EqualFold(name, turnoverNames[t]) {
			return t, nil
		}
	}
	return 0, fmt.Errorf("spin: unknown turnover time %q; use one of %q", name, TurnoverNames())
}

// Name returns the scenario name of the prescription.
func (t TurnoverTime) Name() string {
	if t < CranmerSaar2011 || t > Wright2018 {
		return fmt.Sprintf("TurnoverTime(%d)", int(t))
	}
	return turnoverNames[t]
}

// String implements fmt.Stringer.
func (t TurnoverTime) String() string { return t.Name() }

// Valid reports whether t is one of the known prescriptions.
func (t TurnoverTime) Valid() bool { return t == CranmerSaar2011 || t == Wright2018 }

// Days returns τ_c in days for the star. Cranmer & Saar (2011) reads
// s.TeffK, Wright et al. (2018) reads s.MassMsun. ok is false, and τ_c NaN,
// outside the fit's range or for an unknown prescription.
func (t TurnoverTime) Days(s Star) (tauD float64, ok bool) {
	switch t {
	case CranmerSaar2011:
		if !(s.TeffK >= csMinTeffK && s.TeffK <= csMaxTeffK) {
			return math.NaN(), false
		}
		return CranmerSaar2011Days(s.TeffK), true
	case Wright2018:
		if !(s.MassMsun >= wrightMinMsun && s.MassMsun <= wrightMaxMsun) {
			return math.NaN(), false
		}
		return Wright2018Days(s.MassMsun), true
	}
	return math.NaN(), false
}

// Rossby returns Ro = P/τ_c for a period in days.
func (t TurnoverTime) Rossby(periodD float64, s Star) (ro float64, ok bool) {
	tau, ok := t.Days(s)
	if !ok || !(periodD > 0) {
		return math.NaN(), false
	}
	return periodD / tau, true
}

// Solar returns τ_c of the Sun in this prescription (T_eff = 5772 K for
// Cranmer & Saar, 1 M☉ for Wright et al.).
// It is worked out once per prescription: per-star code (the search
// completeness) reads it for every detected star.
func (t TurnoverTime) Solar() float64 {
	if t.Valid() {
		return solarTauD[t]
	}
	return math.NaN()
}

// solarTauD holds Solar for each prescription, indexed by TurnoverTime.
var solarTauD = func() (out [Wright2018 + 1]float64) {
	for t := CranmerSaar2011; t <= Wright2018; t++ {
		out[t], _ = t.Days(Star{MassMsun: solarMassMsun, TeffK: solarTeffK})
	}
	return out
}()

// CranmerSaar2011Days evaluates the Cranmer & Saar (2011) fit at teffK
// without range checks: τ_c = 314.24 exp[−T/1952.5 − (T/6250)^18] + 0.002 d.
// The (T/6250)^18 term makes τ_c collapse above ~6250 K, where convective
// envelopes become thin.
func CranmerSaar2011Days(teffK float64) float64 {
	x := teffK / 6250
	x2 := x * x
	x6 := x2 * x2 * x2
	x18 := x6 * x6 * x6
	return 314.24*math.Exp(-teffK/1952.5-x18) + 0.002
}

// Wright2018Days evaluates the Wright et al. (2018) fit at massMsun
// without range checks: log10 τ_c = 2.33 − 1.50 m + 0.31 m².
func Wright2018Days(massMsun float64) float64 {
	m := massMsun
	return math.Exp(math.Ln10 * (2.33 - 1.50*m + 0.31*m*m))
}
