package compare

import (
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/stat/distuv"

	"spinpop/model"
)

// drawLikeMock fills dst with a mock catalog for like's normalisation: with
// one free scale per color column (cell), a multinomial within each group
// holding the data's count of the group, as the likelihood conditions on
// them; otherwise drawMock.
func drawLikeMock(dst, mu []float64, like *Likelihood, r *rand.Rand) {
	group, nG := like.groups()
	if group == nil || !like.free {
		drawMock(dst, mu, int(math.Round(like.N())), like.free, r)
		return
	}
	idx := make([][]int, len(nG))
	for i, g := range group {
		idx[g] = append(idx[g], i)
	}
	var sub, subMu []float64
	for g, bins := range idx {
		sub, subMu = sub[:0], subMu[:0]
		for _, i := range bins {
			subMu = append(subMu, mu[i])
			sub = append(sub, 0)
		}
		drawMock(sub, subMu, int(math.Round(nG[g])), true, r)
		for j, i := range bins {
			dst[i] = sub[j]
		}
	}
}

// drawMock fills dst with a mock catalog's counts: for a free
// normalisation a multinomial draw of n stars over the bins with
// probabilities ∝ mu (the catalog size is fixed, as the free
// normalisation conditions on it), by successive conditional binomials;
// for an absolute one, independent Poisson counts of mean mu.
func drawMock(dst, mu []float64, n int, free bool, r *rand.Rand) {
	if !free {
		for i, m := range mu {
			dst[i] = 0
			if m > 0 {
				dst[i] = distuv.Poisson{Lambda: m, Src: r}.Rand()
			}
		}
		return
	}
	var rest float64
	for _, m := range mu {
		rest += m
	}
	left := n
	for i, m := range mu {
		dst[i] = 0
		if left == 0 || !(m > 0) {
			rest -= math.Max(m, 0)
			continue
		}
		p := m / rest
		if p >= 1 || i == len(mu)-1 {
			dst[i] = float64(left)
			left = 0
			continue
		}
		k := distuv.Binomial{N: float64(left), P: p, Src: r}.Rand()
		dst[i] = k
		left -= int(k)
		rest -= m
	}
}

// replicateStream is the random stream of bootstrap or mock replicate i
// of a run seeded with seed: like model.ChunkStream, a function of
// (seed, i) only, so results do not depend on the number of workers.
func replicateStream(seed uint64, i int) *rand.Rand {
	// A different seed from the run's own chunk streams, so replicates
	// never reuse the numbers that made the templates.
	return model.ChunkStream(seed^0x243f6a8885a308d3, i)
}

// Asimov returns the templates' expected counts under weights, summed to
// n stars: the "Asimov" dataset whose counts equal their expectation
// (Cowan et al. 2011, EPJC 71, 1554) [memory], used to size layouts and to find
// the median sensitivity of a test.
func Asimov(tpl *Templates, weights []float64, n float64) []float64 {
	mu := tpl.Expected(weights, nil)
	var s float64
	for _, v := range mu {
		s += v
	}
	for i := range mu {
		mu[i] *= n / s
	}
	return mu
}
