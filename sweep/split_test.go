package sweep

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/assemble"
	"spinpop/model"
	"spinpop/scenarios"
)

// One run split across array tasks by chunk ranges, each task writing its
// tally and catalog rows, merged in chunk order by the merge job: the
// result must equal a one-machine run byte for byte. The catalog rows
// here are a stand-in written by the test (the program's catalog writer
// lives in the command-line program until the workflow package exists).

const (
	envSplitOut   = "SPINPOP_TEST_SPLIT_OUT"
	envSplitParts = "SPINPOP_TEST_SPLIT_PARTS"
	splitStars    = 300_000
	splitChunk    = 16_384
)

func splitBuilt() (*assemble.Built, error) {
	o, err := scenarios.ParseOverrides([]string{
		"run.stars_generated=" + strconv.Itoa(splitStars), "run.chunk_stars=" + strconv.Itoa(splitChunk)})
	if err != nil {
		return nil, err
	}
	res, err := scenarios.Resolve("example:base", o...)
	if err != nil {
		return nil, err
	}
	return assemble.Build(&res.Scenario)
}

func splitTally(b *assemble.Built) *model.Tally {
	return model.NewTally(b.AgeEdgesGyr, []float64{0.4, 0.6, 0.8, 1.0, 1.2, 1.4, 1.6}, []float64{-1, 0, 0.5, 1, 1.5, 2, 2.5}, []float64{0, 100, 200, 400, 800, 1600})
}

// rows appends the chunk's catalog stars as text rows.
func rows(b *bytes.Buffer, c *model.Chunk) {
	for i := 0; i < c.N; i++ {
		if !c.Flags[i].Selected() {
			continue
		}
		for j, x := range []float64{c.MassMsun[i], c.AgeGyr[i], c.ObsBV[i], c.AppMag[i], c.ZPc[i], c.MeasPeriodD[i]} {
			if j > 0 {
				b.WriteByte(',')
			}
			if math.IsNaN(x) {
				b.WriteString("nan")
			} else {
				b.WriteString(strconv.FormatFloat(x, 'g', 6, 64))
			}
		}
		b.WriteByte('\n')
	}
}

// runRange runs chunks r of the split run and returns its tally (JSON)
// and catalog rows.
func runRange(b *assemble.Built, r model.ChunkRange, workers int) ([]byte, []byte, error) {
	tl, cat := splitTally(b), new(bytes.Buffer)
	s := b.Scenario
	err := model.RunChunkRange(context.Background(), s.Run.Seed, s.Run.StarsGenerated, s.Run.ChunkStars, r, workers, b.Population.Fill,
		func(c *model.Chunk) error { tl.Add(c); rows(cat, c); return nil })
	if err != nil {
		return nil, nil, err
	}
	js, err := json.Marshal(tl)
	return js, cat.Bytes(), err
}

// splitPart is an array task: its chunk range of the run.
func splitPart() error {
	out := os.Getenv(envSplitOut)
	parts, err1 := strconv.Atoi(os.Getenv(envSplitParts))
	task, err2 := strconv.Atoi(os.Getenv(envTaskID))
	if out == "" || err1 != nil || err2 != nil {
		return fmt.Errorf("split part: %s, %s and %s must be set", envSplitOut, envSplitParts, envTaskID)
	}
	b, err := splitBuilt()
	if err != nil {
		return err
	}
	r := model.SplitChunks(model.NumChunks(splitStars, splitChunk), parts)[task]
	tl, cat, err := runRange(b, r, 1)
	if err != nil {
		return err
	}
	base := filepath.Join(out, fmt.Sprintf("part-%d-%d", r.First, r.Last))
	if err := writeFileAtomic(base+".rows", cat); err != nil {
		return err
	}
	return writeFileAtomic(base+".tally.json", tl)
}

// splitMerge is the merge job: parts in chunk order, checked to tile the
// run.
func splitMerge() error {
	out := os.Getenv(envSplitOut)
	names, err := filepath.Glob(filepath.Join(out, "part-*.tally.json"))
	if err != nil {
		return err
	}
	var ranges []model.ChunkRange
	for _, n := range names {
		var r model.ChunkRange
		if _, err := fmt.Sscanf(filepath.Base(n), "part-%d-%d.tally.json", &r.First, &r.Last); err != nil {
			return fmt.Errorf("%s: %w", n, err)
		}
		ranges = append(ranges, r)
	}
	order, err := model.ChunkOrder(ranges, model.NumChunks(splitStars, splitChunk))
	if err != nil {
		return err
	}
	b, err := splitBuilt()
	if err != nil {
		return err
	}
	merged, cat := splitTally(b), new(bytes.Buffer)
	for _, i := range order {
		raw, err := os.ReadFile(names[i])
		if err != nil {
			return err
		}
		var tl model.Tally
		if err := json.Unmarshal(raw, &tl); err != nil {
			return fmt.Errorf("%s: %w", names[i], err)
		}
		if err := merged.Merge(&tl); err != nil {
			return fmt.Errorf("%s: %w", names[i], err)
		}
		rowsPart, err := os.ReadFile(strings.TrimSuffix(names[i], ".tally.json") + ".rows")
		if err != nil {
			return err
		}
		cat.Write(rowsPart)
	}
	js, err := json.Marshal(merged)
	if err != nil {
		return err
	}
	if err := writeFileAtomic(filepath.Join(out, "merged.rows"), cat.Bytes()); err != nil {
		return err
	}
	return writeFileAtomic(filepath.Join(out, "merged.tally.json"), js)
}

func TestSlurmSplitRunEqualsOneMachine(t *testing.T) {
	needSlurm(t)
	out := t.TempDir()
	const parts = 4
	start := time.Now()
	ids, err := SubmitArray(context.Background(), ArrayJob{
		Name: "spinpop-split-test", Dir: filepath.Join(out, "slurm"), Seq: 1, Tasks: parts,
		Env:          []string{envSplitOut + "=" + out, envSplitParts + "=" + strconv.Itoa(parts)},
		Command:      []string{"/usr/bin/env", envRole + "=split-part", os.Args[0]},
		MergeCommand: []string{"/usr/bin/env", envRole + "=split-merge", os.Args[0]},
		Options:      SlurmOptions{Time: "0:10:00"},
	})
	require.NoError(t, err)

	// Meanwhile, the same run on one machine.
	b, err := splitBuilt()
	require.NoError(t, err)
	wantTally, wantRows, err := runRange(b, model.ChunkRange{First: 0, Last: model.NumChunks(splitStars, splitChunk)}, 0)
	require.NoError(t, err)
	require.NotEmpty(t, wantRows)

	waitJobs(t, 3*time.Minute, ids.ArrayJobID, ids.MergeJobID)
	t.Logf("split run in %d array tasks plus merge: %.1f s", parts, time.Since(start).Seconds())
	gotRows, err := os.ReadFile(filepath.Join(out, "merged.rows"))
	require.NoError(t, err, "the merge job wrote no catalog; see %s", filepath.Join(out, "slurm", "logs"))
	gotTally, err := os.ReadFile(filepath.Join(out, "merged.tally.json"))
	require.NoError(t, err)
	assert.True(t, bytes.Equal(wantRows, gotRows), "catalog rows differ from the one-machine run")
	assert.True(t, bytes.Equal(wantTally, gotTally), "tally differs from the one-machine run")
}
