package pipeline

import (
	"bufio"
	"fmt"
	"math"
	"os"
	"runtime"
	"strconv"
	"strings"
	"time"

	"spinpop/assemble"
	"spinpop/model"
)

// A run's cost is estimated before it starts, from a measurement rather
// than a table of machine speeds: a probe makes a few tens of thousands of
// the scenario's own stars on one thread (Population.Fill, the whole
// per-star path) and times them. The probe draws from a stream no run
// uses, so it changes no result.

// Estimate is the expected cost of making stars stars of a scenario on
// this machine.
type Estimate struct {
	Stars   int64 `json:"stars"`
	Threads int   `json:"threads"`
	CPUs    int   `json:"cpus"`
	// ProbeStars stars of the scenario took ProbeSeconds on one thread.
	ProbeStars   int     `json:"probe_stars"`
	ProbeSeconds float64 `json:"probe_seconds"`
	// Speedup is what Threads threads are assumed to gain over one (see
	// threadSpeedup).
	Speedup float64 `json:"speedup"`
	// Seconds is the expected run time: Stars × ProbeSeconds/ProbeStars
	// / Speedup.
	Seconds float64 `json:"seconds"`
	// CatalogStars is the expected size of the catalog, from the share
	// of the probe's stars that ended in it.
	CatalogStars float64 `json:"catalog_stars"`
	// PeakBytes is the expected peak memory (see memoryPeak).
	PeakBytes int64 `json:"peak_bytes"`
	// AvailableBytes is the memory this process may use (MemAvailable,
	// or a smaller cgroup limit); 0 when unknown.
	AvailableBytes int64 `json:"available_bytes"`
}

// MaxRunSeconds is the longest run a command starts without --yes. A run
// past a day on one machine belongs on many (split runs, spinpop's
// sweeps on Slurm), and is more often a typo in a star count than a plan.
const MaxRunSeconds = 24 * 3600

// Probe limits: at most probeMaxStars stars, stopping after probeSeconds
// (a scenario that makes stars slowly is measured on fewer), in chunks of
// probeChunk. A tenth of a second, not a few milliseconds: on a machine
// shared with other work a short burst runs at the core's full speed and
// promised twice the speed a long run got (measured here under a load
// average of 11 on 2 cores: a 20 ms probe said 10 s, the run took 18 s).
const (
	probeMaxStars = 1 << 18
	probeChunk    = 1 << 12
	probeSeconds  = 0.1
	// probeSeed is xored into the run's seed so the probe's stars are not
	// the run's first chunk (which would make a warm-up look like a
	// result); any constant would do.
	probeSeed = 0x5ca1ab1e
)

// EstimateRun measures the cost of the scenario's stars (see Estimate).
// keepCatalog says the catalog is held in memory (SimulateOptions.KeepCatalog).
func EstimateRun(b *assemble.Built, stars int64, chunkStars, workers int, keepCatalog bool) Estimate {
	if workers <= 0 {
		workers = defaultWorkers()
	}
	e := Estimate{Stars: stars, Threads: workers, CPUs: runtime.NumCPU()}
	c := model.NewChunk(probeChunk)
	selected := 0
	start := time.Now()
	for i := 0; e.ProbeStars < probeMaxStars; i++ {
		c.Index = i
		c.N = probeChunk
		b.Population.Fill(c, model.ChunkStream(b.Scenario.Run.Seed^probeSeed, i))
		for j := 0; j < c.N; j++ {
			if c.Flags[j].Selected() {
				selected++
			}
		}
		e.ProbeStars += c.N
		if time.Since(start).Seconds() > probeSeconds {
			break
		}
	}
	e.ProbeSeconds = time.Since(start).Seconds()
	e.Speedup = threadSpeedup(min(workers, e.CPUs))
	e.Seconds = float64(stars) * e.ProbeSeconds / float64(e.ProbeStars) / e.Speedup
	e.CatalogStars = float64(stars) * float64(selected) / float64(e.ProbeStars)
	catalogStars := 0.0
	if keepCatalog {
		catalogStars = math.Min(e.CatalogStars, float64(b.Scenario.Output.CatalogMaxStars))
	}
	e.PeakBytes = memoryPeak(workers, min(int64(chunkStars), max(stars, 1)), catalogStars)
	e.AvailableBytes = availableMemory()
	return e
}

// threadSpeedup is what t threads gain over one: each thread past the
// first is counted as 0.65 of one. On the shared machines spinpop is
// developed on, two threads measured 1.3× to 2× one (DEVELOPERS.md,
// Benchmarks); 1.65 is the middle.
func threadSpeedup(t int) float64 { return 1 + 0.65*float64(max(t, 1)-1) }

// memoryPeak is the expected peak heap: what is in use now (the scenario's
// tables, built before the estimate), the chunks in flight (two per
// worker, model.ChunkBytesPerStar each star) and a catalog kept in memory,
// the latter two doubled because Go's collector lets the heap grow to
// twice what is live before collecting (GOGC=100, the default).
func memoryPeak(workers int, chunkStars int64, catalogStars float64) int64 {
	var ms runtime.MemStats
	runtime.ReadMemStats(&ms)
	perStar := float64(model.ChunkBytesPerStar())
	grow := 2 * (float64(2*workers)*float64(chunkStars)*perStar + catalogStars*perStar)
	return int64(ms.HeapInuse) + int64(math.Min(grow, math.MaxInt64/2))
}

// availableMemory returns the memory this process may still use: Linux's
// MemAvailable (/proc/meminfo), or the cgroup's limit when smaller; 0 when
// neither can be read.
func availableMemory() int64 {
	var avail int64
	if f, err := os.Open("/proc/meminfo"); err == nil {
		sc := bufio.NewScanner(f)
		for sc.Scan() {
			if rest, ok := strings.CutPrefix(sc.Text(), "MemAvailable:"); ok {
				if kb, err := strconv.ParseInt(strings.TrimSpace(strings.TrimSuffix(strings.TrimSpace(rest), "kB")), 10, 64); err == nil {
					avail = kb << 10
				}
			}
		}
		f.Close()
	}
	if b, err := os.ReadFile("/sys/fs/cgroup/memory.max"); err == nil {
		if lim, err := strconv.ParseInt(strings.TrimSpace(string(b)), 10, 64); err == nil && lim > 0 && (avail == 0 || lim < avail) {
			avail = lim
		}
	}
	return avail
}

// String describes the estimate in one line, and how it was measured.
func (e Estimate) String() string {
	s := fmt.Sprintf("%s stars ≈ %s on %d thread%s, peak memory ≈ %s, about %s catalog stars (measured just now: %s stars of this scenario in %.3g s on one thread",
		CountString(float64(e.Stars)), DurationString(e.Seconds), e.Threads, plural(e.Threads), BytesString(e.PeakBytes),
		CountString(math.Round(e.CatalogStars)), CountString(float64(e.ProbeStars)), e.ProbeSeconds)
	if e.Threads > 1 {
		s += fmt.Sprintf("; %d threads counted as %.3g×", e.Threads, e.Speedup)
	}
	s += ")"
	if e.AvailableBytes > 0 {
		s += fmt.Sprintf("; %s of memory available", BytesString(e.AvailableBytes))
	}
	return s
}

// Refusal returns why the run should not start on this machine, or nil:
// more memory than is available, or longer than MaxRunSeconds. countKey
// is the scenario key that set the star count (run.stars_generated,
// compare.template_stars), override how to go on all the same. The error
// is an InputError (exit status 2): the scenario asks for more than the
// machine can do, and the user decides whether to go on (--yes).
func (e Estimate) Refusal(countKey, override string) error {
	var why []string
	if e.AvailableBytes > 0 && e.PeakBytes > e.AvailableBytes {
		why = append(why, fmt.Sprintf("it would need ≈ %s of memory and %s is available (lower run.chunk_stars or --threads)", BytesString(e.PeakBytes), BytesString(e.AvailableBytes)))
	}
	if e.Seconds > MaxRunSeconds {
		why = append(why, fmt.Sprintf("it would take ≈ %s, more than a day on this machine (lower %s, or split the run across machines with a sweep)", DurationString(e.Seconds), countKey))
	}
	if len(why) == 0 {
		return nil
	}
	return InputError{fmt.Errorf("refusing to start a run of %s stars: %s; %s to start it all the same", CountString(float64(e.Stars)), strings.Join(why, "; and "), override)}
}

func plural(n int) string {
	if n == 1 {
		return ""
	}
	return "s"
}

// CountString writes a count with thousands separators, or in powers of
// ten past 10¹².
func CountString(x float64) string {
	if x >= 1e12 || x != math.Trunc(x) && x > 1e6 {
		return strings.Replace(strconv.FormatFloat(x, 'g', 3, 64), "e+", "e", 1)
	}
	digits := strconv.FormatFloat(x, 'f', 0, 64)
	var b strings.Builder
	for i, r := range digits {
		if i > 0 && (len(digits)-i)%3 == 0 {
			b.WriteByte(',')
		}
		b.WriteRune(r)
	}
	return b.String()
}

// DurationString writes seconds as the largest fitting unit.
func DurationString(s float64) string {
	switch {
	case s < 1:
		return fmt.Sprintf("%.2g s", s)
	case s < 120:
		return fmt.Sprintf("%.0f s", s)
	case s < 7200:
		return fmt.Sprintf("%.0f min", s/60)
	case s < 3*86400:
		return fmt.Sprintf("%.1f h", s/3600)
	case s < 3*365.25*86400:
		return fmt.Sprintf("%.0f days", s/86400)
	}
	return fmt.Sprintf("%.3g years", s/(365.25*86400))
}

// BytesString writes a byte count in binary units.
func BytesString(n int64) string {
	x := float64(n)
	for _, u := range []string{"B", "KiB", "MiB", "GiB", "TiB", "PiB"} {
		if x < 1024 || u == "PiB" {
			if u == "B" {
				return fmt.Sprintf("%d B", n)
			}
			return fmt.Sprintf("%.3g %s", x, u)
		}
		x /= 1024
	}
	return ""
}
