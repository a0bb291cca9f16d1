package spots

import (
	"math/rand/v2"
	"testing"
)

var sink float64

func BenchmarkAmplitudeAndDetection(b *testing.B) {
	a, d := DefaultAmplitudeModel(), DefaultDetection()
	r := rand.New(rand.NewPCG(1, 2))
	b.ReportAllocs()
	for i := 0; b.Loop(); i++ {
		ro := 0.05 + 0.05*float64(i%50)
		sink += d.Probability(a.Draw(ro, r), 10+0.1*float64(i%80), 2+float64(i%25))
	}
}

func BenchmarkNoisePpmPerCadence(b *testing.B) {
	n := DefaultNoiseModel()
	for i := 0; b.Loop(); i++ {
		sink += n.PpmPerCadence(10 + 0.1*float64(i%80))
	}
}

func BenchmarkRecover(b *testing.B) {
	o := DefaultRecoveryOptions()
	r := rand.New(rand.NewPCG(1, 2))
	b.ReportAllocs()
	for i := 0; b.Loop(); i++ {
		p, _ := Recover(1+float64(i%30), r, o)
		sink += p
	}
}
