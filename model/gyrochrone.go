package model

import (
	"math"

	"spinpop/model/spin"
)

// Gyrochrone is one isochrone in the period–color plane: the rotation
// period of single main-sequence stars of one age against color.
type Gyrochrone struct {
	AgeGyr   float64
	BV       []float64
	MassMsun []float64
	PeriodD  []float64 // NaN where the law has no calibrated period
}

// GyrochronePeriod returns the period a law gives a typical star: a law
// with a random initial state says which star is typical (spin.Typical);
// the others are deterministic; a law with intrinsic scatter
// (spin.Scattered) is drawn without it, at its median.
func GyrochronePeriod(law spin.Law, s spin.Star) (float64, bool) {
	for {
		u, ok := law.(interface{ Unwrap() spin.Law })
		if !ok {
			break
		}
		law = u.Unwrap()
	}
	if t, ok := law.(spin.Typical); ok {
		return t.TypicalPeriod(s)
	}
	// Laws without a random initial state ignore the stream.
	return law.Period(s, ChunkStream(0, 0))
}

// Gyrochrones tabulates the law at each age on n colors spanning
// [bvMin, bvMax], using the main-sequence relations for mass and T_eff.
func Gyrochrones(law spin.Law, rel *Relations, agesGyr []float64, bvMin, bvMax float64, n int) []Gyrochrone {
	lo, hi := rel.BVRange()
	bvMin, bvMax = max(bvMin, lo), min(bvMax, hi)
	out := make([]Gyrochrone, 0, len(agesGyr))
	for _, age := range agesGyr {
		g := Gyrochrone{AgeGyr: age}
		for i := range n {
			bv := bvMin + (bvMax-bvMin)*float64(i)/float64(max(n-1, 1))
			m, ok := rel.MassFromBV(bv)
			if !ok {
				continue
			}
			pt, _ := rel.At(m)
			p, ok := GyrochronePeriod(law, spin.Star{MassMsun: m, AgeGyr: age, BV: bv, TeffK: pt.TeffK})
			if !ok {
				p = math.NaN()
			}
			g.BV = append(g.BV, bv)
			g.MassMsun = append(g.MassMsun, m)
			g.PeriodD = append(g.PeriodD, p)
		}
		out = append(out, g)
	}
	return out
}
