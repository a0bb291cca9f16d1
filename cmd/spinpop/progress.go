package main

import (
	"fmt"
	"io"
	"os"
	"strings"
	"sync"
	"time"
)

// progressBar draws a one-line bar on stderr, but only when stderr is a
// terminal and only once the work has run for a second: short runs and logs
// piped to files stay clean.
type progressBar struct {
	mu      sync.Mutex
	w       io.Writer
	label   string
	total   int64
	start   time.Time
	enabled bool
	shown   bool
	last    time.Time
}

func newProgressBar(label string, total int64) *progressBar {
	p := &progressBar{w: os.Stderr, label: label, total: total, start: time.Now()}
	if fi, err := os.Stderr.Stat(); err == nil && fi.Mode()&os.ModeCharDevice != 0 {
		p.enabled = true
	}
	return p
}

// Update reports that done of total units are finished. Safe for
// concurrent use.
func (p *progressBar) Update(done int64) {
	if p == nil || !p.enabled {
		return
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	now := time.Now()
	if now.Sub(p.start) < time.Second || now.Sub(p.last) < 100*time.Millisecond {
		return
	}
	p.last = now
	p.shown = true
	frac := float64(done) / float64(max(p.total, 1))
	frac = min(max(frac, 0), 1)
	const width = 30
	n := int(frac * width)
	elapsed := now.Sub(p.start)
	eta := ""
	if frac > 0.01 {
		rem := time.Duration(float64(elapsed) * (1 - frac) / frac)
		eta = fmt.Sprintf(" eta %s", rem.Round(time.Second))
	}
	fmt.Fprintf(p.w, "\r%s [%s%s] %3.0f%% %s%s ", p.label, strings.Repeat("=", n), strings.Repeat(" ", width-n), 100*frac, elapsed.Round(time.Second), eta)
}

// Done clears the bar's line if one was drawn.
func (p *progressBar) Done() {
	if p == nil || !p.enabled {
		return
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	if p.shown {
		fmt.Fprintf(p.w, "\r%s\r", strings.Repeat(" ", 80))
	}
}
