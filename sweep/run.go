package sweep

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"runtime"
	"runtime/debug"
	"sync"
	"time"
)

// Worker does a sweep's work at one point.
type Worker interface {
	// Work runs the steps (a subset of Steps, in order) for point p,
	// writing any files into dir (empty at the start of each attempt), and
	// returns the headline numbers. It should stop soon when ctx is done.
	Work(ctx context.Context, p *Point, steps []string, dir string) (Headline, error)
}

// WorkFunc adapts a function to Worker.
type WorkFunc func(ctx context.Context, p *Point, steps []string, dir string) (Headline, error)

// Work calls f.
func (f WorkFunc) Work(ctx context.Context, p *Point, steps []string, dir string) (Headline, error) {
	return f(ctx, p, steps, dir)
}

// RunPoint runs the work at point pp of the plan unless its folder already
// holds a result for the same work (skipped = true). It resolves the
// point's scenario afresh and refuses to run when its hash is no longer the
// plan's (the sweep file or the base changed since the plan was made). A
// failed point gets failed.json with the error; an interruption (ctx done)
// leaves it missing.
func RunPoint(ctx context.Context, s *Sweep, out string, pp PlanPoint, w Worker) (skipped bool, err error) {
	if st, _ := PointStatus(out, pp.Hash, s.Work); st == StatusDone {
		return true, nil
	}
	p, err := s.Point(pp.Index)
	if err != nil {
		return false, err
	}
	if p.Hash != pp.Hash {
		return false, fmt.Errorf("point %d now resolves to scenario %.12s…, not %.12s… as planned: the sweep file or its base scenario changed since the plan was made; make the plan again (existing results are kept under their hashes)", pp.Index, p.Hash, pp.Hash)
	}
	dir := PointDir(out, p.Hash)
	for _, f := range []string{resultFile, failedFile} {
		if err := removeIfExists(filepath.Join(dir, f)); err != nil {
			return false, err
		}
	}
	pj, err := json.MarshalIndent(PlanPoint{Index: p.Index, Hash: p.Hash, Values: p.Values}, "", "  ")
	if err != nil {
		return false, err
	}
	if err := writeFile(filepath.Join(dir, pointFile), append(pj, '\n'), false); err != nil {
		return false, err
	}
	if err := writeFile(filepath.Join(dir, "scenario.toml"), p.Scenario.Canonical(), false); err != nil {
		return false, err
	}
	wd := filepath.Join(dir, workDir)
	if err := os.RemoveAll(wd); err != nil {
		return false, err
	}
	if err := os.MkdirAll(wd, 0o755); err != nil {
		return false, err
	}
	host, _ := os.Hostname()
	start := time.Now()
	h, werr := safeWork(ctx, w, p, s.Work, wd)
	r := Result{Index: p.Index, Hash: p.Hash, Work: s.Work, Values: p.Values, Host: host,
		ElapsedS: time.Since(start).Seconds(), Headline: h}
	if werr != nil {
		if ctx.Err() != nil {
			return false, werr // interrupted: stays missing
		}
		r.Status, r.Error = StatusFailed, werr.Error()
		r.Headline = Headline{}
		if err := writeJSON(filepath.Join(dir, failedFile), r); err != nil {
			return false, err
		}
		return false, werr
	}
	r.Status = StatusDone
	return false, writeJSON(filepath.Join(dir, resultFile), r)
}

// safeWork turns a panic in the work into the point's error, so that one
// bad point cannot stop the others.
func safeWork(ctx context.Context, w Worker, p *Point, steps []string, dir string) (h Headline, err error) {
	defer func() {
		if r := recover(); r != nil {
			err = fmt.Errorf("the work panicked: %v\n%s", r, debug.Stack())
		}
	}()
	return w.Work(ctx, p, steps, dir)
}

// Runner runs a sweep's points on this machine.
type Runner struct {
	Out     string    // the sweep's output folder
	Workers int       // points run at once (0: one per thread)
	Worker  Worker    // the work at each point
	Log     io.Writer // one line per finished point; nil for none
}

// Summary counts what a run did.
type Summary struct {
	Ran, Skipped, Failed int
	Failures             map[int]string // point index → error
}

// Run writes the plan, runs every point not already done (a failed point
// is recorded and the others go on), then merges the table. It returns
// ctx's error when interrupted; points left unfinished stay missing and
// the next run does them.
func (r *Runner) Run(ctx context.Context, s *Sweep, plan *Plan) (*Summary, error) {
	if err := WritePlan(filepath.Join(r.Out, "plan.json"), plan); err != nil {
		return nil, err
	}
	workers := r.Workers
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	sum := &Summary{Failures: map[int]string{}}
	var mu sync.Mutex
	next := make(chan PlanPoint)
	var wg sync.WaitGroup
	for range workers {
		wg.Go(func() {
			for pp := range next {
				start := time.Now()
				skipped, err := RunPoint(ctx, s, r.Out, pp, r.Worker)
				mu.Lock()
				switch {
				case skipped:
					sum.Skipped++
				case err != nil && ctx.Err() == nil:
					sum.Failed++
					sum.Failures[pp.Index] = err.Error()
					r.logf("point %d %.12s failed after %.1fs: %v", pp.Index, pp.Hash, time.Since(start).Seconds(), firstLine(err.Error()))
				case err == nil:
					sum.Ran++
					r.logf("point %d %.12s done in %.1fs", pp.Index, pp.Hash, time.Since(start).Seconds())
				}
				mu.Unlock()
			}
		})
	}
feed:
	for _, pp := range plan.Points {
		select {
		case next <- pp:
		case <-ctx.Done():
			break feed
		}
	}
	close(next)
	wg.Wait()
	if err := ctx.Err(); err != nil {
		return sum, err
	}
	if _, err := Merge(r.Out, plan); err != nil {
		return sum, err
	}
	return sum, nil
}

func (r *Runner) logf(format string, args ...any) {
	if r.Log != nil {
		fmt.Fprintf(r.Log, format+"\n", args...)
	}
}

func firstLine(s string) string {
	for i := range len(s) {
		if s[i] == '\n' {
			return s[:i]
		}
	}
	return s
}

// ErrPointsFailed is wrapped by errors that report failed points.
var ErrPointsFailed = errors.New("some points failed")
