package main

import (
	"os"
	"path/filepath"
	"slices"
	"strings"
	"syscall"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/pipeline"
	"spinpop/scenarios"
)

// The malformed-input corpus (testdata/malformed): scenarios that check
// must refuse and catalogs that a comparison must refuse, each with the
// exit status (2: bad input) and a phrase its message must hold. Every
// file of the corpus must have a case here and every case a file, so the
// corpus and the table cannot drift apart. The catalogs are written by
// testdata/malformed/catalogs/make_catalogs.py.

type corpusCase struct {
	file   string   // in testdata/malformed/scenarios or …/catalogs
	sets   []string // extra --set arguments
	phrase string   // the message must contain it
}

var scenarioCorpus = []corpusCase{
	{file: "age-edges-not-increasing.toml", phrase: "disk.age_bin_edges_gyr must be strictly increasing"},
	{file: "alias-probabilities-over-one.toml", phrase: "survey.half_alias_prob + survey.double_alias_prob = 1.3;"},
	{file: "binary-file.toml", phrase: "this is binary data, not a TOML scenario"},
	{file: "burst-without-age.toml", phrase: "history.b.age_gyr is missing"},
	{file: "cadence-above-baseline.toml", phrase: "must be greater than survey.cadence_d = 2000 (a baseline must hold many cadences)"},
	{file: "chunk-too-large.toml", phrase: "run.chunk_stars = 16777216 is out of range; it must be in [256, 1048576]"},
	{file: "chunk-too-small.toml", phrase: "run.chunk_stars = 10 is out of range"},
	{file: "color-range-empty.toml", phrase: "cuts.b_v_max = 0.5 must be greater than cuts.b_v_min = 1.5 (empty color range)"},
	{file: "data-format-unknown.toml", phrase: `data.format = "xlsx" is not allowed`},
	{file: "data-sha256-not-hex.toml", phrase: "is not a SHA-256 checksum"},
	{file: "disk-too-thin-to-sample.toml", phrase: "make a disk so thin"},
	{file: "dispersion-faster-than-light.toml", phrase: "nothing moves faster than light"},
	{file: "duplicate-key.toml", phrase: "has already been defined"},
	{file: "dust-layer-huge.toml", phrase: "dust.scale_height_pc = 10000000 is out of range"},
	{file: "dust-opaque.toml", phrase: "dust.midplane_av_per_kpc = 1000 is out of range"},
	{file: "empty-file.toml", phrase: "the history has no parts"},
	{file: "extends-cycle.toml", phrase: "extends cycle"},
	{file: "extends-itself.toml", phrase: "a scenario cannot extend itself"},
	{file: "extends-missing.toml", phrase: "cannot read testdata/malformed/scenarios/lib/no-such-file.toml"},
	{file: "field-beyond-the-galaxy.toml", phrase: "survey.field.distance_max_pc = 1000000000 is out of range"},
	{file: "field-kind-unknown.toml", phrase: `survey.field.kind = "square" is not allowed`},
	{file: "gyrochrone-age-negative.toml", phrase: "ages must be > 0"},
	{file: "heating-offset-zero.toml", phrase: "disk.heating_tau1_gyr = 0 is out of range"},
	{file: "height-edges-beyond-the-galaxy.toml", phrase: "compare.height_edges_pc ends at 1000000000000 pc, beyond 50000 pc"},
	{file: "height-cut-huge.toml", phrase: "cuts.height_max_pc = 1000000000 is out of range"},
	{file: "history-kind-unknown.toml", phrase: `history.extra.kind = "bursty" is not a kind of history part`},
	{file: "infinite-value.toml", phrase: "it must be a finite number"},
	{file: "mass-beyond-relations.toml", phrase: "reaches beyond the main-sequence relation table"},
	{file: "mass-range-empty.toml", phrase: "(empty mass range)"},
	{file: "nan-value.toml", phrase: "disk.sun_height_pc = NaN; it must be a finite number"},
	{file: "negative-seed.toml", phrase: "run.seed = -1 is out of range"},
	{file: "no-history.toml", phrase: "the history has no parts"},
	{file: "non-integral-count.toml", phrase: "run.stars_generated = 1234.5 must be a whole number"},
	{file: "number-beyond-float.toml", phrase: "out of range for float64"},
	// The user's change is blamed, not the line of the file it extends.
	{file: "override-blamed-on-child.toml", phrase: "override-blamed-on-child.toml:4: survey.faint_limit_mag = 16 must be greater than survey.bright_limit_mag = 20"},
	{file: "period-scatter-out-of-range.toml", phrase: "spin.period_scatter_dex = 3 is out of range"},
	{file: "scale-length-zero.toml", phrase: "disk.scale_length_kpc = 0 is out of range"},
	{file: "sheet-dispersion-too-cold.toml", phrase: "disk.sheet_sigma_kms = 0.5 is out of range; it must be in [1, 500]"},
	{file: "sphere-without-distance.toml", phrase: "survey.field.distance_max_pc is missing"},
	{file: "spin-law-typo.toml", phrase: `did you mean "barnes2007"?`},
	// 10¹² stars at ~10⁶ stars/s per core: days on any machine of today.
	{file: "stars-beyond-a-day.toml", phrase: "refusing to start a run of 1e12 stars"},
	{file: "stars-int64-max.toml", phrase: "run.stars_generated = 9.223372036854776e+18 is out of range"},
	{file: "string-for-number.toml", phrase: "disk.sigma_10gyr_kms must be a number, not a string"},
	{file: "sun-radius-huge.toml", phrase: "disk.sun_radius_kpc = 1e+300 is out of range"},
	// 1e300 used to be reported as "too small" (the disk's tables underflowed).
	{file: "surface-density-huge.toml", phrase: "disk.surface_density_msun_pc2 = 1e+300 is out of range"},
	{file: "table-given-a-string.toml", phrase: "disk must be a table, not a string"},
	{file: "template-stars-huge.toml", phrase: "compare.template_stars = 1e+15 is out of range"},
	{file: "toml-syntax.toml", phrase: "toml-syntax.toml:3: not valid TOML"},
	{file: "unknown-key-typo.toml", phrase: `did you mean "sigma_10gyr_kms"?`},
	{file: "unknown-table.toml", phrase: `did you mean "disk"?`},
}

var catalogCorpus = []corpusCase{
	{file: "bad-checksum.csv.gz", phrase: "the gzip checksum does not match"},
	{file: "binary.csv", phrase: "so this is binary data, not a text table"},
	{file: "comments-only.csv", phrase: "file holds only comments"},
	{file: "ecsv-comma-body-undeclared.ecsv", phrase: `declare "# delimiter: ','" in the ECSV header`},
	{file: "ecsv-datatype-not-list.ecsv", phrase: `ECSV "datatype:" must be a list of columns`},
	{file: "ecsv-entry-without-name.ecsv", phrase: "ECSV datatype entry 4 has no name"},
	{file: "ecsv-header-only.ecsv", phrase: "ECSV header ends without a row of column names"},
	// Was called a column mismatch.
	{file: "ecsv-indented-hash.ecsv", phrase: `ecsv-indented-hash.ecsv:5: this ECSV header line has a tab before its "#"`},
	{file: "ecsv-names-differ.ecsv", phrase: "does not match the ECSV header's datatype list"},
	{file: "ecsv-no-datatype.ecsv", phrase: `ECSV header has no "datatype:" list`},
	{file: "ecsv-no-separator.ecsv", phrase: `ECSV header must continue with "# ---"`},
	{file: "ecsv-pipe-delimiter.ecsv", phrase: `ECSV delimiter "|" is not allowed`},
	{file: "ecsv-tab-in-yaml.ecsv", phrase: "ecsv-tab-in-yaml.ecsv:5: ECSV header is not valid YAML: this line is indented with a tab"},
	{file: "ecsv-unclosed-quote.ecsv", phrase: "(an unclosed quote?)"},
	{file: "ecsv-version-2.ecsv", phrase: `unsupported ECSV version "2.0"`},
	{file: "ecsv-wrong-unit.ecsv", phrase: `column "prot_d" (Period) has unit "h", but "d" is required`},
	{file: "empty.csv", phrase: "file is empty"},
	{file: "first-row-semicolons.csv", phrase: "first data row reads as a single field but contains semicolon"},
	{file: "fits-columns-differ.fits", phrase: `Period column "prot_d" is not in the header`},
	{file: "fits-garbage-header.fits", phrase: "holds bytes that are not printable ASCII"},
	{file: "fits-header-cut.fits", phrase: "it was cut off"},
	{file: "fits-truncated.fits", phrase: "it was cut off"},
	{file: "fits-truncated.fits.gz", phrase: "it was cut off"},
	{file: "folder.csv", phrase: "is a folder, not a regular file"},
	{file: "gzip-of-empty.csv.gz", phrase: "file is empty"},
	{file: "gzip-of-parquet.parquet.gz", phrase: "is a gzip-compressed Parquet file"},
	{file: "header-only.csv", phrase: "no data row follows"},
	{file: "header-unclosed-quote.csv", phrase: "opens a double quote that is never closed"},
	{file: "html-page.csv", phrase: "is an HTML page, not a table"},
	{file: "long-line.csv.gz", phrase: "line longer than 1048576 bytes"},
	{file: "missing-column.csv", phrase: `Height column "z_pc" is not in the header`},
	{file: "misspelt-column.csv", phrase: `closest match: "prot_days"`},
	{file: "not-really-gzip.csv.gz", phrase: "starts like a gzip file but its gzip header is unreadable"},
	{file: "nul-bytes.csv", phrase: "holds a NUL byte at byte 14, so this is binary data"},
	{file: "one-line-no-breaks.csv", phrase: `Height column "z_pc" is not in the header`},
	{file: "parquet-columns-differ.parquet", phrase: `closest match: "period_d"`},
	{file: "parquet-footer-length-huge.parquet", phrase: "not a readable Parquet file"},
	{file: "parquet-no-footer-magic.parquet", phrase: "not a readable Parquet file"},
	{file: "parquet-truncated.parquet", phrase: "not a readable Parquet file"},
	// Was shown as "columns found:" with the binary bytes.
	{file: "random.csv.gz", phrase: "the text inside the gzip file must be CSV or ECSV"},
	// Was called a delimiter problem.
	{file: "semicolons.csv", phrase: "this csv file must be comma-separated"},
	{file: "spreadsheet.csv", phrase: "so this is binary data, not a text table"},
	{file: "tabs.csv", phrase: "replace the tabs by commas"},
	// Was "invalid header" at line 3002.
	{file: "trailing-bytes.csv.gz", phrase: "but more bytes follow that are not another gzip member"},
	{file: "truncated.csv.gz", phrase: "the gzip stream is cut short"},
	{file: "utf16.csv", phrase: "is UTF-16 text"},
	// The good file under a declared format or option it does not have:
	// data.format and data.extension are honoured, not ignored.
	{file: "good.csv", sets: []string{"data.format=ecsv"}, phrase: `the declared format is "ecsv", but the file is plain CSV`},
	{file: "good.csv", sets: []string{"data.format=fits"}, phrase: `the declared format is "fits"`},
	{file: "good.csv", sets: []string{"data.extension=STARS"}, phrase: `a FITS extension ("STARS") was given, but this is a text table`},
	{file: "good.csv", sets: []string{`data.sha256="` + strings.Repeat("0", 64) + `"`}, phrase: "but the scenario expects 0000"},
	{file: "fits-columns-differ.fits", sets: []string{"data.extension=NOPE"}, phrase: "the file has no extension with EXTNAME 'NOPE'; it has HDU 0 (primary), HDU 1 'STARS' (BINTABLE)"},
	{file: "no-such-catalog.csv", phrase: "cannot open testdata/malformed/catalogs/no-such-catalog.csv"},
	{file: "/dev/null", phrase: "/dev/null is a character device, not a regular file"},
}

const corpusDir = "testdata/malformed"

// TestScenarioCorpus: check refuses every malformed scenario with exit
// status 2 and a message holding the case's phrase.
func TestScenarioCorpus(t *testing.T) {
	dir := filepath.Join(corpusDir, "scenarios")
	requireCorpusComplete(t, dir, scenarioCorpus, 40)
	for _, tc := range scenarioCorpus {
		t.Run(tc.file, func(t *testing.T) {
			args := []string{"check", filepath.Join(dir, tc.file)}
			for _, s := range tc.sets {
				args = append(args, "--set", s)
			}
			code, _, errs := runCLI(args...)
			assert.Equal(t, 2, code, "exit status; stderr: %s", errs)
			assert.Contains(t, errs, tc.phrase)
			assert.NotContains(t, errs, "panic")
		})
	}
}

// TestCatalogCorpus: a comparison refuses every malformed catalog with
// exit status 2 and a message holding the case's phrase, before it builds
// any template (RequireData reads the catalog through first); the output
// folder is left as it was.
func TestCatalogCorpus(t *testing.T) {
	dir := filepath.Join(corpusDir, "catalogs")
	requireCorpusComplete(t, dir, catalogCorpus, 40)
	scen := filepath.Join(corpusDir, "catalog.toml")

	// The control: the corpus scenario with its good catalog reads.
	res, err := scenarios.Load(scen)
	require.NoError(t, err)
	require.NoError(t, pipeline.RequireData(res, scen))

	for _, tc := range catalogCorpus {
		name := tc.file
		if len(tc.sets) > 0 {
			name += " " + strings.Join(tc.sets, " ")
		}
		t.Run(name, func(t *testing.T) {
			path := tc.file
			if !filepath.IsAbs(path) {
				path = filepath.Join(dir, tc.file)
			}
			out := filepath.Join(t.TempDir(), "out")
			args := []string{"compare", scen, "--set", "data.file=" + path, "--out", out}
			for _, s := range tc.sets {
				args = append(args, "--set", s)
			}
			code, _, errs := runCLI(args...)
			assert.Equal(t, 2, code, "exit status; stderr: %s", errs)
			assert.Contains(t, errs, tc.phrase)
			assert.NotContains(t, errs, "panic")
			// A catalog's error is not blamed on an output file (it once
			// carried the prefix "writing <out>/rejected.csv:").
			assert.NotContains(t, errs, "writing ")
			entries, _ := os.ReadDir(out)
			assert.Empty(t, entries, "nothing written")
		})
	}
}

// A FIFO as scenario, as extends target and as catalog is refused, never
// waited on (the test would hang otherwise). It cannot be checked into
// git, so it is made here.
func TestCorpusFIFOs(t *testing.T) {
	dir := t.TempDir()
	fifo := filepath.Join(dir, "pipe")
	if err := syscall.Mkfifo(fifo, 0o600); err != nil {
		t.Skipf("cannot make a FIFO here: %v", err)
	}
	code, _, errs := runCLI("check", fifo)
	assert.Equal(t, 2, code)
	assert.Contains(t, errs, "is a named pipe (FIFO), not a regular file")

	child := filepath.Join(dir, "child.toml")
	require.NoError(t, os.WriteFile(child, []byte("extends = \"pipe\"\n"), 0o644))
	code, _, errs = runCLI("check", child)
	assert.Equal(t, 2, code)
	assert.Contains(t, errs, "child.toml:1: extends = \"pipe\": cannot read")
	assert.Contains(t, errs, "is a named pipe (FIFO)")

	code, _, errs = runCLI("compare", filepath.Join(corpusDir, "catalog.toml"), "--set", "data.file="+fifo, "--out", filepath.Join(dir, "out"))
	assert.Equal(t, 2, code)
	assert.Contains(t, errs, "is a named pipe (FIFO), not a regular file")
}

// requireCorpusComplete checks that the corpus folder and the table name
// the same files (helpers in lib/ and the generator script aside) and
// that there are at least min cases.
func requireCorpusComplete(t *testing.T, dir string, cases []corpusCase, min int) {
	t.Helper()
	entries, err := os.ReadDir(dir)
	require.NoError(t, err)
	var onDisk []string
	for _, e := range entries {
		if e.Name() == "lib" || strings.HasSuffix(e.Name(), ".py") {
			continue
		}
		onDisk = append(onDisk, e.Name())
	}
	var inTable []string
	for _, c := range cases {
		if _, err := os.Lstat(filepath.Join(dir, c.file)); err == nil && !slices.Contains(inTable, c.file) {
			inTable = append(inTable, c.file)
		}
	}
	slices.Sort(onDisk)
	slices.Sort(inTable)
	assert.Equal(t, onDisk, inTable, "every corpus file has a case and every case's file is in the corpus")
	assert.GreaterOrEqual(t, len(cases), min)
}
