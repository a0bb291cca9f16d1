package main

import (
	"bytes"
	"io"
	"os"
	"sync"
	"time"
)

// sweepProgress keeps a sweep's log alive while its points run side by
// side (their own progress reports are off, as they would interleave):
// the runner's log lines pass through, each finished point advances one
// bar over the whole sweep, and a ticker reports the bar so that, when
// stderr is not a terminal, a line appears every batchInterval even while
// no point finishes.
type sweepProgress struct {
	log  io.Writer
	bar  *progressBar
	mu   sync.Mutex
	done int64
	stop chan struct{}
	wg   sync.WaitGroup
}

// newSweepProgress wraps log (the runner's per-point log) for a sweep of
// points points; Close stops the ticker and ends the bar.
func newSweepProgress(log io.Writer, points int, tick time.Duration) *sweepProgress {
	return newSweepProgressClock(log, points, tick, time.Now)
}

// newSweepProgressClock is newSweepProgress on a given clock.
func newSweepProgressClock(log io.Writer, points int, tick time.Duration, now func() time.Time) *sweepProgress {
	terminal := false
	if f, ok := log.(*os.File); ok {
		if fi, err := f.Stat(); err == nil && fi.Mode()&os.ModeCharDevice != 0 {
			terminal = true
		}
	}
	sp := &sweepProgress{log: log, bar: newProgressTo(log, "sweep points", int64(points), terminal, now), stop: make(chan struct{})}
	sp.wg.Add(1)
	go func() {
		defer sp.wg.Done()
		t := time.NewTicker(tick)
		defer t.Stop()
		for {
			select {
			case <-t.C:
				sp.tick()
			case <-sp.stop:
				return
			}
		}
	}()
	return sp
}

// tick reports the bar (it prints only when its interval has passed).
func (sp *sweepProgress) tick() {
	sp.mu.Lock()
	defer sp.mu.Unlock()
	sp.bar.Update(sp.done)
}

// Write passes the runner's lines through and counts finished points
// (the runner writes one line per point that ran, failed or not).
func (sp *sweepProgress) Write(p []byte) (int, error) {
	sp.mu.Lock()
	defer sp.mu.Unlock()
	sp.done += int64(bytes.Count(p, []byte(" done in ")) + bytes.Count(p, []byte(" failed after ")))
	sp.bar.Update(sp.done)
	return sp.log.Write(p)
}

func (sp *sweepProgress) Close() {
	close(sp.stop)
	sp.wg.Wait()
	sp.bar.Done()
}
