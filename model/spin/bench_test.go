package spin

import (
	"math/rand/v2"
	"testing"
)

var sinkP float64

func benchLaw(b *testing.B, law Law) {
	r := rand.New(rand.NewPCG(1, 2))
	s := Star{MassMsun: 0.8, BV: 0.9, TeffK: 5000}
	b.ReportAllocs()
	for i := 0; b.Loop(); i++ {
		s.AgeGyr = 0.2 + float64(i%64)*0.1
		p, _ := law.Period(s, r)
		sinkP += p
	}
}

func BenchmarkBarnes2007Period(b *testing.B)  { benchLaw(b, Barnes2007()) }
func BenchmarkMamajek2008Period(b *testing.B) { benchLaw(b, MamajekHillenbrand2008()) }
func BenchmarkAngus2015Period(b *testing.B)   { benchLaw(b, Angus2015()) }

func BenchmarkTorquePeriod(b *testing.B) { benchLaw(b, defaultTorque(b, nil)) }

func BenchmarkTorquePeriodWeakenedStall(b *testing.B) {
	benchLaw(b, defaultTorque(b, func(o *TorqueOptions) {
		o.RoCritOverSolar = 1.1
		o.Stall.Enabled = true
	}))
}

// BenchmarkNewTorqueLawStall measures construction (validation plus the
// calibration root finding) of the law with weakened braking and stall;
// the stall needs no grid, so this is the whole set-up cost.
func BenchmarkNewTorqueLawStall(b *testing.B) {
	o := DefaultTorqueOptions()
	o.RoCritOverSolar = 1.1
	o.Stall.Enabled = true
	b.ReportAllocs()
	for b.Loop() {
		if _, err := NewTorqueLaw(o); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkRossbyWright2018(b *testing.B) {
	s := Star{MassMsun: 0.8}
	for i := 0; b.Loop(); i++ {
		ro, _ := Wright2018.Rossby(10+float64(i%16), s)
		sinkP += ro
	}
}

func BenchmarkRossbyCranmerSaar2011(b *testing.B) {
	s := Star{TeffK: 5000}
	for i := 0; b.Loop(); i++ {
		ro, _ := CranmerSaar2011.Rossby(10+float64(i%16), s)
		sinkP += ro
	}
}
