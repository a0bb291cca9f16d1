package main

import (
	"bufio"
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"

	"spinpop/internal/outset"
	"spinpop/model"
	"spinpop/pipeline"
	"spinpop/scenarios"
	"spinpop/sweep"
)

// A very large simulate split across machines. The run's chunks are cut
// into --parts contiguous ranges (model.SplitChunks); each part runs its
// range exactly as the whole run would (streams from seed and chunk) and
// writes DIR/parts/part-FIRST-LAST.json (its tally) and .csv (its
// catalog rows); --merge-parts adds the tallies and concatenates the rows
// in chunk order, giving the catalog of a one-machine run byte for byte
// and its manifest's counts exactly. --slurm --parts N does both through
// a job array and a dependent merge job.

type splitFlags struct {
	parts int
	part  string // a part index, or "env" for SLURM_ARRAY_TASK_ID
	merge bool
	slurm slurmFlags
}

func addSplitFlags(fs *flag.FlagSet) *splitFlags {
	f := &splitFlags{}
	fs.IntVar(&f.parts, "parts", 0, "split the run into this many chunk ranges (with --part, --merge-parts or --slurm)")
	fs.StringVar(&f.part, "part", "", "run only part K (0 … parts−1) of the split run into DIR/parts/; \"env\" takes K from SLURM_ARRAY_TASK_ID")
	fs.BoolVar(&f.merge, "merge-parts", false, "merge the parts in DIR/parts/ into catalog.csv, manifest.json and plots, as one run would have written them")
	f.slurm.add(fs)
	return f
}

// active reports whether a split-run flag was given.
func (f *splitFlags) active() bool {
	return f.parts != 0 || f.part != "" || f.merge || f.slurm.slurm
}

// runSimulateSplit runs one of the split modes of simulate.
func runSimulateSplit(f *splitFlags, arg string, sets []string, seed uint64, out string, force bool, threads int, asJSON bool, stdout, stderr io.Writer) error {
	modes := 0
	for _, on := range []bool{f.part != "", f.merge, f.slurm.slurm} {
		if on {
			modes++
		}
	}
	if modes != 1 {
		return usageErrorf("simulate: give one of --part K, --merge-parts or --slurm (with --parts N)")
	}
	if !f.slurm.slurm && f.slurm.stray() != "" {
		return usageErrorf("%s apply only with --slurm", f.slurm.stray())
	}
	if out == "" {
		return usageErrorf("--out DIR is required: the folder the parts and the merged run share")
	}
	res, err := loadScenario(arg, sets)
	if err != nil {
		return err
	}
	if seed != 0 {
		res.Scenario.Run.Seed = seed
	}
	s := &res.Scenario
	nChunks := model.NumChunks(s.Run.StarsGenerated, s.Run.ChunkStars)
	switch {
	case f.merge:
		return mergeSimParts(res, arg, out, force, threads, asJSON, stdout, stderr)
	case f.parts < 1:
		return usageErrorf("--parts N (at least 1) is needed with --part and --slurm")
	case f.slurm.slurm:
		return submitSimParts(f, res, arg, sets, seed, out, stdout)
	}
	k, err := partIndex(f.part)
	if err != nil {
		return err
	}
	ranges := model.SplitChunks(nChunks, f.parts)
	if k >= len(ranges) {
		return usageErrorf("--part %d: the run has %d chunks, so --parts %d gives parts 0 to %d", k, nChunks, f.parts, len(ranges)-1)
	}
	return runSimPart(res, arg, out, ranges[k], threads, stdout)
}

func partIndex(s string) (int, error) {
	from := "--part"
	if s == "env" {
		s, from = os.Getenv("SLURM_ARRAY_TASK_ID"), "SLURM_ARRAY_TASK_ID"
	}
	k, err := strconv.Atoi(s)
	if err != nil || k < 0 {
		return 0, usageErrorf("%s = %q: want a part index 0, 1, … (or --part env inside a Slurm job array)", from, s)
	}
	return k, nil
}

// simPart is a part's record: which run and which chunks, its time and
// its tally.
type simPart struct {
	ScenarioHash string           `json:"scenario_sha256"`
	Seed         uint64           `json:"seed"`
	Chunks       model.ChunkRange `json:"chunks"`
	Seconds      float64          `json:"seconds"`
	Host         string           `json:"host"`
	Tally        *model.Tally     `json:"tally"`
}

func partBase(out string, r model.ChunkRange) string {
	return filepath.Join(out, "parts", fmt.Sprintf("part-%d-%d", r.First, r.Last))
}

// runSimPart runs one chunk range, writing its rows and then its record
// (the record last, so that a record means a whole part).
func runSimPart(res *scenarios.Resolved, arg, out string, r model.ChunkRange, threads int, stdout io.Writer) error {
	base := partBase(out, r)
	if err := os.MkdirAll(filepath.Dir(base), 0o755); err != nil {
		return err
	}
	rowsPath := base + ".csv"
	tmp, err := os.CreateTemp(filepath.Dir(base), ".part-*.partial")
	if err != nil {
		return err
	}
	defer func() {
		if tmp != nil {
			tmp.Close()
			os.Remove(tmp.Name())
		}
	}()
	var cat *pipeline.CatalogWriter
	if res.Scenario.Output.Catalog {
		cat = pipeline.NewCatalogWriter(tmp)
	}
	// Parts of one run write into one folder from many machines at once,
	// so a part is not an output set (which locks the folder): each of its
	// two files is written whole, the record last.
	ctx, stop := signalContext()
	defer stop()
	max := res.Scenario.Output.CatalogMaxStars
	sim, err := pipeline.Simulate(ctx, res, pipeline.SimulateOptions{Source: arg, Workers: threads, Chunks: &r,
		Visit: func(c *model.Chunk) error {
			if cat == nil || cat.Rows() > max {
				return nil
			}
			return cat.Add(c)
		}})
	if err != nil {
		if ctx.Err() != nil {
			return runFailuref("interrupted; part %s was not written", r)
		}
		return err
	}
	if cat != nil {
		if err := cat.Flush(); err != nil {
			return err
		}
	}
	if err := tmp.Close(); err != nil {
		return err
	}
	if err := os.Chmod(tmp.Name(), 0o644); err != nil {
		return err
	}
	if err := os.Rename(tmp.Name(), rowsPath); err != nil {
		return err
	}
	tmp = nil
	host, _ := os.Hostname()
	rec := simPart{ScenarioHash: res.Hash(), Seed: res.Scenario.Run.Seed, Chunks: r, Seconds: sim.Manifest.Seconds, Host: host, Tally: sim.Tally}
	if err := writeJSONFile(base+".json", rec); err != nil {
		return err
	}
	fmt.Fprintf(stdout, "part %s of scenario %.16s…: %d stars, %d catalog stars in %.1f s; wrote %s.json and .csv\n",
		r, res.Hash(), sim.Tally.StepCounts[0], sim.Tally.Selected(), sim.Manifest.Seconds, base)
	return nil
}

// mergeSimParts merges every part record in DIR/parts (checked to be of
// this scenario and seed and to tile the run) into the outputs of a
// one-machine run.
func mergeSimParts(res *scenarios.Resolved, arg, out string, force bool, threads int, asJSON bool, stdout, stderr io.Writer) error {
	s := &res.Scenario
	names, err := filepath.Glob(filepath.Join(out, "parts", "part-*.json"))
	if err != nil {
		return err
	}
	if len(names) == 0 {
		return usageErrorf("%s holds no parts (parts/part-*.json); run simulate --part K --parts N --out %s first", out, out)
	}
	for _, f := range []string{"catalog.csv", "manifest.json"} {
		if _, err := os.Stat(filepath.Join(out, f)); err == nil && !force {
			return usageErrorf("%s already holds %s; pass --force to replace it with the merged run", out, f)
		}
	}
	var parts []simPart
	var ranges []model.ChunkRange
	var problems []string
	for _, n := range names {
		b, err := os.ReadFile(n)
		if err != nil {
			return err
		}
		var p simPart
		if err := json.Unmarshal(b, &p); err != nil || p.Tally == nil {
			problems = append(problems, fmt.Sprintf("%s is not a part record (%v); run that part again", n, err))
			continue
		}
		if p.ScenarioHash != res.Hash() || p.Seed != s.Run.Seed {
			problems = append(problems, fmt.Sprintf("%s is a part of scenario %.16s… seed %d, not of this one (%.16s… seed %d); remove it or merge with that scenario",
				n, p.ScenarioHash, p.Seed, res.Hash(), s.Run.Seed))
			continue
		}
		parts = append(parts, p)
		ranges = append(ranges, p.Chunks)
	}
	if len(problems) > 0 {
		return inputError{errors.New(strings.Join(problems, "\n"))}
	}
	order, err := model.ChunkOrder(ranges, model.NumChunks(s.Run.StarsGenerated, s.Run.ChunkStars))
	if err != nil {
		return inputError{fmt.Errorf("%s: %w", filepath.Join(out, "parts"), err)}
	}
	tallies := make([]*model.Tally, len(order))
	seconds := 0.0
	for i, k := range order {
		tallies[i] = parts[k].Tally
		seconds += parts[k].Seconds
	}
	sim, err := pipeline.MergeParts(res, arg, tallies, threads, seconds)
	if err != nil {
		return err
	}
	m := &sim.Manifest
	// The merged run is an output set like a one-machine run's (the parts
	// folder beside it is not part of it, hence Force once checked above).
	set, err := openOutDir(out, true, stderr)
	if err != nil {
		return err
	}
	defer set.Close()
	if s.Output.Catalog && !sim.CatalogTooLarge {
		if err := concatParts(set, "catalog.csv", out, parts, order); err != nil {
			return err
		}
		m.CatalogWritten = true
		m.Outputs = append(m.Outputs, "catalog.csv")
	}
	if s.Output.Plots {
		plots, err := writeSimulationPlots(set, "", s, sim.Tally, gyroCurves(sim.Gyrochrones))
		if err != nil {
			return err
		}
		m.Outputs = append(m.Outputs, plots...)
	}
	m.Warnings = append(m.Warnings, fmt.Sprintf("merged from %d parts run separately; seconds is their summed time", len(parts)))
	m.Outputs = append(m.Outputs, "manifest.json")
	man := *m
	man.Resolved = string(res.Canonical())
	if err := writeJSON(set, "manifest.json", man); err != nil {
		return err
	}
	if _, err := publish(set); err != nil {
		return err
	}
	m.Gyrochrones = nil
	return printSummary(stdout, m, asJSON)
}

// concatParts writes the catalog: the header once, then each part's
// rows in chunk order.
func concatParts(set *outset.Set, name, out string, parts []simPart, order []int) error {
	return set.Write(name, func(w io.Writer) error {
		for i, k := range order {
			f, err := os.Open(partBase(out, parts[k].Chunks) + ".csv")
			if err != nil {
				return fmt.Errorf("the part's catalog rows: %w", err)
			}
			br := bufio.NewReaderSize(f, 1<<20)
			header, err := br.ReadString('\n')
			if err != nil {
				f.Close()
				return fmt.Errorf("%s: no header line: %w", f.Name(), err)
			}
			if i == 0 {
				if _, err := io.WriteString(w, header); err != nil {
					f.Close()
					return err
				}
			}
			_, err = io.Copy(w, br)
			f.Close()
			if err != nil {
				return err
			}
		}
		return nil
	})
}

// submitSimParts sends the parts as a job array and the merge as a job
// that runs after it.
func submitSimParts(f *splitFlags, res *scenarios.Resolved, arg string, sets []string, seed uint64, out string, stdout io.Writer) error {
	opt, err := f.slurm.options()
	if err != nil {
		return err
	}
	exe, err := selfForJobs()
	if err != nil {
		return err
	}
	absOut, err := filepath.Abs(out)
	if err != nil {
		return err
	}
	scen := arg
	if !strings.HasPrefix(arg, scenarios.ExamplePrefix) {
		if scen, err = filepath.Abs(arg); err != nil {
			return err
		}
	}
	if err := os.MkdirAll(absOut, 0o755); err != nil {
		return err
	}
	s := &res.Scenario
	ranges := model.SplitChunks(model.NumChunks(s.Run.StarsGenerated, s.Run.ChunkStars), f.parts)
	threads := max(f.slurm.cpus, 1)
	common := []string{"--out", absOut, "--threads", strconv.Itoa(threads)}
	if seed != 0 {
		common = append(common, "--seed", strconv.FormatUint(seed, 10))
	}
	for _, kv := range sets {
		common = append(common, "--set", kv)
	}
	task := append([]string{exe, "simulate", scen, "--parts", strconv.Itoa(f.parts), "--part", "env"}, common...)
	merge := append([]string{exe, "simulate", scen, "--merge-parts", "--force"}, common...)
	dir := filepath.Join(absOut, "slurm")
	seq, err := nextSlurmSeq(dir)
	if err != nil {
		return err
	}
	ids, err := sweep.SubmitArray(context.Background(), sweep.ArrayJob{
		Name: "spinpop-simulate-" + s.Name, Dir: dir, Seq: seq, Tasks: len(ranges),
		Command: task, MergeCommand: merge, Options: opt,
	})
	if err != nil {
		return err
	}
	fmt.Fprintf(stdout, "simulate %q: %d parts of %d chunks submitted as job array %s, merge job %s after it\n",
		s.Name, len(ranges), model.NumChunks(s.Run.StarsGenerated, s.Run.ChunkStars), ids.ArrayJobID, ids.MergeJobID)
	fmt.Fprintf(stdout, "scripts: %s, %s; logs in %s\n", ids.ArrayScript, ids.MergeScript, filepath.Join(dir, "logs"))
	return nil
}

// nextSlurmSeq is the next free script number in dir (array-N.sh).
func nextSlurmSeq(dir string) (int, error) {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return 0, err
	}
	names, _ := filepath.Glob(filepath.Join(dir, "array-*.sh"))
	var seqs []int
	for _, n := range names {
		if k, err := strconv.Atoi(strings.TrimSuffix(strings.TrimPrefix(filepath.Base(n), "array-"), ".sh")); err == nil {
			seqs = append(seqs, k)
		}
	}
	sort.Ints(seqs)
	if len(seqs) == 0 {
		return 1, nil
	}
	return seqs[len(seqs)-1] + 1, nil
}
