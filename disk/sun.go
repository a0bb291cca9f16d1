package disk

import (
	"fmt"
	"math"
)

// Sun is the Sun's place in the Galaxy: RKpc is its distance from the
// Galactic centre (astropy's galcen_distance: the 3D distance, though it
// differs from the in-plane radius by only a few parts in 10⁶), ZPc its
// height above the midplane.
type Sun struct {
	RKpc float64
	ZPc  float64
}

// DefaultSun returns R0 = 8.122 kpc and z☉ = 20.8 pc [memory]; both are
// astropy's defaults for its Galactocentric frame, from the interferometric
// orbit of the star closest to the central black hole and from star counts.
func DefaultSun() Sun { return Sun{RKpc: 8.122, ZPc: 20.8} }

// Validate reports whether the Sun sits at a positive distance from the
// centre and at a height well inside it.
func (s Sun) Validate() error {
	if !(s.RKpc > 0) || math.IsInf(s.RKpc, 0) {
		return fmt.Errorf("disk: Sun RKpc = %v kpc; want a positive, finite Galactocentric distance (≈ 8.1 kpc)", s.RKpc)
	}
	if math.IsNaN(s.ZPc) || math.Abs(s.ZPc) >= 1000*s.RKpc {
		return fmt.Errorf("disk: Sun ZPc = %v pc; want a finite height smaller than the Galactocentric distance (≈ 20 pc)", s.ZPc)
	}
	return nil
}
