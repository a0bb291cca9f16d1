package main

import (
	"bufio"
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"os/signal"
	"runtime"

	"spinpop/compare/catalog"
	"spinpop/model"
)

// mockColumns are the columns of a mock catalog: what a rotation catalog
// built from space photometry and astrometric distances would list.
var mockColumns = []string{"source_id", "prot_d", "bv_mag", "vmag", "plx_mas", "ra_deg", "dec_deg"}

var errEnough = errors.New("enough stars")

func runMock(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("mock", "mock SCENARIO --out FILE --stars N [--seed N] [--parallax-error-mas X]",
		"Draw a mock observed catalog of N catalogue stars from a scenario — selection included — in\n"+
			"the form an observed catalog takes: period, B−V, apparent V, parallax (with Gaussian error)\n"+
			"and ICRS position. Use it to make invented test catalogs, or to see what a catalog of your\n"+
			"size would look like under a hypothesis. The first N catalogue stars in chunk order are\n"+
			"kept, which is a random subsample.", stdout)
	out := fs.String("out", "", "catalog file to write (must not exist unless --force)")
	n := fs.Int64("stars", 0, "catalogue stars to keep")
	seed := fs.Uint64("seed", 0, "random seed, overriding run.seed (0 keeps the scenario's)")
	plxErr := fs.Float64("parallax-error-mas", 0.02, "standard deviation of the parallax error (mas)")
	force := fs.Bool("force", false, "replace an existing file")
	pos, err := parseInterleaved(fs, args)
	if err != nil {
		return err
	}
	path, err := oneScenarioArg(pos, "mock")
	if err != nil {
		return err
	}
	if *out == "" {
		return usageErrorf("--out FILE is required")
	}
	if *n <= 0 {
		return usageErrorf("--stars must be a positive number of catalogue stars")
	}
	if !(*plxErr >= 0) {
		return usageErrorf("--parallax-error-mas must be ≥ 0")
	}
	if _, err := os.Stat(*out); err == nil && !*force {
		return usageErrorf("%s exists; choose another name or pass --force to replace it", *out)
	}
	res, err := loadScenario(path, scenarioSets(fs))
	if err != nil {
		return err
	}
	s := &res.Scenario
	if *seed != 0 {
		s.Run.Seed = *seed
	}
	built, err := scenariosBuild(s, path)
	if err != nil {
		return err
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
	var kept int64
	bar := newProgressBar("mock", *n)
	err = writeFileAtomic(*out, func(w io.Writer) error {
		bw := bufio.NewWriter(w)
		fmt.Fprintf(bw, "# invented rotation catalog drawn by spinpop %s from scenario %q (sha256 %s), seed %d\n", version, s.Name, res.Hash(), s.Run.Seed)
		fmt.Fprintf(bw, "# parallax error %g mas (Gaussian); vmag includes extinction; bv_mag is reddened\n", *plxErr)
		for i, c := range mockColumns {
			if i > 0 {
				bw.WriteByte(',')
			}
			bw.WriteString(c)
		}
		bw.WriteByte('\n')
		var buf []byte
		err := model.RunChunks(ctx, s.Run.Seed, s.Run.StarsGenerated*1000, s.Run.ChunkStars, runtime.GOMAXPROCS(0), built.Population.Fill,
			func(c *model.Chunk) error {
				// Parallax errors come from a stream of their own, tied to
				// the chunk, so the mock is as reproducible as the run.
				r := model.ChunkStream(s.Run.Seed^0x6d6f636b, c.Index)
				for i := 0; i < c.N; i++ {
					if !c.Flags[i].Selected() {
						continue
					}
					plx := 1000/c.DistPc[i] + *plxErr*r.NormFloat64()
					vmag := c.ObsAbsMag[i] + 5*math.Log10(c.DistPc[i]) - 5
					ra, dec := catalog.GalacticToICRS(c.LDeg[i], c.BDeg[i])
					buf = buf[:0]
					buf = fmt.Appendf(buf, "%d,%.4f,%.4f,%.4f,%.5f,%.6f,%.6f\n", kept+1, c.MeasPeriodD[i], c.ObsBV[i], vmag, plx, ra, dec)
					if _, err := bw.Write(buf); err != nil {
						return err
					}
					kept++
					bar.Update(kept)
					if kept == *n {
						return errEnough
					}
				}
				return nil
			})
		if err != nil && !errors.Is(err, errEnough) {
			return err
		}
		return bw.Flush()
	})
	bar.Done()
	if err != nil {
		if ctx.Err() != nil {
			return fmt.Errorf("interrupted; %s was not written", *out)
		}
		return err
	}
	fmt.Fprintf(stdout, "wrote %d stars to %s\n", kept, *out)
	return nil
}
