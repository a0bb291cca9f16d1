package main

import (
	"fmt"
	"io"
	"os"
	"strings"
	"sync"
	"time"
)

// progressBar shows how long work is getting on, on stderr, in one of two
// ways. On a terminal it draws a one-line bar, redrawn in place, once the
// work has run for a second (short runs stay clean). When stderr is not a
// terminal — a batch job's log file, a pipe — a redrawn line would fill
// the log with carriage returns, and silence for an hour looks like a hung
// job; there it prints one plain line every batchInterval instead, and a
// last line when the work ends if it printed any.
type progressBar struct {
	mu       sync.Mutex
	w        io.Writer
	now      func() time.Time // the clock; a test's fake one in tests
	label    string
	total    int64
	start    time.Time
	terminal bool // draw a bar (else: log lines)
	shown    bool
	last     time.Time
	done     int64
	// begun is when the work said it began (an Update(0) after the bar
	// was made): the eta's rate is measured from then, so that set-up done
	// between making the bar and the work (the fits before a bootstrap)
	// does not read as slow work.
	begun time.Time
}

// batchInterval is how often a batch job's log hears from long work.
const batchInterval = 10 * time.Second

// progressOff silences every progress report (a sweep running points
// side by side, whose reports would interleave).
var progressOff bool

func newProgressBar(label string, total int64) *progressBar {
	if progressOff {
		return newProgressTo(io.Discard, label, total, false, time.Now)
	}
	terminal := false
	if fi, err := os.Stderr.Stat(); err == nil && fi.Mode()&os.ModeCharDevice != 0 {
		terminal = true
	}
	return newProgressTo(os.Stderr, label, total, terminal, time.Now)
}

// newProgressTo is newProgressBar on a given writer and clock.
func newProgressTo(w io.Writer, label string, total int64, terminal bool, now func() time.Time) *progressBar {
	t := now()
	return &progressBar{w: w, now: now, label: label, total: total, start: t, last: t, terminal: terminal}
}

// Update reports that done of total units are finished. Safe for
// concurrent use.
func (p *progressBar) Update(done int64) {
	if p == nil {
		return
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	p.done = max(p.done, done)
	now := p.now()
	if done == 0 && p.begun.IsZero() {
		p.begun = now
	}
	if !p.terminal {
		if now.Sub(p.last) < batchInterval {
			return
		}
		p.last = now
		p.shown = true
		fmt.Fprintln(p.w, p.logLine(now))
		return
	}
	if now.Sub(p.start) < time.Second || now.Sub(p.last) < 100*time.Millisecond {
		return
	}
	p.last = now
	p.shown = true
	frac := p.fraction()
	const width = 30
	n := int(frac * width)
	elapsed := now.Sub(p.start)
	fmt.Fprintf(p.w, "\r%s [%s%s] %3.0f%% %s%s ", p.label, strings.Repeat("=", n), strings.Repeat(" ", width-n), 100*frac, elapsed.Round(time.Second), p.eta(now))
}

func (p *progressBar) fraction() float64 {
	frac := float64(p.done) / float64(max(p.total, 1))
	return min(max(frac, 0), 1)
}

// eta is " eta 1m20s" once a hundredth of the work is done, else "": the
// remaining units at the rate measured since the work began.
func (p *progressBar) eta(now time.Time) string {
	frac := p.fraction()
	if frac <= 0.01 {
		return ""
	}
	origin := p.start
	if !p.begun.IsZero() {
		origin = p.begun
	}
	rem := time.Duration(float64(now.Sub(origin)) * (1 - frac) / frac)
	return fmt.Sprintf(" eta %s", rem.Round(time.Second))
}

// logLine is one line of a batch job's log:
// "bootstrap: 450 of 1000 (45 %) after 1m20s, eta 1m38s".
func (p *progressBar) logLine(now time.Time) string {
	line := fmt.Sprintf("%s: %d of %d (%.0f %%) after %s", p.label, p.done, p.total, 100*p.fraction(), now.Sub(p.start).Round(time.Second))
	if eta := p.eta(now); eta != "" {
		line += "," + eta
	}
	return line
}

// Done clears the bar's line if one was drawn; in a log, it says the work
// ended, if the log heard of it before.
func (p *progressBar) Done() {
	if p == nil {
		return
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	if !p.shown {
		return
	}
	if p.terminal {
		fmt.Fprintf(p.w, "\r%s\r", strings.Repeat(" ", 80))
		return
	}
	fmt.Fprintf(p.w, "%s: finished after %s\n", p.label, p.now().Sub(p.start).Round(time.Second))
}
