package model

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"sync"
	"sync/atomic"

	"spinpop/internal/workerpanic"
	"spinpop/model/spin"
	"spinpop/model/spots"
)

// Bank holds the stars of a run that a catalog could hold — those that
// pass the survey's magnitude limits and the photometric catalog cuts,
// and are not evolved out of the dwarf sample — with what it takes to
// observe them again: mass, age, T_eff, colors, magnitudes, height,
// companion, and a seed for the star's own random numbers. Re-observing the
// bank (Observe) under another spin-down law, intrinsic period scatter,
// spot or detection model, period recovery, color calibration, binary
// fraction or period window gives the expected catalog without
// generating a single new star: what a fit needs to move such
// parameters (nuisance parameters) at the price of a pass over ~10⁶ stored
// stars instead of a run of 10⁷–10⁸.
//
// Stars are grouped by age bin, in the order the run made them: stars of
// bin k are [Start[k], Start[k+1]).
type Bank struct {
	Start       []int   // len NumAgeBins+1
	DrawnPerBin []int64 // stars generated per age bin, stored or not
	Margin      BankMargin
	Cuts        Cuts             // the run's catalog cuts
	Color       ColorCalibration // the run's color calibration
	Noise       spots.NoiseModel // the run's survey noise, for which NoisePpm holds each star's

	AgeGyr, MassMsun, TeffK []float32
	BVMain                  []float32 // single-star main-sequence B−V of the primary's mass: what a spin-down law reads
	ModelBV                 []float32 // reddened system B−V on the model's own scale (before the color calibration)
	ObsAbsMag               []float32 // absolute V as derived from parallax (extinction in)
	AV                      []float32 // extinction in V, for a dereddened band cut (Cuts.MSBandDereddened)
	AppMag                  []float32 // apparent magnitude in the survey band
	AbsZPc                  []float32
	CompanionMsun           []float32 // 0 when single
	BinaryFrac              []float32 // BinaryFraction of the primary's mass, before the fraction scale
	NoisePpm                []float32 // survey noise per cadence at the star's magnitude (Noise)
	Seed                    []uint64

	memos *lawMemos   // the stars' spins under the latest laws (nil: none kept)
	seen  *seenMemos  // the stars' rotations under the latest law, spots and detection (nil: none kept)
	place *placeMemos // the stars' grid columns under the latest color calibrations (nil: none kept)
	input *inputMemos // the stars' law-independent inputs (nil: none kept)
}

// BankMargin widens the color cut (ColorMag on each side, catalog scale)
// and the main-sequence band (BandMag on each side) for the stars a Bank
// keeps, so that a color calibration moved by up to that much can bring
// stars in; Observe then applies the exact cuts. Zero keeps exactly the
// stars that pass the cuts as run.
type BankMargin struct {
	ColorMag float64
	BandMag  float64
}

// NumAgeBins returns the number of age bins.
func (b *Bank) NumAgeBins() int { return len(b.Start) - 1 }

// Len returns the number of stored stars.
func (b *Bank) Len() int { return len(b.Seed) }

// BankBuilder collects a Bank from the chunks of a run, in chunk order.
type BankBuilder struct {
	pop    *Population
	seed   uint64
	margin BankMargin
	bins   []Bank // one per age bin, merged by Bank
	drawn  []int64
}

// NewBankBuilder starts a bank of the population p (the one the run uses)
// with nAgeBins age bins; seed is the run's seed, from which every stored
// star's own seed derives.
func NewBankBuilder(p *Population, nAgeBins int, seed uint64, margin BankMargin) (*BankBuilder, error) {
	if nAgeBins < 1 {
		return nil, fmt.Errorf("model: a bank needs at least one age bin, got %d", nAgeBins)
	}
	if !(margin.ColorMag >= 0) || !(margin.BandMag >= 0) || math.IsInf(margin.ColorMag, 0) || math.IsInf(margin.BandMag, 0) {
		return nil, fmt.Errorf("model: bank margins %g, %g mag: want finite values ≥ 0", margin.ColorMag, margin.BandMag)
	}
	return &BankBuilder{pop: p, seed: seed, margin: margin, bins: make([]Bank, nAgeBins), drawn: make([]int64, nAgeBins)}, nil
}

// Add stores the chunk's catalog-eligible stars. Chunks must come in
// chunk order (model.RunChunks hands them over so) for the bank to be the
// same for any number of workers.
func (bb *BankBuilder) Add(c *Chunk) {
	p := bb.pop
	cuts := p.Cuts
	wide := cuts
	wide.BVMin -= bb.margin.ColorMag
	wide.BVMax += bb.margin.ColorMag
	wide.MSBandBrightMag += bb.margin.BandMag
	wide.MSBandFaintMag += bb.margin.BandMag
	exact := bb.margin == BankMargin{}
	for i := 0; i < c.N; i++ {
		k := int(c.AgeBin[i])
		bb.drawn[k]++
		f := c.Flags[i]
		if f&FlagGone != 0 || f&FlagInMagRange == 0 {
			continue
		}
		if !cuts.HeightInRange(c.ZPc[i]) {
			continue
		}
		bv, absV := c.ObsBV[i], c.ObsAbsMag[i]
		if exact {
			if f&catalogCuts != catalogCuts {
				continue
			}
		} else if !wide.InColorRange(bv) || !wide.OnMainSequence(p.Relations, bv, absV, c.AV[i]) {
			continue
		}
		m := c.MassMsun[i]
		_, bvMain, _, _, ok := p.Relations.atMain(m)
		if !ok {
			continue
		}
		b := &bb.bins[k]
		b.AgeGyr = append(b.AgeGyr, float32(c.AgeGyr[i]))
		b.MassMsun = append(b.MassMsun, float32(m))
		b.TeffK = append(b.TeffK, float32(c.TeffK[i]))
		b.BVMain = append(b.BVMain, float32(bvMain))
		b.ModelBV = append(b.ModelBV, float32(p.Survey.Color.Invert(bv)))
		b.ObsAbsMag = append(b.ObsAbsMag, float32(absV))
		b.AV = append(b.AV, float32(c.AV[i]))
		b.AppMag = append(b.AppMag, float32(c.AppMag[i]))
		b.AbsZPc = append(b.AbsZPc, float32(math.Abs(c.ZPc[i])))
		b.CompanionMsun = append(b.CompanionMsun, float32(c.CompanionMsun[i]))
		b.BinaryFrac = append(b.BinaryFrac, float32(BinaryFraction(m)))
		b.NoisePpm = append(b.NoisePpm, float32(p.Survey.Detect.Noise.PpmPerCadence(c.AppMag[i])))
		b.Seed = append(b.Seed, starSeed(bb.seed, c.Index, i))
	}
}

// starSeed derives a stored star's own seed from the run's seed and its
// place in the run (chunk, index in chunk), decorrelated by splitmix64.
func starSeed(seed uint64, chunk, i int) uint64 {
	return splitmix64(splitmix64(seed^0x6a09e667f3bcc909^uint64(chunk)*0x9e3779b97f4a7c15) ^ uint64(i))
}

// Bank returns the collected bank.
func (bb *BankBuilder) Bank() *Bank {
	out := &Bank{Start: make([]int, len(bb.bins)+1), DrawnPerBin: append([]int64(nil), bb.drawn...), Margin: bb.margin,
		Cuts: bb.pop.Cuts, Color: bb.pop.Survey.Color, Noise: bb.pop.Survey.Detect.Noise, memos: newLawMemos(), seen: newSeenMemos(), place: newPlaceMemos(), input: newInputMemos()}
	for k := range bb.bins {
		b := &bb.bins[k]
		out.Start[k+1] = out.Start[k] + len(b.Seed)
		out.AgeGyr = append(out.AgeGyr, b.AgeGyr...)
		out.MassMsun = append(out.MassMsun, b.MassMsun...)
		out.TeffK = append(out.TeffK, b.TeffK...)
		out.BVMain = append(out.BVMain, b.BVMain...)
		out.ModelBV = append(out.ModelBV, b.ModelBV...)
		out.ObsAbsMag = append(out.ObsAbsMag, b.ObsAbsMag...)
		out.AV = append(out.AV, b.AV...)
		out.AppMag = append(out.AppMag, b.AppMag...)
		out.AbsZPc = append(out.AbsZPc, b.AbsZPc...)
		out.CompanionMsun = append(out.CompanionMsun, b.CompanionMsun...)
		out.BinaryFrac = append(out.BinaryFrac, b.BinaryFrac...)
		out.NoisePpm = append(out.NoisePpm, b.NoisePpm...)
		out.Seed = append(out.Seed, b.Seed...)
		*b = Bank{}
	}
	return out
}

// MemoSets returns how many sets of each memo the bank keeps: the stars'
// spins by law, their rotations by law, spots and detection, their grid
// columns by color calibration, their law-independent inputs. For tests
// and diagnostics: what a re-observation will find.
func (b *Bank) MemoSets() (laws, rotations, columns, inputs int) {
	return b.memos.size(), b.seen.size(), b.place.size(), b.input.size()
}

// Grid is the binning Observe fills: B−V edges, log10 period (days)
// edges and |z| (pc) edges, each strictly increasing; bins are half-open
// except the last of each axis, and are flattened as
// ((color·nP) + period)·nZ + height.
type Grid struct {
	ColorEdges, LogPeriodEdges, HeightEdgesPc []float64
	// Dereddened bins a star by its B−V less its reddening (A_V·EBVPerAV)
	// instead of its B−V as measured; the cuts still read the measured
	// color.
	Dereddened bool
}

// NumBins returns the number of flattened bins.
func (g Grid) NumBins() int {
	return (len(g.ColorEdges) - 1) * (len(g.LogPeriodEdges) - 1) * (len(g.HeightEdgesPc) - 1)
}

// ObserveOptions control Bank.Observe.
type ObserveOptions struct {
	Workers int // goroutines (0: GOMAXPROCS); results do not depend on it
	// BaseFractionScale is the binary fraction scale the bank's run used;
	// a different obs.Binaries.FractionScale re-weights binaries and single
	// stars by the ratio of their probabilities.
	BaseFractionScale float64
	// MinKernelDex is the smallest width (dex) of the period kernel: a
	// measured period is spread over the period bins by a Gaussian of the
	// recovery scatter, but never narrower than this, so that templates
	// move smoothly with the parameters (0: one step of the fine grid,
	// log10 2/32 ≈ 0.0094 dex).
	MinKernelDex float64
	// Weight, when not nil, multiplies each stored star's weight by
	// Weight(age bin, |z| in pc): the ratio of another disk's density to
	// the run's at the star's place (an importance weight), so that a
	// change of the disk's heating is re-observed without new stars. It
	// must be ≥ 0 and finite, and the same for every worker.
	Weight func(bin int, absZPc float64) float64
	// BandSlopes, when not empty, asks ObserveSlopes for the derivatives
	// of the counts in these nodes' values of obs's search completeness
	// (indices into spots.SearchCompleteness.RossbyBands, which obs must
	// set). Counts are linear in each node, so a derivative is exact and
	// holds wherever the node is: one pass gives what a re-observation per
	// node would by differences.
	BandSlopes []int
	// WeightSlopes, when not empty, asks ObserveSlopes for the first or
	// second derivatives of the counts in parameters that only re-weight
	// stored stars (WeightParam), returned after those of BandSlopes.
	WeightSlopes []WeightSlope
	// NoNewMemos marks a pass whose values the caller does not expect to
	// observe again, nor others that share what the memos keep of it — a
	// fit's side point, one parameter away from the centre it expands
	// about. The pass reads the memos but makes none: filling one costs a
	// write of every stored star (a tenth of a side point's time), and a
	// new memo would push out one the next passes read. Results do not
	// depend on it; a wrong guess costs time only.
	NoNewMemos bool

	noMemo bool // work every star's spin out afresh (tests of the memo)
}

// Observe returns, for every age bin k and grid bin i, the expected number
// of the bank's stars that obs's survey catalogs there (counts, k-major)
// and an upper bound on its Monte Carlo variance (vars). obs must be the
// bank's population with only the parts that observe stars changed:
// spin-down law and turnover time, spots, detection, recovery, color
// calibration, binary fraction scale and tidal locking, catalog cuts
// inside the bank's margins.
//
// Each star counts with its detection probability (not a random
// detection), and its measured period is spread over the period bins by
// the recovery model — a Gaussian in ln P of width RelScatter about P, P/2
// and 2P with their probabilities — so the templates are smooth functions
// of the parameters. The star's own random numbers (initial period,
// intrinsic scatter, tidal locking; spot amplitude) come from two streams
// seeded by its stored seed, the same for every obs: common random numbers,
// so that templates at neighbouring parameters differ by the change of
// the parameter, not by noise.
//
// How it is fast. A star is first placed, by linear (cloud-in-cell)
// weights, on a fine grid of log10 P with log10 2/32 dex steps; the
// recovery kernel (narrowed by the grid's own spread, δ²/6 in variance,
// so the total is the recovery's) then maps each fine bin to the period
// bins once per Observe instead of once per star. A star's variance
// contribution w² is spread the same way, which bounds Σ (w·fraction)²
// from above. Age bins are processed whole by one worker each: the sums do
// not depend on the number of workers.
func (b *Bank) Observe(ctx context.Context, obs *Population, g Grid, opts ObserveOptions) (counts, vars []float64, err error) {
	if len(opts.BandSlopes) > 0 || len(opts.WeightSlopes) > 0 {
		return nil, nil, errors.New("model: Bank.Observe returns no derivatives; ObserveSlopes does")
	}
	counts, vars, _, err = b.ObserveSlopes(ctx, obs, g, opts)
	return counts, vars, err
}

// ObserveSlopes is Observe that also returns, from the same pass,
// slopes[i] = ∂counts/∂RossbyBands[opts.BandSlopes[i]] (k-major, as
// counts), followed by the derivatives opts.WeightSlopes asks for
// (weightslopes.go). A completeness without RossbyBands is differentiated about
// bands of 1 at every node (the same counts, but for stars without a
// turnover time, which the bands then lose).
func (b *Bank) ObserveSlopes(ctx context.Context, obs *Population, g Grid, opts ObserveOptions) (counts, vars []float64, slopes [][]float64, err error) {
	if obs == nil || obs.Law == nil || !obs.Turnover.Valid() || obs.Relations == nil {
		return nil, nil, nil, errors.New("model: Bank.Observe needs a population with a law, a turnover time and relations")
	}
	for _, ax := range [][]float64{g.ColorEdges, g.LogPeriodEdges, g.HeightEdgesPc} {
		if len(ax) < 2 {
			return nil, nil, nil, errors.New("model: Bank.Observe needs at least two edges on every grid axis")
		}
	}
	if err := obs.Survey.Color.Validate(); err != nil {
		return nil, nil, nil, err
	}
	if err := obs.Survey.Recovery.Validate(); err != nil {
		return nil, nil, nil, err
	}
	if err := obs.Survey.Search.Validate(); err != nil {
		return nil, nil, nil, err
	}
	for _, node := range opts.BandSlopes {
		if n := len(spots.RossbyNodesD); node < 0 || node >= n {
			return nil, nil, nil, fmt.Errorf("model: a derivative in search-efficiency node %d asked; the nodes are 0 to %d", node, n-1)
		}
	}
	if err := checkWeightSlopes(opts.WeightSlopes, opts.BaseFractionScale); err != nil {
		return nil, nil, nil, err
	}
	if len(opts.BandSlopes) > 0 && len(obs.Survey.Search.RossbyBands) == 0 {
		// No band factor is a factor of 1 at every node: the derivatives
		// are taken about that.
		o := *obs
		o.Survey.Search.RossbyBands = make([]float64, len(spots.RossbyNodesD))
		for i := range o.Survey.Search.RossbyBands {
			o.Survey.Search.RossbyBands[i] = 1
		}
		obs = &o
	}
	if err := b.covers(obs); err != nil {
		return nil, nil, nil, err
	}
	workers := opts.Workers
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	ob := newObserver(b, obs, g, opts)
	if key, ok := seenKeyOf(obs); ok && b.seen != nil && !opts.noMemo {
		if ob.seen = b.seen.find(key); ob.seen == nil && !opts.NoNewMemos {
			ob.seenFill = b.seen.newMemo(key, b.Len())
		}
		defer b.seen.release(ob.seen)
	}
	if b.place != nil && !opts.noMemo {
		key := placeKeyOf(ob)
		if ob.columns = b.place.find(key); ob.columns == nil && !opts.NoNewMemos {
			ob.columnsFill = b.place.newMemo(key, b.Len())
		}
		defer b.place.release(ob.columns)
	}
	if b.input != nil && ob.plan.hasLog && !opts.noMemo {
		key := inputKeyOf(ob.plan)
		// As for the law memo: with the rotations known, new inputs would
		// hold only the few stars the seen memo lacks, and would push out
		// a full set.
		if ob.inputs = b.input.find(key); ob.inputs == nil && ob.seen == nil && !opts.NoNewMemos {
			ob.inputsFill = b.input.newMemo(key, b.Len())
		}
		defer b.input.release(ob.inputs)
	}
	if key, ok := keyOf(obs); ok && b.memos != nil && !opts.noMemo {
		// With the rotations known, a new law memo would hold only the
		// few stars the seen memo lacks: none is made.
		if ob.memo = b.memos.find(key); ob.memo == nil && ob.seen == nil && !opts.NoNewMemos {
			ob.fill = b.memos.newMemo(key, b.Len())
		}
		defer b.memos.release(ob.memo)
	}
	nk, nb := b.NumAgeBins(), g.NumBins()
	counts = make([]float64, nk*nb)
	vars = make([]float64, nk*nb)
	slopes = make([][]float64, len(opts.BandSlopes)+len(opts.WeightSlopes))
	for i := range slopes {
		slopes[i] = make([]float64, nk*nb)
	}
	var next atomic.Int64
	var wg sync.WaitGroup
	panics := workerpanic.New(nil)
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			defer panics.Catch()
			var lawSrc, spotSrc rand.PCG
			lawR, spotR := rand.New(&lawSrc), rand.New(&spotSrc)
			n := ob.nC * ob.nZ * ob.nF
			fine, fineVar := takeGrid(n), takeGrid(n)
			fineSlopes := make([][]float64, len(slopes))
			for i := range fineSlopes {
				fineSlopes[i] = takeGrid(n)
			}
			for {
				k := int(next.Add(1) - 1)
				if k >= nk || ctx.Err() != nil {
					// Every bin taken was spread: the grids are zero.
					giveGrids(append(fineSlopes, fine, fineVar))
					return
				}
				// The grids are zero: made so, and spread empties them.
				ob.bin(k, fine, fineVar, fineSlopes, &lawSrc, &spotSrc, lawR, spotR)
				ob.spread(fine, fineVar, counts[k*nb:(k+1)*nb], vars[k*nb:(k+1)*nb])
				for i, fs := range fineSlopes {
					ob.spread(fs, nil, slopes[i][k*nb:(k+1)*nb], nil)
				}
			}
		}()
	}
	wg.Wait()
	panics.Repanic()
	if err := ctx.Err(); err != nil {
		return nil, nil, nil, err
	}
	if ob.fill != nil {
		b.memos.add(ob.fill)
	}
	if ob.seenFill != nil {
		b.seen.add(ob.seenFill)
	}
	if ob.columnsFill != nil {
		b.place.add(ob.columnsFill)
	}
	if ob.inputsFill != nil {
		b.input.add(ob.inputsFill)
	}
	return counts, vars, slopes, nil
}

// covers reports cuts or a color calibration of obs that would need stars
// the bank did not keep: a color range or main-sequence band reaching past
// the bank's margins, a calibration that moves a color by more than the
// color margin, a height cut looser than the run's.
func (b *Bank) covers(obs *Population) error {
	c, m := obs.Cuts, b.Margin
	const tol = 1e-12
	switch {
	case c.BVMin < b.Cuts.BVMin-m.ColorMag-tol || c.BVMax > b.Cuts.BVMax+m.ColorMag+tol:
		return fmt.Errorf("model: color cut [%g, %g] reaches past the stored stars' [%g, %g] (the run's cut widened by the bank's margin of %g mag)", c.BVMin, c.BVMax, b.Cuts.BVMin-m.ColorMag, b.Cuts.BVMax+m.ColorMag, m.ColorMag)
	case c.MSBandBrightMag > b.Cuts.MSBandBrightMag+m.BandMag+tol || c.MSBandFaintMag > b.Cuts.MSBandFaintMag+m.BandMag+tol:
		return fmt.Errorf("model: main-sequence band (−%g, +%g mag) is wider than the stored stars' (−%g, +%g)", c.MSBandBrightMag, c.MSBandFaintMag, b.Cuts.MSBandBrightMag+m.BandMag, b.Cuts.MSBandFaintMag+m.BandMag)
	case c.MSBandDereddened != b.Cuts.MSBandDereddened:
		return fmt.Errorf("model: the main-sequence band is dereddened (%t) where the run's was not (%t); the stored stars were kept by the run's", c.MSBandDereddened, b.Cuts.MSBandDereddened)
	case b.Cuts.HeightMaxPc > 0 && (c.HeightMaxPc <= 0 || c.HeightMaxPc > b.Cuts.HeightMaxPc):
		return fmt.Errorf("model: height cut %g pc is looser than the run's %g pc; the bank holds no star beyond it", c.HeightMaxPc, b.Cuts.HeightMaxPc)
	}
	// The calibration is linear in B−V, so the largest move over the
	// color range is at one of its ends.
	for _, x := range []float64{b.Cuts.BVMin, b.Cuts.BVMax} {
		model := b.Color.Invert(x)
		if d := math.Abs(obs.Survey.Color.Apply(model) - x); d > m.ColorMag+tol {
			return fmt.Errorf("model: the color calibration (offset %g mag, scale %g) moves colors by %.3g mag at B−V %g, more than the bank's color margin of %g mag", obs.Survey.Color.OffsetMag, obs.Survey.Color.Scale, d, x, m.ColorMag)
		}
	}
	return nil
}

// fineStepDex is the step of the fine log-period grid: log10 2 / 32, so
// that half- and double-period aliases fall on whole fine bins.
var fineStepDex = math.Log10(2) / 32

// observer is one Observe call's shared, read-only state.
type observer struct {
	bank       *Bank
	obs        *Population
	plan       *rotationPlan // obs's rotations
	g          Grid
	cuts       Cuts
	recut      bool // the bank holds stars beyond the cuts: apply them
	sameNoise  bool // the survey noise is the bank's: read the stored noise
	baseScale  float64
	weight     func(bin int, absZPc float64) float64 // ObserveOptions.Weight
	slopeNodes []int                                 // ObserveOptions.BandSlopes
	// weightSlopes is ObserveOptions.WeightSlopes, and binarySlope
	// whether it holds the binary share.
	weightSlopes []WeightSlope
	binarySlope  bool
	// memo holds the stars' spins under obs's law, from an earlier
	// Observe; fill, when no memo was found, is the one this pass makes.
	// seen and seenFill are the same for the stars' rotations (seenMemo).
	memo, fill     *lawMemo
	seen, seenFill *seenMemo
	// columns and columnsFill are the same for the stars' columns (placeMemo),
	// inputs and inputsFill for their inputs (inputMemo).
	columns, columnsFill *placeMemo
	inputs, inputsFill   *inputMemo
	nC, nP, nZ           int
	// The fine grid: nF bins of fineStepDex from fineLo (log10 days).
	nF     int
	fineLo float64
	// kernel[f] lists the period bins fine bin f feeds and with what weight.
	kernel [][]kernelEntry
}

type kernelEntry struct {
	p int
	w float64
}

func newObserver(b *Bank, obs *Population, g Grid, opts ObserveOptions) *observer {
	cuts := obs.Cuts
	ob := &observer{
		bank: b, obs: obs, g: g, cuts: cuts, recut: b.Margin != BankMargin{},
		sameNoise: obs.Survey.Detect.Noise == b.Noise && b.NoisePpm != nil,
		baseScale: opts.BaseFractionScale, weight: opts.Weight, slopeNodes: opts.BandSlopes,
		weightSlopes: opts.WeightSlopes,
		nC:           len(g.ColorEdges) - 1, nP: len(g.LogPeriodEdges) - 1, nZ: len(g.HeightEdgesPc) - 1,
	}
	plan := obs.rotationPlan()
	ob.plan = &plan
	for _, w := range opts.WeightSlopes {
		ob.binarySlope = ob.binarySlope || w.Param == BinaryShare
	}
	rec := obs.Survey.Recovery
	delta := fineStepDex
	sigma := rec.RelScatter / math.Ln10
	// The cloud-in-cell placement spreads a star by δ²/6 in variance; the
	// kernel makes up the rest. A floor of a fine bin keeps templates
	// smooth in the parameters when the recovery has no scatter.
	sigK := math.Sqrt(math.Max(sigma*sigma-delta*delta/6, 0))
	minDex := opts.MinKernelDex
	if minDex <= 0 {
		minDex = delta
	}
	sigK = math.Max(sigK, minDex)
	reach := kernelReach*sigK + math.Log10(2) + delta
	lo := g.LogPeriodEdges[0] - reach
	hi := g.LogPeriodEdges[ob.nP] + reach
	ob.fineLo = lo
	ob.nF = int(math.Ceil((hi-lo)/delta)) + 1
	winLo, winHi := math.Inf(-1), math.Inf(1)
	if cuts.PeriodMinD > 0 {
		winLo = math.Log10(cuts.PeriodMinD)
	}
	if cuts.PeriodMaxD > 0 {
		winHi = math.Log10(cuts.PeriodMaxD)
	}
	comps := [3]struct{ shift, prob float64 }{
		{0, 1 - rec.HalfProb - rec.DoubleProb},
		{-math.Log10(2), rec.HalfProb},
		{math.Log10(2), rec.DoubleProb},
	}
	edges := g.LogPeriodEdges
	ob.kernel = make([][]kernelEntry, ob.nF)
	for f := range ob.nF {
		x := lo + float64(f)*delta // fine-bin node
		var row []kernelEntry
		for _, cp := range comps {
			if !(cp.prob > 0) {
				continue
			}
			mu := x + cp.shift
			a, e := mu-kernelReach*sigK, mu+kernelReach*sigK
			for pb := max(0, BinIndexBelow(edges, a)); pb < ob.nP && edges[pb] < e; pb++ {
				l, h := math.Max(edges[pb], winLo), math.Min(edges[pb+1], winHi)
				if !(h > l) {
					continue
				}
				w := cp.prob * (NormalCDF((h-mu)/sigK) - NormalCDF((l-mu)/sigK))
				if w <= 0 {
					continue
				}
				merged := false
				for i := range row {
					if row[i].p == pb {
						row[i].w += w
						merged = true
					}
				}
				if !merged {
					row = append(row, kernelEntry{pb, w})
				}
			}
		}
		ob.kernel[f] = row
	}
	return ob
}

// bin places the stars of age bin k on the fine grid of each (color,
// height) column: fine[(c·nZ + z)·nF + f], and their squared weights in
// fineVar.
//
// fineSlopes, one per node of ob.slopeNodes, receive each star's
// derivative in that node's value: its weight without the band factor
// times its interpolation weight on the node; then one per entry of
// ob.weightSlopes (addWeightSlopes).
func (ob *observer) bin(k int, fine, fineVar []float64, fineSlopes [][]float64, lawSrc, spotSrc *rand.PCG, lawR, spotR *rand.Rand) {
	b, p := ob.bank, ob.obs
	scale := p.Binaries.FractionScale
	reweight := scale != ob.baseScale && ob.baseScale > 0
	inv := 1 / fineStepDex
	place := ob.weight
	for s := b.Start[k]; s < b.Start[k+1]; s++ {
		col := placeUnknown
		if m := ob.columns; m != nil {
			col = m.st.col[s]
		}
		if col == placeUnknown {
			col = ob.column(s)
			if ob.columnsFill != nil {
				ob.columnsFill.st.col[s] = col
			}
		}
		if col == placeOut {
			continue
		}
		weight := 1.0
		dWeight := 0.0 // ∂weight/∂(binary share), when asked for
		comp := float64(b.CompanionMsun[s])
		if ob.binarySlope {
			dWeight = binaryWeightSlope(float64(b.BinaryFrac[s]), ob.baseScale, scale, comp > 0)
		}
		if reweight {
			f := float64(b.BinaryFrac[s])
			f0, f1 := min(1, ob.baseScale*f), min(1, scale*f)
			if comp > 0 {
				weight = f1 / f0
			} else if f0 < 1 {
				weight = (1 - f1) / (1 - f0)
			}
			if !(weight > 0) && dWeight == 0 {
				continue
			}
		}
		if place != nil {
			pw := place(k, float64(b.AbsZPc[s]))
			weight *= pw
			dWeight *= pw
			if !(weight > 0) && dWeight == 0 {
				continue
			}
		}
		var rot rotation
		seen := false
		if m := ob.seen; m != nil {
			if rot, seen = m.st.get(s); seen && rot.ok {
				ob.plan.searchFactor(&rot)
			}
		}
		if !seen {
			rot = ob.rotate(s, comp, lawSrc, spotSrc, lawR, spotR)
			if ob.seenFill != nil {
				ob.seenFill.st.put(s, rot)
			}
		}
		// A star no node value could make detectable adds nothing to any
		// derivative either; one with a zero band factor can still add
		// to them.
		if !rot.ok || !(rot.prob > 0 || len(fineSlopes) > 0 && rot.preSearch > 0) {
			continue
		}
		lg := rot.lnP * (1 / math.Ln10) // log10 of the period
		u := (lg - ob.fineLo) * inv
		if !(u >= 0) || u >= float64(ob.nF-1) {
			continue // too far outside the grid to reach it
		}
		i0 := int(u)
		frac := u - float64(i0)
		base := int(col)*ob.nF + i0
		if len(ob.slopeNodes) > 0 {
			ob.addSlopes(fineSlopes, base, frac, weight*rot.preSearch, rot.lnP, rot.lnTauRatio)
		}
		if len(ob.weightSlopes) > 0 {
			ob.addWeightSlopes(fineSlopes[len(ob.slopeNodes):], base, frac, weight, dWeight, &rot)
		}
		w := weight * rot.prob
		if !(w > 0) {
			continue
		}
		fine[base] += w * (1 - frac)
		fine[base+1] += w * frac
		w2 := w * w
		fineVar[base] += w2 * (1 - frac)
		fineVar[base+1] += w2 * frac
	}
}

// column returns stored star s's grid column c·nZ + z under obs's color
// calibration, or placeOut when the star is outside the grid or, for a
// bank with margins, the cuts.
func (ob *observer) column(s int) int32 {
	b := ob.bank
	bv := ob.obs.Survey.Color.Apply(float64(b.ModelBV[s]))
	if ob.recut && (!ob.cuts.InColorRange(bv) || !ob.cuts.OnMainSequence(ob.obs.Relations, bv, float64(b.ObsAbsMag[s]), float64(b.AV[s]))) {
		return placeOut
	}
	if ob.g.Dereddened {
		bv -= ebvPerAV * float64(b.AV[s])
	}
	c := BinIndex(ob.g.ColorEdges, bv)
	if c < 0 {
		return placeOut
	}
	z := BinIndex(ob.g.HeightEdgesPc, float64(b.AbsZPc[s]))
	if z < 0 {
		return placeOut
	}
	return int32(c*ob.nZ + z)
}

// rotate works out stored star s's rotation (with its companion of comp
// solar masses) through the law memo; under a law with a log form,
// through the star's inputs (inputMemo) too.
func (ob *observer) rotate(s int, comp float64, lawSrc, spotSrc *rand.PCG, lawR, spotR *rand.Rand) rotation {
	b, p := ob.bank, ob.obs
	seed := b.Seed[s]
	var noise float64
	if ob.sameNoise {
		noise = float64(b.NoisePpm[s])
	} else {
		noise = p.Survey.Detect.Noise.PpmPerCadence(float64(b.AppMag[s]))
	}
	var sp spinState
	known := false
	if m := ob.memo; m != nil {
		sp, known = m.st.get(s)
	}
	if ob.plan.hasLog && (!known || ob.inputsFill != nil || ob.hasInputs(s)) {
		// (With the spin known and no inputs kept, only the spot deviate
		// is needed: the path below draws it alone.)
		in := ob.inputsOf(s, comp, lawSrc, spotSrc, lawR, spotR)
		if !known {
			// The law's range reads the color and the age alone.
			sp = ob.plan.spinFromInputs(spin.Star{AgeGyr: float64(b.AgeGyr[s]), BV: float64(b.BVMain[s])}, &in)
			if ob.fill != nil {
				ob.fill.st.put(s, sp)
			}
		}
		z := math.NaN()
		if sp.ok && p.Spots != nil {
			z = in.zSpot
		}
		return ob.plan.observeRotationAt(sp, noise, z)
	}
	if !known {
		lawSrc.Seed(seed, 1)
		sp = ob.plan.spinPeriod(ob.star(s), comp, lawR)
		if ob.fill != nil {
			ob.fill.st.put(s, sp)
		}
	}
	spotSrc.Seed(seed, 2)
	return ob.plan.observeRotation(sp, noise, spotR)
}

// star returns what a spin-down law may know of stored star s.
func (ob *observer) star(s int) spin.Star {
	b := ob.bank
	return spin.Star{MassMsun: float64(b.MassMsun[s]), AgeGyr: float64(b.AgeGyr[s]), BV: float64(b.BVMain[s]), TeffK: float64(b.TeffK[s])}
}

// hasInputs reports whether the input memo holds stored star s.
func (ob *observer) hasInputs(s int) bool {
	m := ob.inputs
	return m != nil && m.st.known[s]
}

// inputsOf returns stored star s's inputs: from the input memo, or drawn
// (and kept when this pass fills the memo).
func (ob *observer) inputsOf(s int, comp float64, lawSrc, spotSrc *rand.PCG, lawR, spotR *rand.Rand) starInputs {
	if m := ob.inputs; m != nil {
		if in, ok := m.st.get(s); ok {
			return in
		}
	}
	in := ob.plan.drawInputs(ob.star(s), comp, ob.bank.Seed[s], lawSrc, spotSrc, lawR, spotR)
	if ob.inputsFill != nil {
		ob.inputsFill.st.put(s, in)
	}
	return in
}

// addSlopes adds a star of weight w before the search's factor, placed
// at fine bin base with weight frac on the next, to the derivatives in
// the nodes ob.slopeNodes.
func (ob *observer) addSlopes(fineSlopes [][]float64, base int, frac, w, lnP, lnTauRatio float64) {
	rest, k, f, banded := ob.plan.search.SplitBands(lnP, lnTauRatio)
	if !banded || !(rest > 0) {
		return
	}
	w *= rest
	for i, node := range ob.slopeNodes {
		var phi float64 // the star's interpolation weight on node
		switch node {
		case k:
			phi = 1 - f
		case k + 1:
			phi = f
		default:
			continue
		}
		if phi == 0 {
			continue
		}
		fineSlopes[i][base] += w * phi * (1 - frac)
		fineSlopes[i][base+1] += w * phi * frac
	}
}

// gridPool keeps the workers' fine grids between passes (a fit makes
// hundreds, each with a grid per derivative, and allocating them anew
// cost a few percent of its time in zeroing and collection). A grid goes
// back only zero, so one taken from the pool is as good as a new one.
var gridPool sync.Pool // of *[]float64

// takeGrid returns a zero grid of n values.
func takeGrid(n int) []float64 {
	if g, ok := gridPool.Get().(*[]float64); ok && len(*g) == n {
		return *g
	}
	return make([]float64, n)
}

// giveGrids hands zero grids back to the pool.
func giveGrids(gs [][]float64) {
	for _, g := range gs {
		gridPool.Put(&g)
	}
}

// spread maps one age bin's fine columns onto the period bins through the
// recovery kernel, into that bin's counts and variances (fineVar and vr
// nil: counts only), and leaves fine and fineVar zero for the next bin:
// zeroing each entry as it is read costs nothing, where clearing the
// grids apart cost a twentieth of a fit.
func (ob *observer) spread(fine, fineVar, cnt, vr []float64) {
	for c := range ob.nC {
		for z := range ob.nZ {
			col := fine[(c*ob.nZ+z)*ob.nF : (c*ob.nZ+z+1)*ob.nF]
			var colVar []float64 // nil for a derivative: no variance
			if fineVar != nil {
				colVar = fineVar[(c*ob.nZ+z)*ob.nF : (c*ob.nZ+z+1)*ob.nF]
			}
			base := c * ob.nP * ob.nZ
			for f, h := range col {
				var hv float64
				if colVar != nil {
					hv, colVar[f] = colVar[f], 0 // zero even where h is (an overflowed w² can leave NaN)
				}
				if h == 0 {
					continue
				}
				col[f] = 0
				if colVar == nil {
					for _, e := range ob.kernel[f] {
						cnt[base+e.p*ob.nZ+z] += h * e.w
					}
					continue
				}
				for _, e := range ob.kernel[f] {
					i := base + e.p*ob.nZ + z
					cnt[i] += h * e.w
					vr[i] += hv * e.w
				}
			}
		}
	}
}

// kernelReach is how many widths of the period kernel are spread: beyond
// 6σ the normal tail holds < 1e-9 of the weight.
const kernelReach = 6

// BinIndexBelow returns the index of the bin holding x, 0 below the first
// edge and the last bin above the last edge.
func BinIndexBelow(edges []float64, x float64) int {
	n := len(edges) - 1
	if !(x > edges[0]) {
		return 0
	}
	if x >= edges[n] {
		return n - 1
	}
	lo, hi := 0, n
	for hi-lo > 1 {
		mid := (lo + hi) / 2
		if x >= edges[mid] {
			lo = mid
		} else {
			hi = mid
		}
	}
	return lo
}
