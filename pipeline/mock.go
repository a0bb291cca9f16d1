package pipeline

import (
	"bufio"
	"context"
	"errors"
	"fmt"
	"io"
	"math"

	"spinpop/assemble"
	"spinpop/disk"
	"spinpop/model"
	"spinpop/scenarios"
)

// MockColumns are the columns of a mock catalog: what a rotation catalog
// built from space photometry and astrometric distances would list.
var MockColumns = []string{"source_id", "prot_d", "bv_mag", "vmag", "plx_mas", "ra_deg", "dec_deg"}

// MockOptions describe a mock observed catalog.
type MockOptions struct {
	Source           string  // how the user named the scenario
	Stars            int64   // catalog stars to keep (> 0)
	ParallaxErrorMas float64 // standard deviation of the Gaussian parallax error
	Workers          int     // 0: GOMAXPROCS
	Progress         func(kept, total int64)
	// Built, if set, are the scenario's run objects, built already.
	Built *assemble.Built
}

var errEnough = errors.New("enough stars")

// Mock writes to w a mock observed catalog of the scenario's first
// o.Stars catalog stars in chunk order (a random subsample), as CSV with
// comment lines: period, B−V, apparent V, parallax with Gaussian error and
// ICRS position. It returns the number of stars written, which is smaller
// than o.Stars only when a thousand times run.stars_generated drawn stars
// hold fewer catalog stars.
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
	for i, c := range MockColumns {
		if i > 0 {
			bw.WriteByte(',')
		}
		bw.WriteString(c)
	}
	bw.WriteByte('\n')
	var buf []byte
	err := model.RunChunks(ctx, s.Run.Seed, s.Run.StarsGenerated*1000, s.Run.ChunkStars, workers, built.Population.Fill,
		func(c *model.Chunk) error {
			// Parallax errors come from a stream of their own, tied to
			// the chunk, so the mock is as reproducible as the run.
			r := model.ChunkStream(s.Run.Seed^0x6d6f636b, c.Index)
			for i := 0; i < c.N; i++ {
				if !c.Flags[i].Selected() {
					continue
				}
				plx := 1000/c.DistPc[i] + o.ParallaxErrorMas*r.NormFloat64()
				vmag := c.ObsAbsMag[i] + 5*math.Log10(c.DistPc[i]) - 5
				ra, dec := disk.GalacticToICRS(c.LDeg[i], c.BDeg[i])
				buf = buf[:0]
				buf = fmt.Appendf(buf, "%d,%.4f,%.4f,%.4f,%.5f,%.6f,%.6f\n", kept+1, c.MeasPeriodD[i], c.ObsBV[i], vmag, plx, ra, dec)
				if _, err := bw.Write(buf); err != nil {
					return err
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
