package sweep

import (
	"encoding/json"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"slices"
)

// Headline is what the work at a point reports: the numbers a sweep's
// table shows per point. A field the work did not produce stays nil or
// empty and its cell stays blank.
type Headline struct {
	// simulate
	CatalogStars *int64 `json:"catalog_stars,omitempty"` // stars in the synthetic catalog

	// compare
	DataStars *int64   `json:"data_stars,omitempty"` // observed stars compared
	LnL       *float64 `json:"ln_l,omitempty"`       // ln L of the scenario's own history
	// Absolute goodness of fit: bootstrap p of the deviance against the
	// saturated model, and the plain-words verdict ("adequate",
	// "inadequate").
	AdequacyP *float64 `json:"adequacy_p,omitempty"`
	Adequacy  string   `json:"adequacy,omitempty"`

	// test-burst: the fitted burst with its profile-likelihood interval
	// (Δln L = 0.5), the likelihood ratio against the smooth history, its
	// bootstrap p-value and significance, and the verdict in words.
	BurstAgeGyr       *float64 `json:"burst_age_gyr,omitempty"`
	BurstAgeLoGyr     *float64 `json:"burst_age_lo_gyr,omitempty"`
	BurstAgeHiGyr     *float64 `json:"burst_age_hi_gyr,omitempty"`
	BurstFraction     *float64 `json:"burst_fraction,omitempty"`
	BurstFractionLo   *float64 `json:"burst_fraction_lo,omitempty"`
	BurstFractionHi   *float64 `json:"burst_fraction_hi,omitempty"`
	DeltaLnL          *float64 `json:"delta_ln_l,omitempty"` // ln L(burst) − ln L(smooth), both fitted
	PValue            *float64 `json:"p_value,omitempty"`
	SignificanceSigma *float64 `json:"significance_sigma,omitempty"`
	Verdict           string   `json:"verdict,omitempty"`

	// test-alternatives: the explanation the catalog prefers ("" when it
	// cannot tell or none fits) and the outcome ("prefers", "cannot-tell",
	// "neither-fits"); each explanation's ln L and adequacy p go into
	// Extra as "ln_l[NAME]" and "adequacy_p[NAME]".
	Preferred           string `json:"preferred,omitempty"`
	AlternativesOutcome string `json:"alternatives_outcome,omitempty"`

	// Extra holds further numbers by name (units in the names); each
	// becomes a column.
	Extra map[string]float64 `json:"extra,omitempty"`
}

// F and I make the pointers of a Headline: h.BurstAgeGyr = sweep.F(0.75).
func F(x float64) *float64 { return &x }

// I makes an *int64 for a Headline.
func I(x int64) *int64 { return &x }

// Status of a point.
const (
	StatusDone    = "done"
	StatusFailed  = "failed"
	StatusMissing = "missing" // never run, interrupted, or run for other work
)

// Result is one point's record: the completion marker in its folder and a
// row of the merged table.
type Result struct {
	Index    int      `json:"index"`
	Hash     string   `json:"hash"`
	Status   string   `json:"status"`
	Error    string   `json:"error,omitempty"`
	Work     []string `json:"work"`
	Values   []any    `json:"values"` // one per axis
	ElapsedS float64  `json:"elapsed_s,omitempty"`
	Host     string   `json:"host,omitempty"`
	Headline
}

const (
	pointsDir  = "points"
	resultFile = "result.json"
	failedFile = "failed.json"
	pointFile  = "point.json"
	workDir    = "out"
)

// PointDir is the folder of the point with hash h under the sweep's
// output folder.
func PointDir(out, hash string) string { return filepath.Join(out, pointsDir, hash) }

// PointStatus reads the marker in a point's folder: done (with its
// result) when result.json holds this hash and the same work, failed when
// failed.json says so, otherwise missing.
func PointStatus(out, hash string, work []string) (string, *Result) {
	dir := PointDir(out, hash)
	if r, err := readResult(filepath.Join(dir, resultFile)); err == nil && r.Hash == hash && slices.Equal(r.Work, work) {
		return StatusDone, r
	}
	if r, err := readResult(filepath.Join(dir, failedFile)); err == nil && r.Hash == hash {
		return StatusFailed, r
	}
	return StatusMissing, nil
}

func readResult(path string) (*Result, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, err
	}
	var r Result
	if err := json.Unmarshal(b, &r); err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	return &r, nil
}

func writeJSON(path string, v any) error {
	b, err := json.MarshalIndent(v, "", "  ")
	if err != nil {
		return err
	}
	return writeFileAtomic(path, append(b, '\n'))
}

// writeFileAtomic writes data to a temporary file beside path, syncs it
// and renames it into place: a reader sees the old file or the whole new
// one, and after a crash a marker that is there is whole.
func writeFileAtomic(path string, data []byte) error { return writeFile(path, data, true) }

// writeFile is writeFileAtomic, with the sync optional for files that
// are rewritten on every attempt anyway.
func writeFile(path string, data []byte, sync bool) error {
	dir := filepath.Dir(path)
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	f, err := os.CreateTemp(dir, "."+filepath.Base(path)+".tmp-*")
	if err != nil {
		return err
	}
	defer os.Remove(f.Name()) // no-op after the rename
	if _, err := f.Write(data); err != nil {
		f.Close()
		return err
	}
	if sync {
		if err := f.Sync(); err != nil {
			f.Close()
			return err
		}
	}
	if err := f.Close(); err != nil {
		return err
	}
	return os.Rename(f.Name(), path)
}

// removeIfExists removes path, ignoring its absence.
func removeIfExists(path string) error {
	if err := os.Remove(path); err != nil && !errors.Is(err, fs.ErrNotExist) {
		return err
	}
	return nil
}
