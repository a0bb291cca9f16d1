package model

import (
	"math"
	"math/rand/v2"
)

// massSampler is implemented by this package's IMFs: an exact sampler that
// the population generator prefers to Sample's inversion, which costs a
// logarithm and an exponential per star.
type massSampler interface {
	rejectionReady() bool
	sampleByRejection(r *rand.Rand) float64
}

// massIntervals is the number of intervals, evenly spaced in log mass, that
// sampleByRejection cuts the mass range into (plus the segment breaks).
const massIntervals = 512

// massInterval is a piece of the mass range inside one IMF segment, with
// bounds on the unnormalised dN/dm over it.
type massInterval struct {
	loMsun, widthMsun float64
	upper, lower      float64
	seg               int
}

// massTable draws masses by rejection: an interval with probability ∝ its
// upper bound times its width (alias table), a mass uniform in it, kept
// with probability dN/dm / upper. Every segment's dN/dm is monotone or,
// for the lognormal, unimodal, so the bounds come from its values at the
// interval's ends and at the mode; the lower bound decides almost every
// acceptance without evaluating dN/dm, the intervals being narrow.
type massTable struct {
	pick      alias
	intervals []massInterval
}

// buildMassTable prepares sampleByRejection; f's segments must be built.
func (f *imfPieces) buildMassTable() {
	logLo, logHi := math.Log(f.minMsun), math.Log(f.maxMsun)
	var iv []massInterval
	for si := 0; si < f.n; si++ {
		s := &f.seg[si]
		n := max(1, int(math.Ceil(massIntervals*(math.Log(s.hi)-math.Log(s.lo))/(logHi-logLo))))
		for j := range n {
			lo := s.lo * math.Exp(float64(j)/float64(n)*math.Log(s.hi/s.lo))
			hi := s.lo * math.Exp(float64(j+1)/float64(n)*math.Log(s.hi/s.lo))
			if j == 0 {
				lo = s.lo
			}
			if j == n-1 {
				hi = s.hi
			}
			a, b := s.pdf(lo), s.pdf(hi)
			upper, lower := math.Max(a, b), math.Min(a, b)
			if s.kind == imfLogNormal {
				// dN/dm ∝ exp(−(log10 m − μ)²/2σ²)/m peaks at
				// log10 m = μ − σ² ln10.
				if mode := math.Pow(10, s.mu-s.sigma*s.sigma*math.Ln10); mode > lo && mode < hi {
					upper = math.Max(upper, s.pdf(mode))
				}
			}
			// Rounding of the pdf must not break the bounds.
			iv = append(iv, massInterval{loMsun: lo, widthMsun: hi - lo, upper: upper * (1 + 1e-12), lower: lower * (1 - 1e-12), seg: si})
		}
	}
	w := make([]float64, len(iv))
	for i, x := range iv {
		w[i] = x.upper * x.widthMsun
	}
	pick, err := newAlias(w)
	if err != nil {
		// dN/dm underflows over the whole range (a range far out in a
		// lognormal tail): leave the table empty, and Sample to do it.
		return
	}
	f.table = massTable{pick: pick, intervals: iv}
}

// rejectionReady reports whether sampleByRejection may be used.
func (f *imfPieces) rejectionReady() bool { return len(f.table.intervals) > 0 }

// sampleByRejection draws a mass in M☉ from the IMF, exactly, by rejection
// from the interval table (see massTable). It uses a varying number of
// random numbers, two or three per trial, and allocates nothing.
func (f *imfPieces) sampleByRejection(r *rand.Rand) float64 {
	t := &f.table
	for {
		iv := &t.intervals[t.pick.draw(r)]
		x := r.Uint64()
		m := iv.loMsun + unit32(x>>32)*iv.widthMsun
		u := unit32(x) * iv.upper
		if u <= iv.lower || u <= f.seg[iv.seg].pdf(m) {
			return m
		}
	}
}
