package disk

import (
	"fmt"
	"math"
	"runtime"
	"sync"
)

// SamplerOptions sets how finely a Sampler cuts its field. Zero values take
// the defaults.
//
// A Sampler cuts the field into blocks — a cell of solid angle times a shell
// of distance — and draws from each block by rejection against the largest
// density in it, so draws are exact whatever the block size; finer blocks
// only raise the acceptance rate (see ProposalEfficiency) at the cost of
// memory, 16 bytes per block shared by all age bins (36 with a
// JointSampler). An age bin's own tables are indexed by height, not by
// block: at most 257 entries of 24 bytes (and 16 more in a
// JointSampler). The defaults keep the rate above ≈ 0.9 for vertical
// dispersions down to ≈ 5 km/s in a 1 kpc sphere, with all tables of 40
// bins in ≈ 0.8 MB (≈ 1.3 MB with a JointSampler; ≈ 1.6 MB for the 71
// bins of a default 10 Gyr history, by the sizes above), inside a core's
// 2 MB level-2 cache.
type SamplerOptions struct {
	// CellDzPc is the height span across a cell at its largest distance
	// (default 10 pc).
	CellDzPc float64
	// ShellPc is the width of a distance shell (default 50 pc).
	ShellPc float64
	// MaxBlocks caps the number of blocks (default 16384); when the field
	// needs more, CellDzPc and ShellPc are scaled up together until it fits.
	MaxBlocks int
}

func (o SamplerOptions) withDefaults() (SamplerOptions, error) {
	if o.CellDzPc == 0 {
		o.CellDzPc = 10
	}
	if o.ShellPc == 0 {
		o.ShellPc = 50
	}
	if o.MaxBlocks == 0 {
		o.MaxBlocks = 1 << 14
	}
	if !(o.CellDzPc > 0) || math.IsInf(o.CellDzPc, 0) {
		return o, fmt.Errorf("disk: SamplerOptions CellDzPc = %v pc; want a positive, finite height span (or 0 for 10 pc)", o.CellDzPc)
	}
	if !(o.ShellPc > 0) || math.IsInf(o.ShellPc, 0) {
		return o, fmt.Errorf("disk: SamplerOptions ShellPc = %v pc; want a positive, finite shell width (or 0 for 50 pc)", o.ShellPc)
	}
	if o.MaxBlocks < 1 || int64(o.MaxBlocks) > math.MaxUint32 {
		return o, fmt.Errorf("disk: SamplerOptions MaxBlocks = %d; want 1 ≤ MaxBlocks < 2³² (or 0 for 16384)", o.MaxBlocks)
	}
	return o, nil
}

// block is a cell times a distance shell, both by index: the cells of a
// field share their shells (all of them for a cone or a sphere), so blocks
// stay small and a draw reads little memory.
type block struct {
	cell, shell int32
}

// shell is a distance range [dLoPc, dLoPc + dSpanPc].
//
// Uniform in volume, distance has density ∝ d² over the shell. Written as
// d = d_lo + Δ t, t ∈ [0, 1], that density is ∝ d_lo² + 2 d_lo Δ t + Δ² t²,
// a mixture with weights d_lo², d_lo Δ and Δ²/3 of a uniform t, the larger
// of two uniforms (density 2t) and the largest of three (density 3t²).
// distance picks the component by comparing a 32-bit uniform with
// flatBelow and linBelow, which saves a cube root per point: far shells
// are almost flat, so one uniform usually does.
type shell struct {
	flatBelow, linBelow uint32
	dLoPc, dSpanPc      float64
}

func newShell(loPc, hiPc float64) shell {
	span := hiPc - loPc
	w0, w1, w2 := loPc*loPc, loPc*span, span*span/3
	sum := w0 + w1 + w2
	threshold := func(p float64) uint32 { return uint32(math.Min(math.Floor(p*(1<<32)), math.MaxUint32)) }
	return shell{flatBelow: threshold(w0 / sum), linBelow: threshold((w0 + w1) / sum), dLoPc: loPc, dSpanPc: span}
}

// dHiPc returns the outer distance of the shell.
func (sh *shell) dHiPc() float64 { return sh.dLoPc + sh.dSpanPc }

// volumePc3 returns the block's volume.
func (s *Sampler) volumePc3(b *block) float64 {
	sh := &s.shells[b.shell]
	lo, hi := sh.dLoPc, sh.dHiPc()
	return s.cells[b.cell].SolidAngleSr() * (hi*hi*hi - lo*lo*lo) / 3
}

// bound brackets an age bin's relative density ν/ν(0) at one node of the
// height grid: hi is rounded up, lo down.
type bound struct{ hi, lo float32 }

// binTable is what a Sampler keeps for one age bin: a few kB, whatever the
// number of blocks.
type binTable struct {
	prof       profile
	integral   float64      // ∫ν dV over the field, pc²
	envelope   float64      // ∫ of the class-wise upper bound, pc²
	classes    []classEntry // height classes, by upper bound × class volume
	bounds     []bound      // ν/ν(0) at |z| = i·zStepPc
	components int
}

// Sampler holds, for one field and one set of age bins, the tables that
// give each bin's integral over the field and draw positions from it.
//
// The density of age bin k at a point is Σ_k(R) ν_k(z): a surface density
// with the radial profile, times the bin's vertical profile normalised to
// unit integral over z. The tables are built at R = R0; the radial factor
// is applied by rejection in Draw.
//
// The field is cut into blocks, a cell of solid angle times a shell of
// distance. Rather than tabulate each cell's distance distribution at the
// cell's central latitude, which would err by the density's change across
// the cell, Draw proposes a point uniform in a block's volume and accepts
// it against an upper bound of the density over the block (the density
// depends only on |z|, and z = d sin b + z☉ is extreme at the block's
// corners). Draws are therefore exact for any block size, the block size
// setting only the acceptance rate, and no inverse CDF is interpolated.
//
// The blocks are sorted into height classes by the height |z| nearest to
// the midplane that they reach, on a grid of step zStepPc (the field's
// greatest height over 256, at least 1 pc: ≈ 4 pc for a field reaching
// 1 kpc from the plane). Every point of a block in class c lies at
// |z| ≥ c·zStepPc, where the bin's density is at most ν_k(c·zStepPc), so
// Draw picks a class from a small per-bin table weighted by that bound
// times the class volume, then a block of the class by volume from a table
// shared by all bins. The per-bin tables hold a few hundred entries, so
// the tables of tens of bins stay in cache together; the bound loses
// under one grid step of height against a per-block bound. The same grid
// brackets ν_k between its nodes, which decides almost every acceptance
// without evaluating the profile.
//
// A Sampler is read-only once built: goroutines may call Draw concurrently,
// each with its own *rand.Rand.
type Sampler struct {
	cells  []Cell
	shells []shell
	blocks []block // sorted by height class
	bins   []binTable

	// Height classes: class c holds blocks[classStart[c]:classStart[c+1]],
	// whose volumes (pc³) sum to classVolPc3[c]; blockAlias, indexed like
	// blocks, draws a block of a class by volume (aliases relative to the
	// class's first block).
	classStart  []int32
	classVolPc3 []float64
	blockAlias  []aliasEntry
	zStepPc     float64
	invZStepPc  float64

	zSunPc     float64
	r0Pc       float64
	invScalePc float64 // 1/h in pc⁻¹; 0 switches the radial rejection off
	rMinPc     float64 // lower bound of R over the field
	radialMax  float64
	cellDzPc   float64
	shellPc    float64
}

// NewSampler builds the tables for a field and age bins of one vertical
// dispersion each: sigmasKms[k] is the vertical dispersion of bin k, as
// given by an AVR. See NewMixtureSampler for bins spread over several
// dispersions.
func NewSampler(field Field, sun Sun, sheet Sheet, radial Radial, sigmasKms []float64, opts SamplerOptions) (*Sampler, error) {
	bins := make([]Mixture, len(sigmasKms))
	for k, s := range sigmasKms {
		bins[k] = Mixture{{SigmaKms: s, Weight: 1}}
	}
	return NewMixtureSampler(field, sun, sheet, radial, bins, opts)
}

// NewMixtureSampler builds the tables for a field and age bins whose
// vertical profiles are weighted means of tracer profiles (see
// AVR.BinMixture).
//
// For every block and bin it integrates ν_k(z) d² over the block with a
// Gauss–Legendre product rule (3 or 3×3 nodes over the solid angle, 4 in
// distance; ν_k interpolated from a fine table, to ~1e−9); the integrals
// sum to BinIntegral. For every bin it brackets ν_k
// on the height grid; the upper brackets times the class volumes weight the
// alias table from which Draw picks a height class.
func NewMixtureSampler(field Field, sun Sun, sheet Sheet, radial Radial, bins []Mixture, opts SamplerOptions) (*Sampler, error) {
	if field == nil {
		return nil, fmt.Errorf("disk: NewSampler got a nil field; want a Sphere, Cone or ConeList")
	}
	if err := field.Validate(); err != nil {
		return nil, err
	}
	if err := sun.Validate(); err != nil {
		return nil, err
	}
	if err := sheet.Validate(); err != nil {
		return nil, err
	}
	if err := radial.Validate(); err != nil {
		return nil, err
	}
	if len(bins) == 0 {
		return nil, fmt.Errorf("disk: NewSampler got no age bins; want at least one vertical dispersion")
	}
	for k, m := range bins {
		if err := m.validate(k); err != nil {
			return nil, err
		}
	}
	opts, err := opts.withDefaults()
	if err != nil {
		return nil, err
	}

	s := &Sampler{zSunPc: sun.ZPc, r0Pc: sun.RKpc * 1000}
	s.cutField(field, opts)
	s.classify()
	s.setRadial(radial)

	lc, nodeW := s.nodes(1 / sheet.Z0Pc())
	nodesPerBlock := len(lc) / len(s.blocks)
	lcMax := 0.0
	for _, v := range lc {
		lcMax = math.Max(lcMax, v)
	}
	profiles := make([]profile, len(bins))
	nMax := 0.0
	for k, m := range bins {
		profiles[k] = newProfile(sheet, m)
		nMax = math.Max(nMax, profiles[k].maxExponent())
	}
	step, tabulate := lcTableStep(nMax, lcMax)
	if !tabulate {
		step = 0
	}

	s.bins = make([]binTable, len(bins))
	var wg sync.WaitGroup
	next := make(chan int)
	for range min(runtime.GOMAXPROCS(0), len(bins)) {
		wg.Go(func() {
			w := make([]float64, len(s.classVolPc3))
			for k := range next {
				s.bins[k] = s.buildBin(profiles[k], len(bins[k]), lc, lcMax, step, nodeW, nodesPerBlock, w)
			}
		})
	}
	for k := range bins {
		next <- k
	}
	close(next)
	wg.Wait()
	for k := range s.bins {
		if !(s.bins[k].envelope > 0) {
			return nil, fmt.Errorf("disk: age bin %d has no density inside the field (dispersion too small for its heights); want a larger vertical dispersion or a field closer to the plane", k)
		}
	}
	return s, nil
}

// cutField chooses the cell and shell sizes and lays out the blocks.
func (s *Sampler) cutField(field Field, opts SamplerOptions) {
	dz, shell := opts.CellDzPc, opts.ShellPc
	for {
		cells := field.Cells(dz)
		n := 0
		for i := range cells {
			n += shellCount(&cells[i], shell)
		}
		if n <= opts.MaxBlocks {
			s.cells, s.cellDzPc, s.shellPc = cells, dz, shell
			break
		}
		// Blocks scale as f⁻² (strips × shells) to f⁻³ (ring sectors ×
		// shells); the cube root never overshoots by much.
		f := math.Max(1.02, math.Cbrt(float64(n)/float64(opts.MaxBlocks)))
		dz, shell = dz*f, shell*f
	}
	// Cells with the same distance range share one set of shells.
	first := map[[2]float64]int{}
	for i := range s.cells {
		c := &s.cells[i]
		m := shellCount(c, s.shellPc)
		key := [2]float64{c.distMinPc, c.distMaxPc}
		base, ok := first[key]
		if !ok {
			base = len(s.shells)
			first[key] = base
			for j := range m {
				lo := c.distMinPc + (c.distMaxPc-c.distMinPc)*float64(j)/float64(m)
				hi := c.distMinPc + (c.distMaxPc-c.distMinPc)*float64(j+1)/float64(m)
				if j == m-1 {
					hi = c.distMaxPc
				}
				s.shells = append(s.shells, newShell(lo, hi))
			}
		}
		for j := range m {
			s.blocks = append(s.blocks, block{cell: int32(i), shell: int32(base + j)})
		}
	}
}

func shellCount(c *Cell, shellPc float64) int {
	return max(1, int(math.Ceil((c.distMaxPc-c.distMinPc)/shellPc)))
}

// setRadial bounds the smallest Galactocentric radius in the field from
// R ≥ R0 − d cos ψ, ψ the angle to the Galactic centre, and sets the
// largest radial weight exp((R0 − R_min)/h).
func (s *Sampler) setRadial(radial Radial) {
	s.rMinPc = s.r0Pc
	for i := range s.cells {
		c := &s.cells[i]
		lb := s.r0Pc - c.distMaxPc*math.Max(c.maxCosToCentre(), 0)
		s.rMinPc = math.Min(s.rMinPc, math.Max(lb, 0))
	}
	if math.IsInf(radial.ScaleLengthKpc, 1) {
		s.radialMax = 1
		return
	}
	s.invScalePc = 1 / (radial.ScaleLengthKpc * 1000)
	s.radialMax = math.Exp((s.r0Pc - s.rMinPc) * s.invScalePc)
}

// nodes returns, for every block and quadrature node, ln cosh(z/z0) at the
// node's height, which all bins share, and the node's weight in pc³.
func (s *Sampler) nodes(invZ0Pc float64) (lc, weight []float64) {
	var q []sinBNode
	for _, b := range s.blocks {
		c := &s.cells[b.cell]
		q = c.quadrature(q)
		sh := &s.shells[b.shell]
		lo, hi := sh.dLoPc, sh.dHiPc()
		mid, half := 0.5*(hi+lo), 0.5*(hi-lo)
		for _, nd := range q {
			for j, x := range gl4x {
				d := mid + half*x
				lc = append(lc, logCosh((d*nd.sinB+s.zSunPc)*invZ0Pc))
				weight = append(weight, nd.weightSr*half*gl4w[j]*d*d)
			}
		}
	}
	return lc, weight
}

// maxHeightClasses caps the height grid, and so the per-bin tables. A
// coarser grid costs little acceptance (≈ 1 % at 5 km/s between 1024 and
// 256 classes in a 1 kpc sphere) and keeps the tables of a JointSampler,
// read at random on every draw, small enough to stay in cache.
const maxHeightClasses = 256

// classify sorts the blocks into height classes by the height nearest to
// the midplane that each reaches, and builds the shared tables that draw a
// block of a class by volume.
func (s *Sampler) classify() {
	zNear := make([]float64, len(s.blocks))
	zFarMax := 0.0
	for i, b := range s.blocks {
		c := &s.cells[b.cell]
		sh := &s.shells[b.shell]
		zn, zf := heightExtremes(sh.dLoPc, sh.dHiPc(), c.sinBMin, c.sinBMax, s.zSunPc)
		zNear[i] = math.Abs(zn)
		zFarMax = math.Max(zFarMax, zf)
	}
	s.zStepPc = math.Max(1, zFarMax/maxHeightClasses)
	s.invZStepPc = 1 / s.zStepPc
	// Nodes 0 … n−1 cover every height in the field with one to spare, so
	// a point at |z| in [i, i+1) steps always has both nodes.
	nNodes := int(math.Ceil(zFarMax*s.invZStepPc)) + 2
	nClasses := nNodes - 1
	class := make([]int32, len(s.blocks))
	s.classStart = make([]int32, nClasses+1)
	for i, z := range zNear {
		c := min(int(z*s.invZStepPc), nClasses-1)
		for c > 0 && float64(c)*s.zStepPc > z { // rounding must never raise the bound's height
			c--
		}
		class[i] = int32(c)
		s.classStart[c+1]++
	}
	for c := 1; c <= nClasses; c++ {
		s.classStart[c] += s.classStart[c-1]
	}
	sorted := make([]block, len(s.blocks))
	next := append([]int32(nil), s.classStart[:nClasses]...)
	for i, b := range s.blocks { // stable: blocks keep their order within a class
		sorted[next[class[i]]] = b
		next[class[i]]++
	}
	s.blocks = sorted
	s.classVolPc3 = make([]float64, nClasses)
	s.blockAlias = make([]aliasEntry, len(s.blocks))
	w := make([]float64, len(s.blocks))
	for c := range nClasses {
		lo, hi := s.classStart[c], s.classStart[c+1]
		for i := lo; i < hi; i++ {
			b := &s.blocks[i]
			w[i] = s.volumePc3(b)
			s.classVolPc3[c] += w[i]
		}
		if hi > lo {
			buildAlias(w[lo:hi], s.blockAlias[lo:hi])
		}
	}
}

// buildBin integrates one bin's profile over every block, brackets it on
// the height grid and builds its alias table over height classes. The
// integrals read the profile from a table of the given step in lc (see
// lcTable), or evaluate it directly when step is 0; the brackets always
// evaluate it exactly. w is scratch of one float64 per class.
func (s *Sampler) buildBin(p profile, components int, lc []float64, lcMax, step float64, nodeW []float64, perBlock int, w []float64) binTable {
	t := binTable{prof: p, components: components}
	integral := 0.0
	var tab lcTable
	if step > 0 {
		tab = p.table(step, lcMax)
	}
	for i := range s.blocks {
		sum := 0.0
		if step > 0 {
			for j := i * perBlock; j < (i+1)*perBlock; j++ {
				sum += nodeW[j] * tab.at(lc[j])
			}
		} else {
			for j := i * perBlock; j < (i+1)*perBlock; j++ {
				sum += nodeW[j] * p.relLogCosh(lc[j])
			}
		}
		integral += sum
	}
	t.bounds = make([]bound, len(s.classVolPc3)+1)
	for i := range t.bounds {
		v := p.rel(float64(i) * s.zStepPc)
		t.bounds[i] = bound{hi: roundUp32(v), lo: roundDown32(v)}
	}
	envelope := 0.0
	for c, v := range s.classVolPc3 {
		w[c] = float64(t.bounds[c].hi) * v
		envelope += w[c]
	}
	t.integral = integral * p.peakPc
	t.envelope = envelope * p.peakPc
	if envelope > 0 {
		t.classes = classTable(w, t.bounds)
	}
	return t
}

// heightExtremes returns the heights nearest to and farthest from the
// midplane over distances [dLo, dHi] and sin b in [sLo, sHi]; z = d sin b + z☉
// is bilinear, so both sit at corners unless the range straddles z = 0.
func heightExtremes(dLo, dHi, sLo, sHi, zSun float64) (zNear, zFar float64) {
	z := [4]float64{dLo*sLo + zSun, dLo*sHi + zSun, dHi*sLo + zSun, dHi*sHi + zSun}
	lo, hi := z[0], z[0]
	for _, v := range z[1:] {
		lo, hi = math.Min(lo, v), math.Max(hi, v)
	}
	switch {
	case lo <= 0 && hi >= 0:
		zNear = 0
	case lo > 0:
		zNear = lo
	default:
		zNear = hi
	}
	zFar = math.Max(math.Abs(lo), math.Abs(hi))
	return zNear, zFar
}

func roundUp32(x float64) float32 {
	f := float32(x)
	if float64(f) < x {
		f = math.Nextafter32(f, float32(math.Inf(1)))
	}
	return f
}

func roundDown32(x float64) float32 {
	f := float32(x)
	if float64(f) > x {
		f = math.Nextafter32(f, 0)
	}
	return f
}

// NumBins returns the number of age bins.
func (s *Sampler) NumBins() int { return len(s.bins) }

// NumBlocks returns the number of blocks (cell × distance shell) the field
// was cut into.
func (s *Sampler) NumBlocks() int { return len(s.blocks) }

// BlockSizePc returns the cell height span and shell width actually used,
// after any scaling to fit SamplerOptions.MaxBlocks.
func (s *Sampler) BlockSizePc() (cellDzPc, shellPc float64) { return s.cellDzPc, s.shellPc }

// BinIntegral returns ∫ ν_k(z) dV over the field in pc² at the solar radius
// (k in [0, NumBins())):
// the number of bin-k stars in the field per star pc⁻² of bin-k surface
// density, before the radial profile. A generator draws age bins with
// probability ∝ (surface density of bin k) × BinIntegral(k), then calls
// Draw. The block quadrature is accurate to ~1e−6 relative with the default
// block sizes.
func (s *Sampler) BinIntegral(k int) float64 { return s.bins[k].integral }

// ProposalEfficiency returns the fraction of block proposals that Draw
// keeps for bin k before the radial rejection: BinIntegral over the
// integral of the block-wise upper bound. Finer blocks raise it.
func (s *Sampler) ProposalEfficiency(k int) float64 { return s.bins[k].integral / s.bins[k].envelope }

// RadialAcceptanceMax returns the largest radial weight exp(−(R − R0)/h)
// over the field, from a lower bound on R (R ≥ R0 − d cos ψ, ψ the angle to
// the Galactic centre): 1 when the radial profile is off. Draw keeps a
// position with probability exp(−(R − R0)/h)/RadialAcceptanceMax, so the
// expected number of bin-k stars in the field is
// Σ_k(R0) · BinIntegral(k) · RadialAcceptanceMax · P(accepted | k).
func (s *Sampler) RadialAcceptanceMax() float64 { return s.radialMax }
