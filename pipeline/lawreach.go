package pipeline

import (
	"fmt"
	"math"

	"spinpop/assemble"
	"spinpop/compare"
	"spinpop/disk"
	"spinpop/model"
	"spinpop/model/spin"
)

// An empirical spin-down law gives no period to a star bluer than its
// calibrated colors (B−V 0.45 for Barnes 2007), but reddening carries such
// stars into redder observed colors, and a real catalog holds their
// periods: short ones, since those laws run to zero period at their color
// zero point c. A comparison whose bluest columns reach into that range
// sets a model without those stars against a catalog with them, and a fit
// then mimics them with what it may move — the catalog's color zero point
// above all, which moves every gyrochrone and with them the burst's age.
// In catalogs of another model that gives those stars periods
// (internal/othermodel), stars of one age 1.3 Gyr old had periods 0.11 dex
// shorter (median) than spinpop's in the column B−V 0.45–0.55 and within
// 0.03 dex of them from 0.55 on (docs/independent-check.md, "the colors
// the law does not cover").

// LawColorReach says how far reddening carries stars bluer than the law's
// calibrated colors into the compared range.
type LawColorReach struct {
	Law      string  `json:"law"`
	LawMinBV float64 `json:"law_min_b_v_mag"` // intrinsic: the bluest color the law gives a period
	// MaxEBV is the largest reddening in the field: at its far distance
	// limit, along its dustiest sight line.
	MaxEBV float64 `json:"max_e_b_v_mag"`
	// ReachBV is LawMinBV + MaxEBV through the survey's color calibration
	// (zero point and scale): the reddest catalog color at which a star
	// bluer than the law can appear; on a dereddened color axis
	// (compare.color_axis), the reddest column color, the reddening taken
	// out again.
	ReachBV  float64 `json:"reach_b_v_mag"`
	CutMinBV float64 `json:"cuts_b_v_min_mag"`
	// Masked says the color columns below the reach are left out
	// (compare.mask_blue_of_law); StarsBelow counts the catalog stars past
	// the cuts in them when they are, and those bluer than ReachBV when
	// they are not.
	Masked     bool `json:"masked"`
	StarsBelow int  `json:"catalog_stars_below_reach"`
	// ComparedFromBV is where the compared colors begin when the columns
	// below the reach are left out: the lower edge of the first column
	// kept.
	ComparedFromBV float64 `json:"compared_from_b_v_mag,omitempty"`
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
	return fmt.Sprintf("%d catalog stars lie in the color columns below B−V = %.3g, which reddening (up to E(B−V) = %.3f) can fill up to %.3f with stars bluer than law %q's calibrated colors (%.2f before reddening), which the model gives no period: those columns are left out, in data and model (compare.mask_blue_of_law)",
		r.StarsBelow, r.ComparedFromBV, r.MaxEBV, r.ReachBV, r.Law, r.LawMinBV)
}

// mask marks the cells of the color columns whose lower edge lies below
// the reach, and sets where the compared colors then begin.
func (r *LawColorReach) mask(sp compare.Space) []bool {
	out := make([]bool, sp.NumColorPeriod())
	np := sp.NumLogPeriod()
	r.ComparedFromBV = sp.ColorEdges[sp.NumColor()]
	for col := sp.NumColor() - 1; col >= 0; col-- {
		if sp.ColorEdges[col] >= r.ReachBV {
			r.ComparedFromBV = sp.ColorEdges[col]
			continue
		}
		for q := range np {
			out[col*np+q] = true
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
			if st.ColumnBV < r.ReachBV {
				r.StarsBelow++
			}
		}
	}
	return &r
}

// lawColorReach works out the reach for a comparison, at the scenario's
// values (a fit that moves the color calibration or the law's c moves the
// true reach with it; the columns left out are chosen once); nil when the
// law has no calibrated color range.
func (c *Comparison) lawColorReach() (*LawColorReach, error) {
	lo, _, ok := spin.CalibratedColors(c.Built.Law)
	if !ok {
		return nil, nil
	}
	s := c.Scenario
	maxAV := 0.0
	if dust := c.Built.Population.Dust; dust != nil {
		field, err := assemble.Field(s)
		if err != nil {
			return nil, err
		}
		for _, span := range field.LatitudeSpans() {
			maxAV = math.Max(maxAV, maxAlong(span, func(bDeg float64) float64 {
				d := span.MaxDistPc
				return dust(d, c.Built.Sun.ZPc+d*math.Sin(bDeg*math.Pi/180))
			}))
		}
	}
	r := &LawColorReach{Law: s.Spin.Law, LawMinBV: lo, MaxEBV: maxAV * model.EBVPerAV, CutMinBV: s.Cuts.BVMin}
	// The catalog's color of a star at the law's edge reddened the most,
	// through the survey's color calibration (zero point and scale).
	cal := c.Built.Population.Survey.Color
	r.ReachBV = cal.Apply(lo + r.MaxEBV)
	if c.Space.Dereddened {
		// Apply(lo + E) − E is linear in E: its largest value lies at
		// one end of [0, MaxEBV].
		r.ReachBV = math.Max(cal.Apply(lo), cal.Apply(lo+r.MaxEBV)-r.MaxEBV)
	}
	return r, nil
}

// maxAlong returns the largest of f over the latitudes of r, scanned every
// 0.05° with both ends. The extinction to a fixed distance peaks not in
// the plane but where the sight line, starting at the Sun's height, runs
// longest near the midplane (slightly below it for a Sun above it), so
// the ends of the span alone do not bound it.
func maxAlong(r disk.LatitudeSpan, f func(bDeg float64) float64) float64 {
	n := int(math.Ceil((r.HiDeg-r.LoDeg)/0.05)) + 1
	best := math.Max(f(r.LoDeg), f(r.HiDeg))
	for i := 1; i < n-1; i++ {
		best = math.Max(best, f(r.LoDeg+(r.HiDeg-r.LoDeg)*float64(i)/float64(n-1)))
	}
	return best
}
