package pipeline

import (
	"fmt"
	"math"

	"spinpop/compare"
	"spinpop/model/spin"
	"spinpop/scenarios"
)

// An empirical spin-down law gives no period to a star bluer than its
// calibrated colors (B−V 0.45 for Barnes 2007), but reddening carries such
// stars into redder observed colors, and a real catalog holds their
// periods: short ones, since those laws run to zero period at their color
// zero point c. A comparison whose bluest columns reach into that range
// sets a model without those stars against a catalog with them, and a fit
// then mimics them with what it may move — the catalog's color zero point
// above all, which moves every gyrochrone and with them the burst's age.
// On catalogs of another model that gives those stars periods
// (internal/othermodel) the color zero point was fitted 0.07 mag off with
// bursts up to 0.3 Gyr too old, and 0.03 mag off with the blue columns left
// out (README, "Can the verdict be trusted?").

// LawColorReach says how far reddening carries stars bluer than the law's
// calibrated colors into the compared range.
type LawColorReach struct {
	Law      string  `json:"law"`
	LawMinBV float64 `json:"law_min_b_v_mag"` // intrinsic: the bluest color the law gives a period
	// MaxEBV is the largest reddening in the field: at its far distance
	// limit, along its sight line nearest the plane.
	MaxEBV float64 `json:"max_e_b_v_mag"`
	// ReachBV = LawMinBV + MaxEBV + survey.color_offset_mag: the reddest
	// catalog color at which a star bluer than the law can appear.
	ReachBV  float64 `json:"reach_b_v_mag"`
	CutMinBV float64 `json:"cuts_b_v_min_mag"`
	// Masked says the color columns below the reach are left out
	// (compare.mask_blue_of_law); StarsBelow counts the catalog stars past
	// the cuts in them when they are, and those bluer than ReachBV when
	// they are not.
	Masked     bool `json:"masked"`
	StarsBelow int  `json:"catalog_stars_below_reach"`
}

// Exposed reports whether the compared colors begin below the reach, so
// that the bluest columns may hold stars the model cannot make.
func (r *LawColorReach) Exposed() bool { return r != nil && r.CutMinBV < r.ReachBV }

// Warning is the plain-words caution for an exposed comparison that does
// not leave those colors out ("" otherwise).
func (r *LawColorReach) Warning() string {
	if !r.Exposed() || r.Masked {
		return ""
	}
	return fmt.Sprintf("the compared colors begin at B−V = %.2f (cuts.b_v_min), but reddening in this field (up to E(B−V) = %.3f) carries stars bluer than law %q's calibrated colors (B−V ≥ %.2f before reddening) up to B−V = %.3f: the model gives them no period, a real catalog holds theirs. %d catalog stars are bluer than %.3f; a fit may shift the color zero point or the burst's age to mimic them. Set compare.mask_blue_of_law = true to leave out the color columns they can reach, or cuts.b_v_min = %.2f",
		r.CutMinBV, r.MaxEBV, r.Law, r.LawMinBV, r.ReachBV, r.StarsBelow, r.ReachBV, math.Ceil(r.ReachBV*100-1e-9)/100)
}

// Note is the line that says which colors a comparison with
// compare.mask_blue_of_law leaves out ("" when it leaves none).
func (r *LawColorReach) Note() string {
	if !r.Exposed() || !r.Masked {
		return ""
	}
	return fmt.Sprintf("%d catalog stars lie in color columns bluer than B−V = %.3f, where reddening (up to E(B−V) = %.3f) brings stars bluer than law %q's calibrated colors (%.2f), which the model gives no period (compare.mask_blue_of_law): those columns are left out, in data and model",
		r.StarsBelow, r.ReachBV, r.MaxEBV, r.Law, r.LawMinBV)
}

// mask marks the cells of the color columns whose lower edge lies below
// the reach.
func (r *LawColorReach) mask(sp compare.Space) []bool {
	out := make([]bool, sp.NumColorPeriod())
	np := sp.NumLogPeriod()
	for col := range sp.NumColor() {
		if sp.ColorEdges[col] < r.ReachBV {
			for q := range np {
				out[col*np+q] = true
			}
		}
	}
	return out
}

// withCatalog returns a copy of r that counts the stars of obs bluer than
// the reach, or masked, those its columns left out.
func (r LawColorReach) withCatalog(obs *compare.Observed, masked bool, left int) *LawColorReach {
	r.Masked, r.StarsBelow = masked, left
	if !masked {
		for _, st := range obs.Stars {
			if st.BV < r.ReachBV {
				r.StarsBelow++
			}
		}
	}
	return &r
}

// lawColorReach works out the reach for a comparison; nil when the law has
// no calibrated color range.
func (c *Comparison) lawColorReach() *LawColorReach {
	lo, _, ok := spin.CalibratedColors(c.Built.Law)
	if !ok {
		return nil
	}
	s := c.Scenario
	maxAV := 0.0
	if dust := c.Built.Population.Dust; dust != nil {
		for _, sight := range fieldSightLines(s.Survey.Field) {
			d := sight.maxDistPc
			z := c.Built.Sun.ZPc + d*math.Sin(sight.bDeg*math.Pi/180)
			maxAV = math.Max(maxAV, dust(d, z))
		}
	}
	r := &LawColorReach{Law: s.Spin.Law, LawMinBV: lo, MaxEBV: maxAV / 3.1, CutMinBV: s.Cuts.BVMin}
	r.ReachBV = lo + r.MaxEBV + s.Survey.ColorOffsetMag
	return r
}

// sightLine is a latitude and the far distance limit along it.
type sightLine struct{ bDeg, maxDistPc float64 }

// fieldSightLines returns, for each cone of a field (or the whole sky), the
// latitudes that bound it — its edges nearest and farthest from the plane,
// and the plane itself when it crosses it — with the cone's distance
// limit: a plane-parallel dust layer reddens most along one of them.
func fieldSightLines(f scenarios.Field) []sightLine {
	cone := func(b, r, dMax float64) []sightLine {
		lo, hi := math.Max(b-r, -90), math.Min(b+r, 90)
		out := []sightLine{{lo, dMax}, {hi, dMax}}
		if lo < 0 && hi > 0 {
			out = append(out, sightLine{0, dMax})
		}
		return out
	}
	switch f.Kind {
	case "sphere":
		return cone(0, 90, f.DistanceMaxPc)
	case "cones":
		var out []sightLine
		for _, c := range f.Cones {
			out = append(out, cone(c.BDeg, c.RadiusDeg, c.DistanceMaxPc)...)
		}
		return out
	}
	return cone(f.BDeg, f.RadiusDeg, f.DistanceMaxPc)
}
