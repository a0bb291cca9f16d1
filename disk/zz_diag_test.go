package disk

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
)

func baseLike(tb testing.TB) *Sampler {
	edges := make([]float64, 41)
	for i := 0; i <= 20; i++ {
		edges[i] = float64(i) / 20
	}
	for i := 1; i < 20; i++ {
		edges[20+i] = math.Round(math.Pow(10, float64(i)/20)*1e6) / 1e6
	}
	edges[40] = 10
	avr := AVR{Sigma10Kms: 25, Tau1Gyr: 0.5, Beta: 0.45}
	mixes := make([]Mixture, 40)
	for k := range mixes {
		m, err := avr.BinMixture(edges[k], edges[k+1], 4)
		if err != nil {
			tb.Fatal(err)
		}
		mixes[k] = m
	}
	s, err := NewMixtureSampler(Cone{LDeg: 58, BDeg: 21, RadiusDeg: 11, DistMaxPc: 1500}, Sun{RKpc: 8.122, ZPc: 20.8},
		Sheet{SheetSigmaKms: 20, SurfaceDensityMsunPc2: 70}, Radial{ScaleLengthKpc: 2.6}, mixes, SamplerOptions{})
	if err != nil {
		tb.Fatal(err)
	}
	return s
}

func TestZZDiag(t *testing.T) {
	s := baseLike(t)
	dz, sh := s.BlockSizePc()
	fmt.Println("cells", len(s.cells), "blocks", len(s.blocks), "classes", len(s.classVolPc3), "zstep", s.zStepPc, "dz", dz, "shell", sh, "radialMax", s.radialMax)
	r := rand.New(rand.NewPCG(1, 2))
	for _, k := range []int{0, 5, 10, 20, 30, 39} {
		n, acc := 0, 0
		for range 100000 {
			_, _, _, _, ok := s.Draw(k, r)
			n++
			if ok {
				acc++
			}
		}
		sq := 0.0
		fmt.Printf("bin %d eff %.3f radialAcc %.3f mean squeeze %.3f\n", k, s.ProposalEfficiency(k), float64(acc)/float64(n), sq/float64(len(s.blocks)))
	}
}

func BenchmarkZZDrawRandomBin(b *testing.B) {
	s := baseLike(b)
	r := rand.New(rand.NewPCG(1, 2))
	for b.Loop() {
		s.Draw(r.IntN(40), r)
	}
}

func BenchmarkZZDrawOneBin(b *testing.B) {
	s := baseLike(b)
	r := rand.New(rand.NewPCG(1, 2))
	for b.Loop() {
		s.Draw(5, r)
	}
}

func BenchmarkZZDrawTinyTables(b *testing.B) {
	s, err := NewSampler(Cone{LDeg: 58, BDeg: 21, RadiusDeg: 11, DistMaxPc: 1500}, Sun{RKpc: 8.122, ZPc: 20.8},
		Sheet{SheetSigmaKms: 20, SurfaceDensityMsunPc2: 70}, Radial{ScaleLengthKpc: 2.6}, []float64{20}, SamplerOptions{MaxBlocks: 300})
	if err != nil {
		b.Fatal(err)
	}
	fmt.Println("blocks", len(s.blocks), "eff", s.ProposalEfficiency(0))
	r := rand.New(rand.NewPCG(1, 2))
	for b.Loop() {
		s.Draw(0, r)
	}
}
