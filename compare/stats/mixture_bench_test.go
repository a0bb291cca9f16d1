package stats

import (
	"math/rand/v2"
	"testing"
)

// benchMixture builds a random mixture problem of nTemplates × nBins with
// the given fraction of empty data bins. With emptyFrac = 0 every bin needs
// its logarithm, the worst case.
func benchMixture(nTemplates, nBins int, emptyFrac float64) (w, t, n []float64) {
	r := rand.New(rand.NewPCG(1, 2))
	w = make([]float64, nTemplates)
	for k := range w {
		w[k] = 0.5 + r.Float64()
	}
	t = make([]float64, nTemplates*nBins)
	for i := range t {
		t[i] = 0.1 + r.Float64()
	}
	n = make([]float64, nBins)
	for i := range n {
		if r.Float64() >= emptyFrac {
			n[i] = float64(1 + r.IntN(40))
		}
	}
	return w, t, n
}

func BenchmarkMixtureLogLGrad40x2500(b *testing.B) {
	w, t, n := benchMixture(40, 2500, 0)
	grad := make([]float64, len(w))
	b.ReportAllocs()
	for b.Loop() {
		MixtureLogLGrad(grad, w, t, n)
	}
}

func BenchmarkMixtureLogL40x2500(b *testing.B) {
	w, t, n := benchMixture(40, 2500, 0)
	b.ReportAllocs()
	for b.Loop() {
		MixtureLogL(w, t, n)
	}
}

func BenchmarkMixturePreparedLogLGrad40x2500(b *testing.B) {
	w, t, n := benchMixture(40, 2500, 0)
	m := NewMixture(t, len(w), n)
	grad := make([]float64, len(w))
	b.ReportAllocs()
	for b.Loop() {
		m.LogLGrad(grad, w)
	}
}

func BenchmarkMixturePreparedLogLGrad40x2500HalfEmpty(b *testing.B) {
	w, t, n := benchMixture(40, 2500, 0.5)
	m := NewMixture(t, len(w), n)
	grad := make([]float64, len(w))
	b.ReportAllocs()
	for b.Loop() {
		m.LogLGrad(grad, w)
	}
}

// BenchmarkMixtureLogLGrad40x2500GoKernels measures the path taken on
// processors without AVX2 and FMA.
func BenchmarkMixtureLogLGrad40x2500GoKernels(b *testing.B) {
	saved := useAsmKernels
	useAsmKernels = false
	defer func() { useAsmKernels = saved }()
	w, t, n := benchMixture(40, 2500, 0)
	grad := make([]float64, len(w))
	b.ReportAllocs()
	for b.Loop() {
		MixtureLogLGrad(grad, w, t, n)
	}
}
