package compare

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"

	"spinpop/model"
)

// Templates holds, for each age bin k, the histogram of observed synthetic
// stars in a Space: T_ki = Counts[k·NumBins + i]. Every age bin was formed
// with the same stellar mass, so the expected histogram of any history
// with bin mass fractions w_k is A Σ_k w_k T_ki (see BuildTemplates).
type Templates struct {
	Space       Space
	AgeEdgesGyr []float64
	Counts      []float64 // k-major: Counts[k*Space.NumBins()+i]
	// Var, when not nil, holds the variance of each count (k-major, like
	// Counts): templates made of weighted stars (re-observed with
	// detection probabilities and period kernels) have Var = Σ weight²
	// per bin, less than the count. Nil means raw counts of simulated
	// stars, whose variance is the count itself.
	Var         []float64
	StarsDrawn  int64   // stars generated in all
	DrawnPerBin []int64 // stars generated per age bin
	Key         string  // hash of the scenario parts the templates depend on, set by the caller
	// Bank holds the run's catalog-eligible stars when TemplateOptions.Bank
	// asked for them (not saved with the templates).
	Bank *model.Bank
}

// TemplateOptions control BuildTemplates.
type TemplateOptions struct {
	Stars      int64  // stars to generate
	Seed       uint64 // run seed; chunk streams derive from (Seed, chunk index)
	ChunkStars int    // stars per chunk (0: 65536)
	Workers    int    // goroutines (0: GOMAXPROCS); results do not depend on it
	// Progress, if not nil, is called on the calling goroutine after each
	// chunk with the stars done so far and the total.
	Progress func(done, total int64)
	// Bank, if not nil, also keeps the run's catalog-eligible stars
	// (Templates.Bank) with these margins, so that nuisance parameters can
	// be fitted by re-observing them (BankObserver).
	Bank *model.BankMargin
}

// NumAgeBins returns the number of templates.
func (t *Templates) NumAgeBins() int { return len(t.AgeEdgesGyr) - 1 }

// Template returns template k (aliasing Counts).
func (t *Templates) Template(k int) []float64 {
	nb := t.Space.NumBins()
	return t.Counts[k*nb : (k+1)*nb : (k+1)*nb]
}

// BuildTemplates simulates pop with the same mass in every age bin and
// returns each bin's histogram of observed stars in space.
//
// Why this gives templates. The generator draws a star's age bin k with
// probability ∝ BinProb[k] and then its position from the bin's vertical
// profile; a position rejected by the radial profile sends it back to draw
// the bin again, so the accepted stars of bin k number ∝
// BinProb[k]·P(accept | k). With BinProb[k] = I_k, the field's
// line-of-sight integral of bin k (disk.Sampler.BinIntegral), that is
// I_k·P(accept | k) — the number of stars the field holds per unit surface
// density, i.e. per unit mass formed in bin k — for every k alike: the
// simulation forms EQUAL MASS in every age bin. Its observed counts n_ki are
// then the expected observed counts per unit mass of bin k, up to one
// constant common to all bins, which is a template T_ki. A history that
// puts mass fraction w_k in bin k predicts μ_i = A Σ_k w_k T_ki, A the
// same constant times the history's total mass (profiled out, or supplied as
// LikeOptions.MassScale). Ages are drawn uniform inside each bin, which is
// also how disk tables treat a bin (constant rate within it); a history
// that varies inside one bin is represented at the bin's resolution.
//
// pop is copied, not modified: the copy gets BinProb = binIntegrals and a
// uniform age within each bin of ageEdgesGyr, and is prepared afresh. Chunks
// are accumulated in chunk order, so the counts are identical for any
// number of workers. A cancelled ctx returns ctx.Err().
func BuildTemplates(ctx context.Context, pop *model.Population, binIntegrals, ageEdgesGyr []float64, space Space, opts TemplateOptions) (*Templates, error) {
	if pop == nil {
		return nil, errors.New("compare: BuildTemplates needs a population")
	}
	nk := len(ageEdgesGyr) - 1
	if nk < 1 {
		return nil, fmt.Errorf("compare: %d age edges: want at least 2", len(ageEdgesGyr))
	}
	if len(binIntegrals) != nk {
		return nil, fmt.Errorf("compare: %d line-of-sight integrals for %d age bins; give one per bin (disk.Sampler.BinIntegral)", len(binIntegrals), nk)
	}
	for k := range nk {
		if !(ageEdgesGyr[k+1] > ageEdgesGyr[k]) || ageEdgesGyr[k] < 0 {
			return nil, fmt.Errorf("compare: age edges %v: want 0 ≤ e_0 < e_1 < … (Gyr)", ageEdgesGyr)
		}
		if !(binIntegrals[k] > 0) || math.IsInf(binIntegrals[k], 0) {
			return nil, fmt.Errorf("compare: line-of-sight integral of age bin %d is %g; want a positive, finite value", k, binIntegrals[k])
		}
	}
	if opts.Stars <= 0 {
		return nil, fmt.Errorf("compare: template stars = %d; want a positive number of stars to generate", opts.Stars)
	}
	if opts.ChunkStars <= 0 {
		opts.ChunkStars = 1 << 16
	}
	if err := space.validate(); err != nil {
		return nil, err
	}

	p, edges, err := templatePopulation(pop, binIntegrals, ageEdgesGyr)
	if err != nil {
		return nil, err
	}

	nb := space.NumBins()
	t := &Templates{
		Space:       space,
		AgeEdgesGyr: edges,
		Counts:      make([]float64, nk*nb),
		DrawnPerBin: make([]int64, nk),
	}
	var done int64
	var bb *model.BankBuilder
	if opts.Bank != nil {
		if bb, err = model.NewBankBuilder(p, nk, opts.Seed, *opts.Bank); err != nil {
			return nil, err
		}
	}
	err = model.RunChunks(ctx, opts.Seed, opts.Stars, opts.ChunkStars, opts.Workers, p.Fill, func(c *model.Chunk) error {
		t.add(c)
		if bb != nil {
			bb.Add(c)
		}
		done += int64(c.N)
		if opts.Progress != nil {
			opts.Progress(done, opts.Stars)
		}
		return nil
	})
	if err != nil {
		return nil, err
	}
	t.StarsDrawn = done
	if bb != nil {
		t.Bank = bb.Bank()
	}
	return t, nil
}

// templatePopulation returns a copy of pop that forms the same mass in
// every age bin (BinProb = the bins' line-of-sight integrals) with ages
// uniform inside each bin, prepared; see BuildTemplates.
func templatePopulation(pop *model.Population, binIntegrals, ageEdgesGyr []float64) (*model.Population, []float64, error) {
	p := *pop
	p.BinProb = append([]float64(nil), binIntegrals...)
	edges := append([]float64(nil), ageEdgesGyr...)
	p.Age = func(k int, r *rand.Rand) float64 {
		return edges[k] + (edges[k+1]-edges[k])*r.Float64()
	}
	if err := p.Prepare(); err != nil {
		return nil, nil, fmt.Errorf("compare: template population: %w", err)
	}
	return &p, edges, nil
}

// add counts the stars of one chunk.
func (t *Templates) add(c *model.Chunk) {
	nb := t.Space.NumBins()
	for i := 0; i < c.N; i++ {
		k := int(c.AgeBin[i])
		t.DrawnPerBin[k]++
		if !c.Flags[i].Selected() {
			continue
		}
		if j := t.Space.Index(t.Space.AxisColor(c.ObsBV[i], c.AV[i]), c.MeasPeriodD[i], c.ZPc[i]); j >= 0 {
			t.Counts[k*nb+j]++
		}
	}
}

// Expected writes μ_i = Σ_k w_k T_ki (3-D, in template units) into dst,
// resliced to NumBins (reallocated only if too small), and returns it.
func (t *Templates) Expected(weights, dst []float64) []float64 {
	nb := t.Space.NumBins()
	if len(weights) != t.NumAgeBins() {
		panic(fmt.Sprintf("compare: Templates.Expected got %d weights for %d age bins", len(weights), t.NumAgeBins()))
	}
	if cap(dst) < nb {
		dst = make([]float64, nb)
	}
	dst = dst[:nb]
	for i := range dst {
		dst[i] = 0
	}
	for k, w := range weights {
		if w == 0 {
			continue
		}
		row := t.Counts[k*nb : (k+1)*nb]
		for i, v := range row {
			dst[i] += w * v
		}
	}
	return dst
}

// Collapse2D returns templates summed over |z|: a Space with one height bin
// spanning the original height edges, for comparisons in the
// (color, period) plane only. The receiver is not modified.
func (t *Templates) Collapse2D() *Templates {
	nz := t.Space.NumHeight()
	sp := t.Space
	sp.HeightEdgesPc = []float64{t.Space.HeightEdgesPc[0], t.Space.HeightEdgesPc[nz]}
	out := &Templates{
		Space:       sp,
		AgeEdgesGyr: append([]float64(nil), t.AgeEdgesGyr...),
		StarsDrawn:  t.StarsDrawn,
		DrawnPerBin: append([]int64(nil), t.DrawnPerBin...),
		Key:         t.Key,
	}
	nk := t.NumAgeBins()
	nb := t.Space.NumBins()
	for k := range nk {
		out.Counts = append(out.Counts, t.Space.Marginal2D(t.Counts[k*nb:(k+1)*nb])...)
		if t.Var != nil {
			out.Var = append(out.Var, t.Space.Marginal2D(t.Var[k*nb:(k+1)*nb])...)
		}
	}
	return out
}

// Totals returns Σ_i T_ki per age bin: the observed stars per unit of
// equal mass, the survey's efficiency against age.
func (t *Templates) Totals() []float64 {
	nb := t.Space.NumBins()
	out := make([]float64, t.NumAgeBins())
	for k := range out {
		for _, v := range t.Counts[k*nb : (k+1)*nb] {
			out[k] += v
		}
	}
	return out
}

// ZeroCells empties the (color, period) cells that mask marks
// (NumColorPeriod values, true = left out) in every age bin, counts and
// variances: the cells a comparison leaves out (Observed.DropCells).
func (t *Templates) ZeroCells(mask []bool) {
	sp := t.Space
	nb, nz := sp.NumBins(), sp.NumHeight()
	for k := range t.NumAgeBins() {
		for cell, out := range mask {
			if !out {
				continue
			}
			for z := 0; z < nz; z++ {
				t.Counts[k*nb+cell*nz+z] = 0
				if t.Var != nil {
					t.Var[k*nb+cell*nz+z] = 0
				}
			}
		}
	}
}

// YoungMask marks the (color, period) cells of sp whose periods all lie
// below gyro(B−V) by more than marginDex (log10), at the cell's color
// centre; colors where gyro has no period are not masked. With gyro the
// gyrochrone of the youngest age a spin-down law describes, these are the
// cells only stars younger than that reach: in a real or foreign catalog
// they hold fast rotators no model of the slow sequence describes.
func YoungMask(sp Space, gyro func(bv float64) (periodD float64, ok bool), marginDex float64) []bool {
	mask := make([]bool, sp.NumColorPeriod())
	np := sp.NumLogPeriod()
	for c := range sp.NumColor() {
		p, ok := gyro(sp.ColorCenter(c))
		if !ok || !(p > 0) {
			continue
		}
		limit := math.Log10(p) - marginDex
		for q := range np {
			mask[c*np+q] = sp.LogPeriodEdges[q+1] <= limit
		}
	}
	return mask
}
