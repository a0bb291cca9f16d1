package main

import (
	"bytes"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
)

// fakeClock moves only when the test says so.
type fakeClock struct{ t time.Time }

func (c *fakeClock) now() time.Time          { return c.t }
func (c *fakeClock) advance(d time.Duration) { c.t = c.t.Add(d) }

// In a batch log (stderr not a terminal) long work prints one plain line
// per ten seconds — no carriage returns — and a last line when it ends.
func TestProgressInBatchLogEveryTenSeconds(t *testing.T) {
	clk := &fakeClock{t: time.Date(2026, 1, 1, 0, 0, 0, 0, time.UTC)}
	var log bytes.Buffer
	p := newProgressTo(&log, "bootstrap", 1000, false, clk.now)
	// 65 s of work, an update every 100 ms: lines at 10, 20, …, 60 s.
	for i := 1; i <= 650; i++ {
		clk.advance(100 * time.Millisecond)
		p.Update(int64(i))
	}
	p.Done()
	out := log.String()
	assert.NotContains(t, out, "\r")
	lines := strings.Split(strings.TrimSpace(out), "\n")
	if assert.Len(t, lines, 7, out) {
		assert.Equal(t, "bootstrap: 100 of 1000 (10 %) after 10s, eta 1m30s", lines[0])
		assert.Equal(t, "bootstrap: 600 of 1000 (60 %) after 1m0s, eta 40s", lines[5])
		assert.Equal(t, "bootstrap: finished after 1m5s", lines[6])
	}
}

// Work shorter than the interval leaves the log silent, even at its end.
func TestProgressShortWorkSilent(t *testing.T) {
	clk := &fakeClock{t: time.Unix(0, 0)}
	var log bytes.Buffer
	p := newProgressTo(&log, "templates", 10, false, clk.now)
	for i := 1; i <= 10; i++ {
		clk.advance(500 * time.Millisecond)
		p.Update(int64(i))
	}
	p.Done()
	assert.Empty(t, log.String())
}

// Updates far apart in time still print at most one line each, and a
// stalled count still prints (the log shows the job is alive).
func TestProgressStalledWorkStillReports(t *testing.T) {
	clk := &fakeClock{t: time.Unix(0, 0)}
	var log bytes.Buffer
	p := newProgressTo(&log, "templates", 10, false, clk.now)
	clk.advance(25 * time.Second)
	p.Update(0)
	clk.advance(25 * time.Second)
	p.Update(0)
	lines := strings.Split(strings.TrimSpace(log.String()), "\n")
	assert.Equal(t, []string{"templates: 0 of 10 (0 %) after 25s", "templates: 0 of 10 (0 %) after 50s"}, lines)
}

// On a terminal the bar is redrawn in place and cleared at the end.
func TestProgressOnTerminalRedrawsInPlace(t *testing.T) {
	clk := &fakeClock{t: time.Unix(0, 0)}
	var out bytes.Buffer
	p := newProgressTo(&out, "simulating", 100, true, clk.now)
	for i := 1; i <= 30; i++ {
		clk.advance(200 * time.Millisecond)
		p.Update(int64(i))
	}
	p.Done()
	s := out.String()
	assert.NotContains(t, s, "\n")
	assert.Contains(t, s, "\rsimulating [")
	assert.True(t, strings.HasSuffix(s, "\r"))
}

// A sweep whose points run side by side logs the runner's lines, and a
// line over the whole sweep every ten seconds, also while no point ends.
func TestSweepProgressInBatchLog(t *testing.T) {
	clk := &fakeClock{t: time.Unix(0, 0)}
	var log bytes.Buffer
	sp := newSweepProgressClock(&log, 4, time.Hour, clk.now) // the test ticks by hand
	clk.advance(3 * time.Second)
	_, err := sp.Write([]byte("point 0 0123456789ab done in 3.0s\n"))
	assert.NoError(t, err)
	clk.advance(9 * time.Second)
	sp.tick() // 12 s: a line
	clk.advance(5 * time.Second)
	sp.tick() // 17 s: too soon
	clk.advance(5 * time.Second)
	_, err = sp.Write([]byte("point 1 ba9876543210 failed after 22.0s: boom\n")) // 22 s: a line
	assert.NoError(t, err)
	sp.Close()
	assert.Equal(t, "point 0 0123456789ab done in 3.0s\n"+
		"sweep points: 1 of 4 (25 %) after 12s, eta 36s\n"+
		"sweep points: 2 of 4 (50 %) after 22s, eta 22s\n"+
		"point 1 ba9876543210 failed after 22.0s: boom\n"+
		"sweep points: finished after 22s\n", log.String())
}

// Set-up between making the bar and the work (fits before a bootstrap,
// which reports Update(0) when it begins) does not inflate the eta: 3
// minutes of fits, then ten replicates in 10 s, leaves 50 replicates ≈
// 50 s, not the 16 minutes the time since the bar was made would give.
func TestProgressEtaFromWhenWorkBegan(t *testing.T) {
	clk := &fakeClock{t: time.Unix(0, 0)}
	var log bytes.Buffer
	p := newProgressTo(&log, "bootstrap", 60, false, clk.now)
	clk.advance(3 * time.Minute)
	p.Update(0)
	for i := 1; i <= 11; i++ {
		clk.advance(time.Second)
		p.Update(int64(i))
	}
	lines := strings.Split(strings.TrimSpace(log.String()), "\n")
	assert.Equal(t, "bootstrap: 0 of 60 (0 %) after 3m0s", lines[0])
	assert.Equal(t, "bootstrap: 10 of 60 (17 %) after 3m10s, eta 50s", lines[len(lines)-1])
}
