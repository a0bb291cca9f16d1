package disk

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// cellHas reports whether the unit vector v lies in cell c, from the cell's
// own frame (test helper, independent of how cells draw directions).
func cellHas(c *Cell, v vec3) bool {
	cr := v.dot(c.pole)
	if cr < c.cMin-1e-12 || cr > c.cMax+1e-12 {
		return false
	}
	phi := math.Atan2(v.dot(c.e2), v.dot(c.e1))
	if phi < 0 {
		phi += 2 * math.Pi
	}
	return phi >= c.phi1-1e-12 && phi <= c.phi2+1e-12
}

func testFields() map[string]Field {
	return map[string]Field{
		"sphere":       Sphere{RadiusPc: 1000, DistMinPc: 50},
		"cone":         Cone{LDeg: 76, BDeg: 13.5, RadiusDeg: 8, DistMinPc: 100, DistMaxPc: 3000},
		"polar cone":   Cone{LDeg: 10, BDeg: 90, RadiusDeg: 3, DistMaxPc: 2000},
		"wide cone":    Cone{LDeg: 200, BDeg: -40, RadiusDeg: 120, DistMaxPc: 300},
		"all-sky cone": Cone{LDeg: 0, BDeg: 0, RadiusDeg: 180, DistMaxPc: 200},
		"cone list": ConeList{
			{LDeg: 30, BDeg: 5, RadiusDeg: 4, DistMaxPc: 1500},
			{LDeg: 30, BDeg: 5, RadiusDeg: 4, DistMinPc: 1500, DistMaxPc: 2500},
			{LDeg: 300, BDeg: -60, RadiusDeg: 10, DistMaxPc: 800},
		},
	}
}

func TestFieldCellsTile(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	for name, f := range testFields() {
		require.NoError(t, f.Validate(), name)
		cells := f.Cells(10)
		require.NotEmpty(t, cells, name)
		omega := 0.0
		for i := range cells {
			omega += cells[i].SolidAngleSr()
		}
		// A ConeList counts a direction once per distance range.
		assert.InEpsilon(t, f.SolidAngleSr(), omega, 1e-9, name)

		// Directions drawn in a cell lie in the field, in that cell only,
		// and within the cell's sin b bounds.
		for range 3000 {
			i := rng.IntN(len(cells))
			c := &cells[i]
			v := c.direction(rng.Float64(), rng.Float64())
			assert.InDelta(t, 1, v.norm(), 1e-12)
			l, b, _ := GalacticFromHelio(v.x, v.y, v.z)
			lo, hi := c.DistRangePc()
			d := lo + (hi-lo)*rng.Float64()
			assert.True(t, f.Contains(l, b, d), "%s: cell %d drew (%v, %v, %v) outside the field", name, i, l, b, d)
			sLo, sHi := c.SinBRange()
			assert.True(t, v.z >= sLo-1e-12 && v.z <= sHi+1e-12, "%s: sin b %v outside [%v, %v]", name, v.z, sLo, sHi)
			n := 0
			for j := range cells {
				dl, dh := cells[j].DistRangePc()
				if d >= dl && d <= dh && cellHas(&cells[j], v) {
					n++
				}
			}
			// On a shared edge a point may count twice; interiors never.
			assert.GreaterOrEqual(t, n, 1)
			assert.LessOrEqual(t, n, 2)
		}
	}
}

func TestFieldCellSize(t *testing.T) {
	// At the largest distance, heights vary by about cellDzPc across a cell:
	// the span of sin b times d_max, within the circumradius bound (√2 for
	// ring sectors, exact for strips).
	for name, f := range testFields() {
		for _, c := range f.Cells(5) {
			lo, hi := c.SinBRange()
			_, dMax := c.DistRangePc()
			assert.LessOrEqual(t, (hi-lo)*dMax, 2*math.Sqrt2*5+1e-9, name)
		}
	}
	s := Sphere{RadiusPc: 1000}
	assert.Len(t, s.Cells(5), 400)
}

func TestFieldVolume(t *testing.T) {
	// Monte Carlo volume of each field: uniform points in a cube of side
	// 2 d_max, the fraction that Contains keeps. Common practice, no source.
	rng := rand.New(rand.NewPCG(7, 8))
	for name, f := range testFields() {
		dMax := 0.0
		for _, c := range f.Cells(50) {
			_, hi := c.DistRangePc()
			dMax = math.Max(dMax, hi)
		}
		const n = 200000
		hit := 0
		for range n {
			x := dMax * (2*rng.Float64() - 1)
			y := dMax * (2*rng.Float64() - 1)
			z := dMax * (2*rng.Float64() - 1)
			l, b, d := GalacticFromHelio(x, y, z)
			if f.Contains(l, b, d) {
				hit++
			}
		}
		box := 8 * dMax * dMax * dMax
		p := float64(hit) / n
		se := box * math.Sqrt(p*(1-p)/n)
		assert.InDelta(t, f.VolumePc3(), box*p, 4*se+1e-9*box, name)
	}
	assert.InEpsilon(t, 4*math.Pi/3*(1e9-125e3), Sphere{RadiusPc: 1000, DistMinPc: 50}.VolumePc3(), 1e-12)
}

func TestFieldValidate(t *testing.T) {
	for _, c := range []struct {
		f    Field
		want string
	}{
		{Sphere{RadiusPc: -1}, "RadiusPc"},
		{Sphere{RadiusPc: 100, DistMinPc: 100}, "DistMinPc"},
		{Cone{LDeg: 0, BDeg: 91, RadiusDeg: 1, DistMaxPc: 100}, "BDeg"},
		{Cone{LDeg: 0, BDeg: 0, RadiusDeg: 0, DistMaxPc: 100}, "RadiusDeg"},
		{Cone{LDeg: 0, BDeg: 0, RadiusDeg: 181, DistMaxPc: 100}, "RadiusDeg"},
		{Cone{LDeg: math.Inf(1), BDeg: 0, RadiusDeg: 1, DistMaxPc: 100}, "LDeg"},
		{Cone{LDeg: 0, BDeg: 0, RadiusDeg: 1, DistMaxPc: 0}, "DistMaxPc"},
		{Cone{LDeg: 0, BDeg: 0, RadiusDeg: 1, DistMinPc: 200, DistMaxPc: 100}, "DistMinPc"},
		{ConeList{}, "empty"},
		{ConeList{{LDeg: 0, BDeg: 0, RadiusDeg: 1, DistMaxPc: 100}, {LDeg: 1, BDeg: 0, RadiusDeg: 1, DistMaxPc: 100}}, "overlap"},
		{ConeList{{LDeg: 0, BDeg: 0, RadiusDeg: 1, DistMaxPc: 100}, {LDeg: 0, BDeg: 0, RadiusDeg: -1, DistMaxPc: 100}}, "cone 1"},
	} {
		assert.ErrorContains(t, c.f.Validate(), c.want, "%#v", c.f)
	}
	// Same directions, disjoint distances: allowed.
	assert.NoError(t, ConeList{{LDeg: 0, BDeg: 0, RadiusDeg: 1, DistMaxPc: 100}, {LDeg: 0, BDeg: 0, RadiusDeg: 1, DistMinPc: 100, DistMaxPc: 200}}.Validate())
}
