package sfh_test

import (
	"testing"

	"spinpop/sfh"
)

func benchHistories(b *testing.B) map[string]*sfh.History {
	b.Helper()
	noDip := mix1()[:3]
	return map[string]*sfh.History{
		"smooth+burst": mustNew(b, noDip),
		"with-dips":    mustNew(b, mix2()),
	}
}

var sink float64

func BenchmarkSample(b *testing.B) {
	for name, h := range benchHistories(b) {
		b.Run(name, func(b *testing.B) {
			r := newRand(1)
			for b.Loop() {
				sink += h.Sample(r)
			}
		})
	}
}

func BenchmarkRangeSamplerSample(b *testing.B) {
	for name, h := range benchHistories(b) {
		s, err := h.RangeSampler(1.8, 2.4)
		if err != nil {
			b.Fatal(err)
		}
		b.Run(name, func(b *testing.B) {
			r := newRand(1)
			for b.Loop() {
				sink += s.Sample(r)
			}
		})
	}
}

func BenchmarkSampleInRange(b *testing.B) {
	for name, h := range benchHistories(b) {
		b.Run(name, func(b *testing.B) {
			r := newRand(1)
			for b.Loop() {
				sink += h.SampleInRange(r, 1.8, 2.4)
			}
		})
	}
}

func BenchmarkBinWeights40(b *testing.B) {
	edges := make([]float64, 41)
	for i := range edges {
		edges[i] = maxAge * float64(i) / 40
	}
	for name, h := range benchHistories(b) {
		b.Run(name, func(b *testing.B) {
			for b.Loop() {
				sink += h.BinWeights(edges)[0]
			}
		})
		b.Run(name+"/To", func(b *testing.B) {
			dst := make([]float64, 40)
			for b.Loop() {
				sink += h.BinWeightsTo(dst, edges)[0]
			}
		})
	}
}

func BenchmarkNew(b *testing.B) {
	for b.Loop() {
		if _, err := sfh.New(maxAge, mix2()); err != nil {
			b.Fatal(err)
		}
	}
}
