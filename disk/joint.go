package disk

import (
	"fmt"
	"math"
	"math/rand/v2"

	"spinpop/internal/alias"
)

// JointSampler draws (age bin, position) pairs from the joint density
//
//	P(k, x) ∝ W_k ν_k(z) Σ(R)/Σ(R0)
//
// over the field, W_k the weight (surface density at R0) of bin k: the same
// law as drawing k with probability ∝ W_k·BinIntegral(k), a position from
// Draw(k), and starting again with a new bin whenever Draw rejects the point.
// That scheme loses every radially rejected point and its bin; a
// JointSampler bounds the radial weight block by block instead of over the
// whole field, so that almost every proposal whose height is kept is kept.
//
// It is exact by rejection from the envelope
//
//	G(k, x) = W_k ν_k(0) H_k(c) Ω_b,
//
// with H_k(c) the bound on ν_k/ν_k(0) of x's height class c (see Sampler)
// and Ω_b = exp(−(R_lo − R0)/h), R_lo a lower bound on R over x's block b:
// a (bin, class) pair, a block and a point are drawn from G — each from an
// alias table whose weights are exact sums of the envelope, no quadrature —
// and
// kept with probability ν_k(z)/(ν_k(0) H_k(c)) × exp(−(R − R_lo)/h). The bin
// weights enter only through W_k, so bin integrals need not be known: the
// result does not carry their quadrature error either.
//
// A JointSampler is read-only: goroutines may call Draw concurrently, each
// with its own *rand.Rand.
type JointSampler struct {
	s *Sampler
	// pairs is an alias table over (bin k, height class c), by
	// W_k ν_k(0) H_k(c) V_Ω(c) with V_Ω(c) = Σ_{b∈c} V_b Ω_b; entry
	// k<<classShift + c, the classes padded to a power of two with empty
	// entries so that one draw gives both indices.
	pairs      []classEntry
	classShift uint
	// blocks are the sampler's blocks, each with its column of the alias
	// table that draws a block of a class by V_b Ω_b (aliases relative to
	// the class's first block): one read for both. rLoPc, indexed alike,
	// bounds R from below over each block.
	blocks []jointBlock
	rLoPc  []float32
}

type jointBlock struct {
	block
	prob  float32
	alias uint32
}

// Joint builds a JointSampler for bin weights binWeights (one per bin,
// finite and ≥ 0, not all 0): the surface density of each bin at R0, in any
// unit. Given the probabilities p_k with which a generator would draw bins
// before calling Draw, binWeights[k] = p_k/BinIntegral(k) gives the same
// joint law.
func (s *Sampler) Joint(binWeights []float64) (*JointSampler, error) {
	if len(binWeights) != len(s.bins) {
		return nil, fmt.Errorf("disk: Joint got %d bin weights for %d age bins; want one per bin", len(binWeights), len(s.bins))
	}
	j := &JointSampler{s: s, blocks: make([]jointBlock, len(s.blocks)), rLoPc: make([]float32, len(s.blocks))}
	blockAlias := make([]aliasEntry, len(s.blocks))
	// Block bounds: for every direction of a cell cos ψ ≤ cMax (ψ the angle
	// to the Galactic centre) and cos² b ≥ cb2, so over distances [lo, hi]
	// R² = R0² − 2 R0 d cos ψ + d² cos² b ≥ R0² − 2 R0 d cMax + d² cb2, a
	// convex quadratic in d whose least value on [lo, hi] bounds R².
	cosMax := make([]float64, len(s.cells))
	for i := range s.cells {
		cosMax[i] = s.cells[i].maxCosToCentre()
	}
	r0 := s.r0Pc
	w := make([]float64, len(s.blocks))
	volOmega := make([]float64, len(s.classVolPc3))
	for c := range s.classVolPc3 {
		lo, hi := s.classStart[c], s.classStart[c+1]
		for i := lo; i < hi; i++ {
			b := &s.blocks[i]
			cell := &s.cells[b.cell]
			sh := &s.shells[b.shell]
			sb2 := math.Max(cell.sinBMin*cell.sinBMin, cell.sinBMax*cell.sinBMax)
			cb2 := math.Max(0, 1-sb2)
			cm := cosMax[b.cell]
			d := sh.dHiPc()
			if cb2 > 0 {
				d = math.Min(math.Max(r0*cm/cb2, sh.dLoPc), sh.dHiPc())
			} else if cm < 0 {
				d = sh.dLoPc
			}
			rLo2 := r0*r0 - 2*r0*d*cm + d*d*cb2
			// Rounding must not raise the bound: step it down a little.
			rLo := float64(roundDown32(math.Max(0, math.Sqrt(math.Max(rLo2, 0))*(1-1e-12)-1e-9)))
			j.blocks[i].block, j.rLoPc[i] = *b, float32(rLo)
			omega := 1.0
			if s.invScalePc != 0 {
				omega = math.Exp((r0 - rLo) * s.invScalePc)
			}
			w[i] = s.volumePc3(b) * omega
			volOmega[c] += w[i]
		}
		if hi > lo {
			buildAlias(w[lo:hi], blockAlias[lo:hi])
		}
	}
	for i, a := range blockAlias {
		j.blocks[i].prob, j.blocks[i].alias = a.Prob, a.Alias
	}
	nc := len(volOmega)
	for 1<<j.classShift < nc {
		j.classShift++
	}
	stride := 1 << j.classShift
	w = make([]float64, len(s.bins)*stride)
	env := make([]bound, len(w))
	for k, wk := range binWeights {
		if !(wk >= 0) || math.IsInf(wk, 0) {
			return nil, fmt.Errorf("disk: Joint bin weight %d is %v; want a finite weight ≥ 0", k, wk)
		}
		t := &s.bins[k]
		for c, v := range volOmega {
			w[k*stride+c] = wk * t.prof.peakPc * float64(t.bounds[c].hi) * v
			env[k*stride+c] = t.bounds[c]
		}
	}
	total := 0.0
	for _, x := range w {
		total += x
	}
	if !(total > 0) || math.IsInf(total, 0) {
		return nil, fmt.Errorf("disk: Joint bin weights give no stars in the field; want at least one positive weight")
	}
	j.pairs = classTable(w, env)
	return j, nil
}

// Draw returns an age bin and a position drawn from the joint density (see
// JointSampler). It allocates nothing; r is the only source of randomness.
// To draw many, DrawMany is faster.
func (j *JointSampler) Draw(r *rand.Rand) (k int, lDeg, bDeg, dPc, zPc float64) {
	var p proposal
	for {
		k, bi, ok := j.try(r, &p)
		if !ok {
			continue
		}
		if !j.keepRadial(&p, bi, r) {
			continue
		}
		lDeg, bDeg = p.angles()
		return k, lDeg, bDeg, p.dPc, p.zPc
	}
}

// jointLanes is how many proposals DrawMany carries through each step
// together.
const jointLanes = 8

// DrawMany fills k, dir, dPc and zPc (all of one length) with independent
// draws from the joint density, as Draw would make them one by one but
// from other random numbers, and with each direction's angles left to the
// caller (Direction.Angles). It takes the table lookups of several
// proposals step by step together, so that their reads from memory
// overlap instead of waiting on one another. It allocates nothing.
func (j *JointSampler) DrawMany(r *rand.Rand, k []int32, dir []Direction, dPc, zPc []float64) {
	n := len(k)
	if len(dir) != n || len(dPc) != n || len(zPc) != n {
		panic("disk: DrawMany needs slices of one length")
	}
	s := j.s
	var (
		pair [jointLanes]int
		env  [jointLanes]float64
		bi   [jointLanes]int
		p    proposal
	)
	mask := 1<<j.classShift - 1
	for filled := 0; filled < n; {
		for l := range jointLanes {
			pair[l], env[l] = pickClass(r.Uint64(), j.pairs)
		}
		for l := range jointLanes {
			bi[l] = j.pickBlock(pair[l]&mask, r.Uint64())
		}
		for l := 0; l < jointLanes && filled < n; l++ {
			kk := pair[l] >> j.classShift
			if !s.trial(&s.bins[kk], env[l], &j.blocks[bi[l]].block, r, &p) || !j.keepRadial(&p, bi[l], r) {
				continue
			}
			k[filled], dir[filled], dPc[filled], zPc[filled] = int32(kk), p.direction(), p.dPc, p.zPc
			filled++
		}
	}
}

// try draws a bin, a class, a block and a point from the envelope into p
// and makes the height test; the radial test (keepRadial) is left to the
// caller. bi is the block's index.
func (j *JointSampler) try(r *rand.Rand, p *proposal) (k, bi int, kept bool) {
	pair, env := pickClass(r.Uint64(), j.pairs)
	k = pair >> j.classShift
	bi = j.pickBlock(pair&(1<<j.classShift-1), r.Uint64())
	return k, bi, j.s.trial(&j.s.bins[k], env, &j.blocks[bi].block, r, p)
}

// pickBlock draws a block of height class ci by V_b Ω_b from the random
// bits x, and returns its index.
func (j *JointSampler) pickBlock(ci int, x uint64) int {
	s := j.s
	first := int(s.classStart[ci])
	hi, coin := alias.Split(x, int(s.classStart[ci+1])-first)
	b := first + hi
	if !(coin < j.blocks[b].prob) {
		b = first + int(j.blocks[b].alias)
	}
	return b
}

// keepRadial makes the radial test of proposal p from block bi: true with
// probability exp(−(R − R_lo)/h), R_lo the block's bound on R.
func (j *JointSampler) keepRadial(p *proposal, bi int, r *rand.Rand) bool {
	s := j.s
	if s.invScalePc == 0 {
		return true
	}
	rPc := math.Sqrt(nonNeg(s.r2Pc2(p)))
	return expNegBelow(p.radialUniform(r), (rPc-float64(j.rLoPc[bi]))*s.invScalePc)
}
