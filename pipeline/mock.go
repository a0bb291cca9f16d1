package pipeline

import (
	"bufio"
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"slices"
	"strings"

	"spinpop/assemble"
	"spinpop/disk"
	"spinpop/model"
	"spinpop/scenarios"
)

// MockColumns are the columns of a mock catalog: what a rotation catalog
// built from photometry and astrometric distances would list. star_id is
// the star's number in the run, as in a simulated catalog (model's
// star_id column), so a mock star can be traced to the model star it was.
var MockColumns = []string{"star_id", "prot_d", "bv_mag", "vmag", "plx_mas", "ra_deg", "dec_deg"}

// MockTruthColumns follow MockColumns when MockOptions.Truth is set: what
// the model knows and no survey measures. detected is 1 when the survey
// measured a period (prot_d), 0 when it did not (prot_d empty).
var MockTruthColumns = []string{"true_age_gyr", "true_mass_msun", "true_binary", "true_period_d", "detected"}

// MockOptions describe a mock observed catalog.
type MockOptions struct {
	Source           string  // how the user named the scenario
	Stars            int64   // catalog stars to keep (> 0)
	ParallaxErrorMas float64 // standard deviation of the Gaussian parallax error
	// Truth adds MockTruthColumns and lists, besides the catalog stars,
	// every star the survey observed photometrically (inside the magnitude
	// limits, the color range and the main-sequence band) whose period did
	// not make the catalog: undetected (detected = 0, prot_d empty) or
	// measured outside the period window. Stars counts catalog stars in
	// both cases, so a truth mock holds the plain mock's rows (the same
	// values) and the others between them.
	Truth    bool
	Workers  int // 0: GOMAXPROCS
	Progress func(kept, total int64)
	// Built, if set, are the scenario's run objects, built already.
	Built *assemble.Built
}

var errEnough = errors.New("enough stars")

// MockDrawFactor bounds a mock's draw: at most this many times
// run.stars_generated stars are drawn, so that a scenario whose survey
// selects (almost) nothing ends instead of drawing for ever.
const MockDrawFactor = 1000

// Mock writes to w a mock observed catalog of the scenario's first
// o.Stars catalog stars in chunk order (a random subsample), as CSV with
// comment lines: star id, period, B−V, apparent V, parallax with Gaussian
// error and ICRS position (and the truth, see MockOptions.Truth). It
// returns the number of catalog stars written, which is smaller than
// o.Stars only when a thousand times run.stars_generated drawn stars hold
// fewer catalog stars.
func Mock(ctx context.Context, res *scenarios.Resolved, o MockOptions, w io.Writer) (int64, error) {
	s := &res.Scenario
	built := o.Built
	if built == nil {
		var err error
		if built, err = Build(s, o.Source); err != nil {
			return 0, err
		}
	}
	workers := o.Workers
	if workers <= 0 {
		workers = defaultWorkers()
	}
	var kept int64
	bw := bufio.NewWriter(w)
	fmt.Fprintf(bw, "# invented rotation catalog drawn by spinpop %s from scenario %q (sha256 %s), seed %d\n", Version, s.Name, res.Hash(), s.Run.Seed)
	fmt.Fprintf(bw, "# parallax error %g mas (Gaussian); vmag includes extinction; bv_mag is reddened\n", o.ParallaxErrorMas)
	cols := MockColumns
	if o.Truth {
		fmt.Fprintf(bw, "# with the truth: every star observed inside the magnitude limits, color range and main-sequence band; prot_d is empty where the survey measured no period, and rows with detected = 1 and a period outside the window are not catalog stars\n")
		cols = append(slices.Clone(cols), MockTruthColumns...)
	}
	bw.WriteString(strings.Join(cols, ","))
	bw.WriteByte('\n')
	const observed = model.FlagInMagRange | model.FlagInColorRange | model.FlagOnMainSeq
	var buf []byte
	err := model.RunChunks(ctx, s.Run.Seed, s.Run.StarsGenerated*MockDrawFactor, s.Run.ChunkStars, workers, built.Population.Fill,
		func(c *model.Chunk) error {
			// Parallax errors come from a stream of their own, tied to
			// the chunk, so the mock is as reproducible as the run.
			r := model.ChunkStream(s.Run.Seed^0x6d6f636b, c.Index)
			for i := 0; i < c.N; i++ {
				f := c.Flags[i]
				if f&observed != observed || f&model.FlagGone != 0 {
					continue
				}
				// One parallax error for every observed star, listed or
				// not, so that the plain and the truth mock agree.
				plxErr := o.ParallaxErrorMas * r.NormFloat64()
				selected := f.Selected()
				if !selected && !o.Truth {
					continue
				}
				plx := 1000/c.DistPc[i] + plxErr
				vmag := c.ObsAbsMag[i] + 5*math.Log10(c.DistPc[i]) - 5
				ra, dec := disk.GalacticToICRS(c.LDeg[i], c.BDeg[i])
				buf = buf[:0]
				buf = fmt.Appendf(buf, "%d,", int64(c.StarID[i]))
				if p := c.MeasPeriodD[i]; f&model.FlagDetected != 0 && !math.IsNaN(p) {
					buf = fmt.Appendf(buf, "%.4f", p)
				}
				buf = fmt.Appendf(buf, ",%.4f,%.4f,%.5f,%.6f,%.6f", c.ObsBV[i], vmag, plx, ra, dec)
				if o.Truth {
					buf = fmt.Appendf(buf, ",%.4f,%.4f,%d,", c.AgeGyr[i], c.MassMsun[i], flag01(f&model.FlagBinary))
					if p := c.PeriodD[i]; !math.IsNaN(p) {
						buf = fmt.Appendf(buf, "%.4f", p)
					}
					buf = fmt.Appendf(buf, ",%d", flag01(f&model.FlagDetected))
				}
				buf = append(buf, '\n')
				if _, err := bw.Write(buf); err != nil {
					return err
				}
				if !selected {
					continue
				}
				kept++
				if o.Progress != nil {
					o.Progress(kept, o.Stars)
				}
				if kept == o.Stars {
					return errEnough
				}
			}
			return nil
		})
	if err != nil && !errors.Is(err, errEnough) {
		return kept, err
	}
	return kept, bw.Flush()
}

func flag01(f model.Flag) int {
	if f != 0 {
		return 1
	}
	return 0
}
