package pipeline

import (
	"context"
	"fmt"
	"io/fs"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/assemble"
	"spinpop/compare"
	"spinpop/internal/othermodel"
	"spinpop/model"
	"spinpop/scenarios"
)

// The independent check of issue 8: spinpop's burst test on catalogs made
// by a model that shares no code with it (internal/othermodel: its own
// relations, detection function, wider intrinsic period scatter, no
// binaries, box-shaped bursts on a constant history, stars of every age).
// The scenario is example:fit with the field, dust and color cuts set to
// match the other model, as a user would set them for a real survey;
// everything else — the physics, the selection, the nuisance parameters —
// is example:fit's own.

// checkScenario is the user's scenario for the other model's catalogs
// made with cfg: the other model's dust (a uniform cfg.AVPerKpc in V, 0.25
// mag/kpc by default: an exponential layer 50 kpc thick, the thickest the
// scenario format takes, which dims a star 1.5 kpc from the plane by 3 %
// less than uniform dust would; none when it has none) and, through the
// one %q left in it, its catalog file.
func checkScenario(cfg othermodel.Config) string {
	dust := "model = \"none\""
	if cfg.AVPerKpc > 0 {
		dust = fmt.Sprintf("model = \"exponential\"\nscale_height_pc = 50000.0\nmidplane_av_per_kpc = %g", cfg.AVPerKpc)
	}
	return `extends = "example:fit"
name = "othermodel-check"

[dust]
` + dust + `

[data]
file = %q
sha256 = ""
`
}

// checkCase is one catalog of the other model.
type checkCase struct {
	name   string
	seed   uint64
	hist   othermodel.History
	ageGyr float64 // the burst's age (0: smooth)
}

// checkResult is what the burst test said of one catalog.
type checkResult struct {
	checkCase
	strength          string
	age, lo95, hi95   float64
	lr, deviance, exp float64
	adequacyP         float64
}

// claims reports a claimed burst: moderate or strong evidence.
func (r checkResult) claims() bool { return r.strength == "strong" || r.strength == "moderate" }

// runCheck makes each case's catalog with the other model, sets up one
// comparison (templates made once) and runs the burst test on each.
func runCheck(t *testing.T, cases []checkCase, replicates int, templateStars int64, extra string, variant othermodel.Config) []checkResult {
	return runCheckWith(t, cases, replicates, templateStars, extra, otherModelCatalogs(variant))
}

// catalogMaker writes the catalogs of a check and names the scenario
// (a format with one %q, the catalog's path) that fits them.
type catalogMaker struct {
	scenario string
	write    func(path string, cs checkCase) error
}

// otherModelCatalogs makes the check's catalogs with the other model.
func otherModelCatalogs(variant othermodel.Config) catalogMaker {
	return catalogMaker{scenario: checkScenario(variant), write: func(path string, cs checkCase) error {
		cfg := variant
		cfg.History = withRamp(cs.hist, variant.History.RampSlope)
		_, err := othermodel.WriteCatalog(path, cfg, cs.seed)
		return err
	}}
}

// ownScenario is the scenario that fits the own-model control's
// catalogs: example:fit as shipped, with the catalog's file.
const ownScenario = `extends = "example:fit"
name = "ownmodel-check"

[data]
file = %q
sha256 = ""
`

// ownTruth is the truth behind one catalog of the own-model control:
// example:fit's physics at its scenario values (the values its fit starts
// from) and its smooth history, with the case's burst and seed.
const ownTruth = `extends = "example:fit"
name = "ownmodel-truth"

[run]
seed = %d

[history.burst]
%s
`

// ownCatalogStars is the size of the control's catalogs: about the
// number of the other model's catalog stars the check's scenario compares
// (17,739 for the first burst catalog).
const ownCatalogStars = 17_700

// ownParallaxErrorMas is the control's parallax error: the demo
// catalog's (scenarios/examples/data/README.md).
const ownParallaxErrorMas = 0.02

// ownModelCatalogs makes the check's catalogs with spinpop's own
// generator instead (SPINPOP_OTHERMODEL_OWN=1): the same ages and shares,
// each box burst as the Gaussian of the same standard deviation (a box of
// full width w has σ = w/√12). A control: where the model that fits is
// the model that made the catalog, what is left of the age errors is the
// method's own (counting noise, nuisance freedom, templates, search),
// not a mismatch of physics.
//
// truthExtra is added to each truth's scenario (SPINPOP_OWNMODEL_TRUTH,
// `\n` for a new line): e.g. the other model's intrinsic period scatter,
// "[spin]\nperiod_scatter_dex = 0.08", so that the control's ridges are
// as broad as the check's.
func ownModelCatalogs(truthExtra string) catalogMaker {
	return catalogMaker{scenario: ownScenario, write: func(path string, cs checkCase) error {
		// A smooth case keeps the burst part with no mass: example:fit's
		// free list and alternatives name it.
		burst := "mass_fraction = 0"
		if b := cs.hist.Burst; b != nil {
			burst = fmt.Sprintf("kind = \"burst\"\nage_gyr = %g\nwidth_gyr = %g\nmass_fraction = %g",
				(b.StartGyr+b.EndGyr)/2, (b.EndGyr-b.StartGyr)/math.Sqrt(12), b.Fraction)
		}
		truth := strings.TrimSuffix(path, ".csv") + "-truth.toml"
		if err := os.WriteFile(truth, []byte(fmt.Sprintf(ownTruth, cs.seed, burst)+truthExtra), 0o644); err != nil {
			return err
		}
		res, err := scenarios.Resolve(truth)
		if err != nil {
			return err
		}
		f, err := os.Create(path)
		if err != nil {
			return err
		}
		n, err := Mock(context.Background(), res, MockOptions{Source: truth, Stars: ownCatalogStars, ParallaxErrorMas: ownParallaxErrorMas}, f)
		if cerr := f.Close(); err == nil {
			err = cerr
		}
		if err == nil && n != ownCatalogStars {
			err = fmt.Errorf("%s: the mock holds %d catalog stars, not %d", path, n, ownCatalogStars)
		}
		return err
	}}
}

func runCheckWith(t *testing.T, cases []checkCase, replicates int, templateStars int64, extra string, maker catalogMaker) []checkResult {
	t.Helper()
	dir := t.TempDir()
	first := filepath.Join(dir, cases[0].name+".csv")
	require.NoError(t, maker.write(first, cases[0]))
	scen := filepath.Join(dir, "check.toml")
	text := fmt.Sprintf(maker.scenario, first) + extra
	if templateStars > 0 {
		text += fmt.Sprintf("\n[compare]\ntemplate_stars = %d\n", templateStars)
	}
	require.NoError(t, os.WriteFile(scen, []byte(text), 0o644))
	res, err := scenarios.Resolve(scen)
	require.NoError(t, err)
	ctx := context.Background()
	base, err := SetupComparison(ctx, res, ComparisonOptions{Source: scen, TemplateDir: "none"})
	require.NoError(t, err)
	var out []checkResult
	for i, cs := range cases {
		path := first
		if i > 0 {
			path = filepath.Join(dir, cs.name+".csv")
			require.NoError(t, maker.write(path, cs))
		}
		// SPINPOP_OTHERMODEL_SEQUENCE=measured measures where each
		// catalog's main sequence lies against the table
		// (MeasureSequenceShift) and fits it with the table moved there:
		// templates made again for every catalog.
		var c *Comparison
		if os.Getenv("SPINPOP_OTHERMODEL_SEQUENCE") == "measured" {
			c = measuredSequenceComparison(t, maker, path, extra, cs.name)
		} else {
			c, err = base.WithCatalog(path)
			require.NoError(t, err)
		}
		name := cs.name
		c.Stage = func(msg string) { t.Logf("%s: %s", name, msg) }
		// SPINPOP_OTHERMODEL_ROUNDS=N lets every joint fit run N
		// expansions instead of the default 12: how far the answers move
		// when the searches run on.
		if v, err := strconv.Atoi(os.Getenv("SPINPOP_OTHERMODEL_ROUNDS")); err == nil && v > 0 {
			c.MaxRounds = v
		}
		o, err := c.BurstTest(ctx, replicates, nil)
		require.NoError(t, err, cs.name)
		tr := o.Test
		r := checkResult{checkCase: cs, strength: tr.Strength, lr: tr.LR,
			deviance: tr.AdequacyBurst.Deviance, exp: tr.AdequacyBurst.ReplicateMean, adequacyP: tr.AdequacyBurst.PValue,
			age: tr.AgeInterval.Best, lo95: tr.AgeInterval.Lo95, hi95: tr.AgeInterval.Hi95}
		t.Logf(checkLineFormat+" | %s | %s",
			cs.name, cs.ageGyr, r.strength, r.age, r.lo95, r.hi95, r.lr, r.deviance, r.exp, r.adequacyP, tr.Verdict,
			compare.StrainWarning("strained", tr.Strains, tr.GaussianPriors))
		// The fitted histories, for reading the shape a burst took
		// (a broad one at the old end, one on a range's edge).
		t.Logf("%-12s with burst: %s (ln L %.2f); smooth: %s (ln L %.2f)", cs.name,
			historyText(tr.Burst), tr.Burst.LogL, historyText(tr.Smooth), tr.Smooth.LogL)
		if line, ok := lawShareLine(c.Nuisance, tr.Burst, cs.ageGyr, r.age); ok {
			t.Logf("%-12s %s", cs.name, line)
		}
		if b := tr.AgeBootstrap; len(b.Ages) > 0 {
			t.Logf("%-12s burst age refitted on %d mocks drawn at %.3f: median %.3f, 68 %% [%.3f, %.3f], 95 %% [%.3f, %.3f]; profile interval [%.3f, %.3f] holds %.0f %%; ages %.3f",
				cs.name, len(b.Ages), b.Truth, b.Median, b.Lo68, b.Hi68, b.Lo95, b.Hi95,
				tr.AgeIntervalProfile.Lo95, tr.AgeIntervalProfile.Hi95, 100*b.Holds(tr.AgeIntervalProfile.Lo95, tr.AgeIntervalProfile.Hi95), b.Ages)
		}
		out = append(out, r)
	}
	return out
}

// measuredSequenceComparison sets up the comparison of one catalog with
// compare.measure_sequence on: the relation table moved to where the
// catalog's sequence was measured to lie, on templates of its own.
func measuredSequenceComparison(t *testing.T, maker catalogMaker, path, extra, name string) *Comparison {
	t.Helper()
	scen := strings.TrimSuffix(path, ".csv") + "-sequence.toml"
	require.NoError(t, os.WriteFile(scen, []byte(fmt.Sprintf(maker.scenario, path)+extra), 0o644))
	ov, err := scenarios.ParseOverrides([]string{"compare.measure_sequence=true"})
	require.NoError(t, err)
	res, err := scenarios.Resolve(scen, ov...)
	require.NoError(t, err)
	c, err := SetupComparison(context.Background(), res, ComparisonOptions{Source: scen, TemplateDir: "none"})
	require.NoError(t, err)
	t.Logf("%-12s sequence: %s (last round moved ≤ %.3f mag)", name, strings.ReplaceAll(strings.TrimSpace(c.Sequence.TOML()), "\n", "; "), c.Sequence.MaxLastMove)
	return c
}

// lawShareLine splits a burst catalog's age error in two when the fit
// frees the empirical law's scale and age exponent (spin.<law>.a and .n):
// the part the fitted coefficients account for — the age at which the
// truth's ridge lies under them — and the rest. The check's catalogs are
// made with the scenario's (published) coefficients (not so with the
// variant law=mamajek2008, where the split means nothing), so the first
// part is the law's calibration moving within its priors, which a field
// catalog pins only partly (model/spin.AgeCalibration is the whole of it),
// and the rest is what the other nuisance parameters, the history and the
// counts did.
func lawShareLine(nu *compare.Nuisance, fit compare.FitResult, truthGyr, bestGyr float64) (string, bool) {
	if truthGyr == 0 || nu == nil || len(fit.Nuisance) != nu.Dim() {
		return "", false
	}
	ia, in := -1, -1
	for j, p := range nu.Params {
		switch {
		case strings.HasPrefix(p.Name, "spin.") && strings.HasSuffix(p.Name, ".a"):
			ia = j
		case strings.HasPrefix(p.Name, "spin.") && strings.HasSuffix(p.Name, ".n"):
			in = j
		}
	}
	if ia < 0 || in < 0 {
		return "", false
	}
	a0, n0 := nu.Params[ia].Nominal, nu.Params[in].Nominal
	a1, n1 := fit.Nuisance[ia], fit.Nuisance[in]
	ridge := ridgeAgeGyr(truthGyr, a0, n0, a1, n1)
	return fmt.Sprintf("law: a = %.4f, n = %.4f (scenario %.4g, %.4g); the truth's ridge read with them at %.3f Gyr: the law's part of the error %+.3f, the rest %+.3f",
		a1, n1, a0, n0, ridge, ridge-truthGyr, bestGyr-ridge), true
}

// ridgeAgeGyr is the age at which an empirical law P = a (x − c)^b t^n
// (t in Myr) with coefficients a1, n1 puts the ridge that coefficients
// a0, n0 put at truthGyr: a1 t1^n1 = a0 t^n0, whatever the color (b and c
// the same in both).
func ridgeAgeGyr(truthGyr, a0, n0, a1, n1 float64) float64 {
	return math.Exp((math.Log(a0/a1)+n0*math.Log(1000*truthGyr))/n1) / 1000
}

// historyText is a fit's history parameters as name = value.
func historyText(f compare.FitResult) string {
	parts := make([]string, len(f.Names))
	for i, n := range f.Names {
		parts[i] = fmt.Sprintf("%s = %.4g", n, f.Theta[i])
	}
	return strings.Join(parts, ", ")
}

// summarise counts false claims among smooth catalogs, and among burst
// catalogs those found (claimed, age within ±0.1 Gyr) and those whose 95 %
// interval covers the truth.
func summarise(t *testing.T, rs []checkResult) (falseClaims, smooth, found, covered, bursts int) {
	// Beside the targets' counts, what the verdict does not decide: with
	// few replicates no verdict can pass weak (the bootstrap's floor), so
	// the ages and intervals are counted whatever it says too.
	smoothWeak, burstsWeak, within, holds := 0, 0, 0, 0
	for _, r := range rs {
		if r.ageGyr == 0 {
			smooth++
			if r.claims() {
				falseClaims++
			}
			if r.strength == "weak" {
				smoothWeak++
			}
			continue
		}
		bursts++
		in, held := math.Abs(r.age-r.ageGyr) <= 0.1, r.lo95 <= r.ageGyr && r.ageGyr <= r.hi95
		if r.claims() && in {
			found++
		}
		if r.claims() && held {
			covered++
		}
		if r.strength == "weak" {
			burstsWeak++
		}
		if in {
			within++
		}
		if held {
			holds++
		}
	}
	t.Logf("smooth catalogs: %d of %d claim a burst (%d weak); burst catalogs: %d of %d found within ±0.1 Gyr, %d of %d with the truth in the 95 %% interval; whatever the verdict (%d weak): %d within ±0.1 Gyr, %d intervals holding the truth",
		falseClaims, smooth, smoothWeak, found, bursts, covered, bursts, burstsWeak, within, holds)
	return
}

// The short check, run in every `go test`: one smooth catalog of the
// other model, small templates and few replicates; it must not be claimed
// as a burst. Burst catalogs are left to the long check
// (SPINPOP_OTHERMODEL_CHECK=1): a burst catalog here doubled the test's
// time, to ~8 min on two idle cores, near go test's 10-minute limit for
// the package, and asserted nothing (its age is the long check's measure,
// at the example's full settings).
func TestOtherModelShort(t *testing.T) {
	if testing.Short() {
		t.Skip("the independent-model check takes minutes; skipped with -short")
	}
	// Without example:fit's five search-efficiency nodes: with them the
	// fits take twice as long. The long check runs them; their machinery
	// has its own tests (bank, expansion, scenarios).
	rs := runCheck(t, []checkCase{
		{name: "smooth", seed: 11, hist: othermodel.SmoothHistory()},
	}, 40, 6_000_000, fitFreeListWithout(t, `path = "survey.search_by_rossby.`), othermodel.DefaultConfig())
	assert.False(t, rs[0].claims(), "a smooth catalog of another model must not be claimed as a burst: %s", rs[0].strength)
	summarise(t, rs)
}

// fitFreeListWithout returns example:fit's [[compare.free]] entries, as
// written there, leaving out those whose text holds word: appended to a
// scenario that extends example:fit, they replace its list.
func fitFreeListWithout(t *testing.T, prefix string) string {
	t.Helper()
	b, err := fs.ReadFile(scenarios.ExamplesFS(), "fit.toml")
	require.NoError(t, err)
	s := string(b)
	first, end := strings.Index(s, "\n[[compare.free]]\npath"), strings.Index(s, "\n[[compare.alternatives]]")
	require.True(t, first >= 0 && end > first, "fit.toml's layout: free entries, then alternatives")
	var out strings.Builder
	kept := 0
	for _, entry := range strings.Split(s[first:end], "\n[[compare.free]]\n")[1:] {
		if !strings.HasPrefix(entry, prefix) {
			out.WriteString("\n[[compare.free]]\n" + entry)
			kept++
		}
	}
	require.Greater(t, kept, 0)
	return out.String()
}

// withRamp returns h with its smooth rate's ramp slope set to s.
func withRamp(h othermodel.History, s float64) othermodel.History {
	h.RampSlope = s
	return h
}

// variantKeys are the keys parseVariant takes, for its errors.
const variantKeys = "ramp, law, scatter, p50, v50, imf, heightbeta, av, stall, relations, mvshift, disk"

// parseVariant reads SPINPOP_OTHERMODEL_VARIANT: the other model changed
// further from spinpop than its defaults, so that the check also covers
// catalogs whose smooth history is not constant, whose law is not the one
// the scenario fits, whose scatter and loss of slow rotators differ and
// whose disk heats otherwise — the product owner's model will differ in
// ways we do not know. A comma-separated list of key=value:
//
//	ramp=s        smooth rate 1 + s τ/T (s ≥ −1; 0 constant, > 0 more stars long ago)
//	law=name      barnes2007 (default) or mamajek2008
//	scatter=dex   intrinsic period scatter (default 0.08)
//	p50=days      half-detection period at B−V 0.65 (default 20)
//	v50=mag       V of half completeness (default 15.3; beyond the faint limit, none lost by V)
//	imf=slope     the IMF's power-law slope dN/dM ∝ M^−slope (default 2.35, Salpeter's)
//	heightbeta=β  exponent of the scale height's growth with age (default 0.7)
//	av=mag/kpc    the uniform extinction in V along the line of sight (default 0.25)
//	stall=S:D     K dwarfs' spin-down paused from S Gyr for D Gyr (othermodel.Stall; default none)
//	relations=R   spinpop's relations instead of the other model's own (a diagnostic: what the
//	              relations alone do to a fit): spinpop (its dwarf sequence and main-sequence
//	              lifetimes), spinpop-sequence (the sequence alone) or spinpop-lifetimes
//	mvshift=mag   every dwarf's M_V moved by mag at its color (> 0 fainter), with whichever
//	              relations are in use (a diagnostic: does the sequence's place in M_V, which
//	              sets how far from the plane a magnitude-limited field reaches, move the age?)
//	disk=spinpop  spinpop's disk instead of the other model's exponential layers (a diagnostic:
//	              what the disk alone does to a fit): the example scenario's self-gravitating
//	              sheet, heating and radial scale (spinpopDisk)
func parseVariant(spec string) (othermodel.Config, error) {
	cfg := othermodel.DefaultConfig()
	if strings.TrimSpace(spec) == "" {
		return cfg, nil
	}
	mvShift := 0.0 // applied after every key: relations= may come later
	for _, kv := range strings.Split(spec, ",") {
		k, v, ok := strings.Cut(strings.TrimSpace(kv), "=")
		if !ok {
			return cfg, fmt.Errorf("SPINPOP_OTHERMODEL_VARIANT: %q is not key=value (keys: %s)", kv, variantKeys)
		}
		if k == "law" {
			switch v {
			case "barnes2007":
				cfg.Gyro = othermodel.Barnes2007()
			case "mamajek2008":
				cfg.Gyro = othermodel.Mamajek2008()
			default:
				return cfg, fmt.Errorf("SPINPOP_OTHERMODEL_VARIANT: law=%q; want barnes2007 or mamajek2008", v)
			}
			continue
		}
		if k == "relations" {
			r, err := spinpopRelations(v)
			if err != nil {
				return cfg, err
			}
			cfg.Relations = r
			continue
		}
		if k == "disk" {
			if v != "spinpop" {
				return cfg, fmt.Errorf("SPINPOP_OTHERMODEL_VARIANT: disk=%q; want spinpop (or leave it out: the other model's own)", v)
			}
			if err := spinpopDisk(&cfg); err != nil {
				return cfg, err
			}
			continue
		}
		if k == "stall" {
			// stall=START:DURATION (Gyr): othermodel.KDwarfStall's colors
			// with another window.
			st := othermodel.KDwarfStall()
			a, b, ok := strings.Cut(v, ":")
			x, errA := strconv.ParseFloat(a, 64)
			y, errB := strconv.ParseFloat(b, 64)
			if !ok || errA != nil || errB != nil {
				return cfg, fmt.Errorf("SPINPOP_OTHERMODEL_VARIANT: stall=%q; want START:DURATION in Gyr, e.g. stall=%g:%g", v, st.StartGyr, st.DurationGyr)
			}
			st.StartGyr, st.DurationGyr = x, y
			cfg.Stall = &st
			continue
		}
		x, err := strconv.ParseFloat(v, 64)
		if err != nil {
			return cfg, fmt.Errorf("SPINPOP_OTHERMODEL_VARIANT: %s=%q is not a number", k, v)
		}
		switch k {
		case "ramp":
			cfg.History.RampSlope = x
		case "scatter":
			cfg.PeriodScatterDex = x
		case "p50":
			cfg.Detection.P50RefD = x
		case "v50":
			cfg.Detection.V50Mag = x
		case "imf":
			cfg.IMFSlope = x
		case "heightbeta":
			cfg.ScaleHeightBeta = x
		case "av":
			cfg.AVPerKpc = x
		case "mvshift":
			mvShift = x
		default:
			return cfg, fmt.Errorf("SPINPOP_OTHERMODEL_VARIANT: unknown key %q (keys: %s)", k, variantKeys)
		}
	}
	if mvShift != 0 {
		cfg.Relations = shiftedInMV(cfg.Relations, mvShift)
	}
	return cfg, cfg.Validate()
}

// spinpopDisk hands the other model spinpop's disk (the variant
// disk=spinpop) at the example scenario's values (scenarios/examples/
// base.toml [disk], read from it): each age's stars in the
// self-gravitating sheet's potential with the dispersion of the heating
// law (assemble.Sheet, assemble.Heating), the radial scale length and the Sun's
// distance from the centre. The acceptance is the tracer density over its
// peak at the youngest age, the coldest and so the most concentrated.
func spinpopDisk(cfg *othermodel.Config) error {
	res, err := scenarios.LoadExample("base")
	if err != nil {
		return fmt.Errorf("SPINPOP_OTHERMODEL_VARIANT: disk=spinpop reads example:base: %w", err)
	}
	sheet, avr := assemble.Sheet(&res.Scenario), assemble.Heating(&res.Scenario)
	peak := sheet.TracerDensity(0, avr.SigmaKms(0))
	cfg.Vertical = &othermodel.Vertical{Name: "spinpop's self-gravitating sheet and heating (base.toml)",
		Accept: func(ageGyr, zPc float64) float64 {
			return sheet.TracerDensity(zPc, avr.SigmaKms(ageGyr)) / peak
		}}
	cfg.ScaleLengthKpc, cfg.SunRadiusKpc = res.Scenario.Disk.ScaleLengthKpc, res.Scenario.Disk.SunRadiusKpc
	return nil
}

// spinpopRelations hands the other model spinpop's relations (the
// variant relations=which): its dwarf sequence (model.DwarfSequence: B−V
// and M_V by mass), its main-sequence lifetimes (model.MSLifetimeGyr), or
// both. The other model still removes a star at the end of its main
// sequence, where spinpop brightens it for a further fifth of its
// lifetime (model.EvolvedBrightening).
func spinpopRelations(which string) (*othermodel.Relations, error) {
	choice, ok := relationChoices[which]
	if !ok {
		return nil, fmt.Errorf("SPINPOP_OTHERMODEL_VARIANT: relations=%q; want spinpop, spinpop-sequence or spinpop-lifetimes (or leave it out: the other model's own)", which)
	}
	r := otherModelOwnRelations()
	r.Name = choice.name
	if choice.sequence {
		rel, err := model.DwarfSequence()
		if err != nil {
			return nil, err
		}
		r.Dwarf = func(m float64) (float64, float64, bool) {
			p, ok := rel.At(m)
			return p.BV, p.AbsMagV, ok
		}
	}
	if choice.lifetimes {
		r.LifetimeGyr = model.MSLifetimeGyr
	}
	return r, nil
}

// shiftedInMV returns rel (the other model's own relations when nil) with
// every dwarf's M_V moved by dm.
func shiftedInMV(rel *othermodel.Relations, dm float64) *othermodel.Relations {
	if rel == nil {
		rel = otherModelOwnRelations()
	}
	out := *rel
	dwarf := out.Dwarf
	out.Dwarf = func(m float64) (float64, float64, bool) {
		bv, mv, ok := dwarf(m)
		return bv, mv + dm, ok
	}
	out.Name = fmt.Sprintf("%s, M_V moved by %+g mag", out.Name, dm)
	return &out
}

// otherModelOwnRelations are the other model's built-in relations
// written through its hook, for a variant to change one of them.
func otherModelOwnRelations() *othermodel.Relations {
	return &othermodel.Relations{Name: "the other model's own",
		Dwarf: func(m float64) (float64, float64, bool) {
			d := othermodel.DwarfOfMass(m)
			return d.BV, d.AbsMagV, true
		},
		LifetimeGyr: othermodel.MSLifetimeGyr,
	}
}

// relationChoices are the values relations= takes: which of spinpop's
// relations the other model uses, and the name its report gives them.
var relationChoices = map[string]struct {
	name                string
	sequence, lifetimes bool
}{
	"spinpop":           {"spinpop's dwarf sequence and main-sequence lifetimes", true, true},
	"spinpop-sequence":  {"spinpop's dwarf sequence", true, false},
	"spinpop-lifetimes": {"spinpop's main-sequence lifetimes", false, true},
}

// The split of an age error between the law's coefficients and the rest.
// Expected values worked by hand from P ∝ a t^n (Barnes 2007's form):
// n 1 % larger puts a 1 Gyr ridge at 1000^(1/1.01) Myr = 10^2.970297 Myr
// = 0.93389 Gyr; a 2 % larger puts a 1.5 Gyr ridge at
// 1.5 · 1.02^(−1/0.5189) = 1.5 · e^(−0.038163) = 1.44383 Gyr.
func TestLawShareLine(t *testing.T) {
	assert.InDelta(t, 0.93389, ridgeAgeGyr(1, 0.7725, 0.5189, 0.7725, 0.5189*1.01), 5e-5)
	assert.InDelta(t, 1.44383, ridgeAgeGyr(1.5, 0.7725, 0.5189, 0.7725*1.02, 0.5189), 5e-5)
	assert.InDelta(t, 1.2, ridgeAgeGyr(1.2, 0.7725, 0.5189, 0.7725, 0.5189), 1e-12, "the scenario's own coefficients move nothing")

	nu := &compare.Nuisance{Params: []compare.NuisanceParam{
		{Name: "spin.period_scatter_dex", Nominal: 0, Max: 0.3},
		{Name: "spin.barnes2007.a", Nominal: 0.7725, Min: 0.7, Max: 0.85},
		{Name: "spin.barnes2007.n", Nominal: 0.5189, Min: 0.48, Max: 0.56},
	}}
	fit := compare.FitResult{Nuisance: []float64{0.08, 0.7725 * 1.02, 0.5189}}
	line, ok := lawShareLine(nu, fit, 1.5, 1.50)
	require.True(t, ok)
	assert.Contains(t, line, "at 1.444 Gyr: the law's part of the error -0.056, the rest +0.056")
	_, ok = lawShareLine(nu, fit, 0, 1.5)
	assert.False(t, ok, "a smooth catalog has no error to split")
	_, ok = lawShareLine(&compare.Nuisance{Params: nu.Params[:2]}, compare.FitResult{Nuisance: fit.Nuisance[:2]}, 1.5, 1.5)
	assert.False(t, ok, "the law's exponent held: nothing to split")
}

// The check's scenario takes the other model's dust: its default uniform
// 0.25 mag/kpc, another value of the variant av=, none for av=0.
func TestCheckScenarioFollowsTheDust(t *testing.T) {
	dir := t.TempDir()
	for _, c := range []struct {
		av       float64
		model    string
		midplane float64
	}{{0.25, "exponential", 0.25}, {0.4, "exponential", 0.4}, {0, "none", -1}} {
		cfg := othermodel.DefaultConfig()
		cfg.AVPerKpc = c.av
		path := filepath.Join(dir, fmt.Sprintf("check-%g.toml", c.av))
		require.NoError(t, os.WriteFile(path, []byte(fmt.Sprintf(checkScenario(cfg), filepath.Join(dir, "catalog.csv"))), 0o644))
		res, err := scenarios.Resolve(path)
		require.NoError(t, err, "av=%g", c.av)
		d := res.Scenario.Dust
		assert.Equal(t, c.model, d.Model, "av=%g", c.av)
		if c.midplane > 0 {
			assert.Equal(t, c.midplane, d.MidplaneAvPerKpc, "av=%g", c.av)
			assert.Equal(t, 50000.0, d.ScaleHeightPc, "av=%g: a layer thick enough to be uniform", c.av)
		}
	}
}

func TestParseVariant(t *testing.T) {
	def := othermodel.DefaultConfig()
	cfg, err := parseVariant("")
	require.NoError(t, err)
	assert.Equal(t, def, cfg, "no variant: the other model's defaults")
	cfg, err = parseVariant("ramp=0.8, law=mamajek2008,scatter=0.12,p50=14,v50=99,imf=1.3,heightbeta=0.5,av=0")
	require.NoError(t, err)
	assert.Equal(t, 0.8, cfg.History.RampSlope)
	assert.Equal(t, othermodel.Mamajek2008(), cfg.Gyro)
	assert.Equal(t, []float64{0.12, 14, 99, 1.3, 0.5, 0}, []float64{cfg.PeriodScatterDex, cfg.Detection.P50RefD, cfg.Detection.V50Mag, cfg.IMFSlope, cfg.ScaleHeightBeta, cfg.AVPerKpc})
	assert.Nil(t, cfg.Stall)
	cfg, err = parseVariant("stall=0.7:0.4")
	require.NoError(t, err)
	require.NotNil(t, cfg.Stall)
	assert.Equal(t, []float64{0.7, 0.4, othermodel.KDwarfStall().FullMinBV}, []float64{cfg.Stall.StartGyr, cfg.Stall.DurationGyr, cfg.Stall.FullMinBV})
	cfg, err = parseVariant("relations=spinpop")
	require.NoError(t, err)
	require.NotNil(t, cfg.Relations)
	rel, err := model.DwarfSequence()
	require.NoError(t, err)
	sun, _ := rel.At(1)
	bv, mv, ok := cfg.Relations.Dwarf(1)
	assert.True(t, ok)
	assert.Equal(t, []float64{sun.BV, sun.AbsMagV}, []float64{bv, mv}, "the hook reads spinpop's dwarf sequence")
	assert.InDelta(t, 10, cfg.Relations.LifetimeGyr(1), 1e-12, "the Sun's main-sequence lifetime (common practice)")
	// One of the two alone: spinpop's lifetime of a 1.2 M☉ star is
	// 10 · 1.2^−2.5 = 6.339 Gyr, the other model's 10 · 1.2^−3 = 5.787 Gyr
	// (both common practice: L ∝ M^3.5 and M^4).
	cfg, err = parseVariant("relations=spinpop-lifetimes")
	require.NoError(t, err)
	assert.InDelta(t, 6.339, cfg.Relations.LifetimeGyr(1.2), 5e-4)
	d := othermodel.DwarfOfMass(0.8)
	bv, mv, _ = cfg.Relations.Dwarf(0.8)
	assert.Equal(t, []float64{d.BV, d.AbsMagV}, []float64{bv, mv}, "the other model's own sequence")
	cfg, err = parseVariant("relations=spinpop-sequence")
	require.NoError(t, err)
	assert.InDelta(t, 5.787, cfg.Relations.LifetimeGyr(1.2), 5e-4)
	p8, _ := rel.At(0.8)
	bv, mv, _ = cfg.Relations.Dwarf(0.8)
	assert.Equal(t, []float64{p8.BV, p8.AbsMagV}, []float64{bv, mv})
	// mvshift moves M_V alone, whichever relations come with it and in
	// whichever order.
	for _, spec := range []string{"mvshift=0.2", "mvshift=0.2,relations=spinpop-sequence"} {
		cfg, err = parseVariant(spec)
		require.NoError(t, err)
		want := othermodel.DwarfOfMass(0.8)
		if strings.Contains(spec, "relations") {
			want.BV, want.AbsMagV = p8.BV, p8.AbsMagV
		}
		bv, mv, _ = cfg.Relations.Dwarf(0.8)
		assert.Equal(t, want.BV, bv, spec)
		assert.InDelta(t, want.AbsMagV+0.2, mv, 1e-12, spec)
	}
	// disk=spinpop: the sheet's tracer density over its peak at age 0. A
	// tracer at the heating law's 10 Gyr dispersion (25 km/s in the sheet
	// of σ_s 20 km/s, Σ 70 M☉ pc⁻²: z0 = 400/(π G 70) = 422.9 pc, n = 1.28)
	// falls by cosh(1)^−1.28 = 0.5739 from the plane to z0 (disk.Sheet's
	// formula, worked by hand).
	cfg, err = parseVariant("disk=spinpop")
	require.NoError(t, err)
	require.NotNil(t, cfg.Vertical)
	assert.InDelta(t, 1, cfg.Vertical.Accept(0, 0), 1e-12, "the youngest stars at the plane: the bound")
	assert.InDelta(t, 0.5739, cfg.Vertical.Accept(10, 422.9)/cfg.Vertical.Accept(10, 0), 5e-4)
	assert.Less(t, cfg.Vertical.Accept(10, 0), cfg.Vertical.Accept(1, 0), "hot stars are spread thinner at the plane")
	assert.Equal(t, []float64{2.6, 8.122}, []float64{cfg.ScaleLengthKpc, cfg.SunRadiusKpc})
	for spec, want := range map[string]string{
		"disk=thick":     "want spinpop",
		"relations=mist": "want spinpop, spinpop-sequence or spinpop-lifetimes",
		"ramp":           "not key=value",
		"law=skumanich":  "want barnes2007 or mamajek2008",
		"scatter=wide":   `scatter="wide" is not a number`,
		"tilt=3":         `unknown key "tilt"`,
		"ramp=-2":        "RampSlope", // the other model's own check: a rate below zero
		"stall=0.6":      "want START:DURATION",
		"stall=0:0.5":    "StartGyr > 0",
	} {
		_, err := parseVariant(spec)
		require.Error(t, err, spec)
		assert.Contains(t, err.Error(), want, spec)
	}
}

// The long check of issue 8 (SPINPOP_OTHERMODEL_CHECK=1; about an hour on
// two cores): 20 smooth and 10 burst catalogs (fractions 0.1–0.2, ages
// 0.5–1.5 Gyr; SPINPOP_OTHERMODEL_CASES=k,m for other counts). Targets: claims on ≤ 5 % of smooth catalogs; the burst found
// within ±0.1 Gyr with the truth in its 95 % interval in ≥ 90 %.
// SPINPOP_OTHERMODEL_VARIANT changes the other model further (parseVariant);
// SPINPOP_OTHERMODEL_OWN=1 makes the same cases with spinpop's own
// generator instead, as a control (ownModelCatalogs);
// SPINPOP_OTHERMODEL_SEQUENCE=measured fits each catalog with the relation
// table moved to where its main sequence was measured to lie
// (measuredSequenceComparison).
func TestOtherModelLong(t *testing.T) {
	if os.Getenv("SPINPOP_OTHERMODEL_CHECK") == "" {
		t.Skip("set SPINPOP_OTHERMODEL_CHECK=1 to run the long independent-model check (about an hour)")
	}
	reps := 200
	if v, err := strconv.Atoi(os.Getenv("SPINPOP_OTHERMODEL_REPLICATES")); err == nil && v > 0 {
		reps = v
	}
	nSmooth, nBurst := 20, 10
	if v := os.Getenv("SPINPOP_OTHERMODEL_CASES"); v != "" {
		fmt.Sscanf(v, "%d,%d", &nSmooth, &nBurst)
	}
	var cases []checkCase
	for i := range nSmooth {
		cases = append(cases, checkCase{name: fmt.Sprintf("smooth-%02d", i+1), seed: uint64(1000 + i), hist: othermodel.SmoothHistory()})
	}
	for i := range nBurst {
		age := 0.5 + float64(i)/float64(max(nBurst-1, 1)) // 0.5 … 1.5 Gyr
		frac := 0.1 + 0.1*float64(i%3)/2                  // 0.10, 0.15, 0.20
		cases = append(cases, checkCase{name: fmt.Sprintf("burst-%.2f", age), seed: uint64(2000 + i), hist: othermodel.BoxBurst(age, 0.1, frac), ageGyr: age})
	}
	// SPINPOP_OTHERMODEL_SKIP=k,m leaves out the first k smooth and the
	// first m burst catalogs (same seeds and ages otherwise), so a run cut
	// short can be continued where it ended.
	if v := os.Getenv("SPINPOP_OTHERMODEL_SKIP"); v != "" {
		var k, m int
		if _, err := fmt.Sscanf(v, "%d,%d", &k, &m); err != nil {
			t.Fatalf("SPINPOP_OTHERMODEL_SKIP=%q: want two counts, smooth then burst, as in 2,6", v)
		}
		var kept []checkCase
		for i, cs := range cases {
			if (i < nSmooth && i >= k) || (i >= nSmooth && i-nSmooth >= m) {
				kept = append(kept, cs)
			}
		}
		require.NotEmpty(t, kept, "SPINPOP_OTHERMODEL_SKIP=%q leaves no catalog", v)
		cases = kept
	}
	// SPINPOP_OTHERMODEL_ONLY=name,name keeps only the catalogs named
	// (smooth-02, burst-1.17, …): one catalog run again at more replicates.
	if v := os.Getenv("SPINPOP_OTHERMODEL_ONLY"); v != "" {
		var names []string
		for _, n := range strings.Split(v, ",") {
			n = strings.TrimSpace(n)
			require.True(t, slices.ContainsFunc(cases, func(cs checkCase) bool { return cs.name == n }),
				"SPINPOP_OTHERMODEL_ONLY=%q: %q is no catalog of the check (smooth-01, burst-0.50, …; with SPINPOP_OTHERMODEL_CASES and _SKIP applied)", v, n)
			names = append(names, n)
		}
		cases = slices.DeleteFunc(cases, func(cs checkCase) bool { return !slices.Contains(names, cs.name) })
	}
	extra := strings.ReplaceAll(os.Getenv("SPINPOP_OTHERMODEL_EXTRA"), `\n`, "\n")
	variant, err := parseVariant(os.Getenv("SPINPOP_OTHERMODEL_VARIANT"))
	require.NoError(t, err)
	maker := otherModelCatalogs(variant)
	if os.Getenv("SPINPOP_OTHERMODEL_OWN") != "" {
		maker = ownModelCatalogs(strings.ReplaceAll(os.Getenv("SPINPOP_OWNMODEL_TRUTH"), `\n`, "\n"))
	}
	rs := runCheckWith(t, cases, reps, 0, extra, maker)
	falseClaims, smooth, found, covered, bursts := summarise(t, rs)
	if fig := os.Getenv("SPINPOP_OTHERMODEL_FIGURE"); fig != "" {
		require.NoError(t, writeCheckFigure(fig, rs))
	}
	assert.LessOrEqual(t, float64(falseClaims), 0.05*float64(smooth))
	assert.GreaterOrEqual(t, float64(found), 0.9*float64(bursts))
	assert.GreaterOrEqual(t, float64(covered), 0.9*float64(bursts))
}

// checkLineFormat is how runCheck logs each catalog's result (before the
// verdict's text), and checkLine reads it back (readCheckLogs).
const checkLineFormat = "%-12s truth %4.2f | %-10s age %.3f [%.3f, %.3f] | LR %.0f | deviance %.0f vs %.0f (p %.2g)"

var checkLine = regexp.MustCompile(`(\S+)\s+truth (\S+) \| (\S+)\s+age (\S+) \[(\S+), (\S+)\] \| LR (\S+) \| deviance (\S+) vs (\S+) \(p (\S+)\)`)

// readCheckLogs reads the per-catalog lines of long-check logs, a later
// log's line replacing an earlier one's for the same catalog (a run
// continued with SPINPOP_OTHERMODEL_SKIP, or one catalog run again), in
// the order the catalogs first appear.
func readCheckLogs(paths []string) ([]checkResult, error) {
	var out []checkResult
	at := map[string]int{}
	for _, path := range paths {
		b, err := os.ReadFile(path)
		if err != nil {
			return nil, err
		}
		for n, line := range strings.Split(string(b), "\n") {
			m := checkLine.FindStringSubmatch(line)
			if m == nil {
				continue
			}
			var v [8]float64
			for i, s := range []string{m[2], m[4], m[5], m[6], m[7], m[8], m[9], m[10]} {
				if v[i], err = strconv.ParseFloat(s, 64); err != nil {
					return nil, fmt.Errorf("%s:%d: %q is not a number in a check line", path, n+1, s)
				}
			}
			r := checkResult{checkCase: checkCase{name: m[1], ageGyr: v[0]}, strength: m[3],
				age: v[1], lo95: v[2], hi95: v[3], lr: v[4], deviance: v[5], exp: v[6], adequacyP: v[7]}
			if i, ok := at[r.name]; ok {
				out[i] = r
				continue
			}
			at[r.name] = len(out)
			out = append(out, r)
		}
	}
	return out, nil
}

func TestReadCheckLogs(t *testing.T) {
	dir := t.TempDir()
	// Lines as runCheck writes them (from a run of the long check), the
	// second file re-running burst-0.50.
	a := filepath.Join(dir, "a.log")
	require.NoError(t, os.WriteFile(a, []byte(`=== RUN   TestOtherModelLong
    othermodel_check_test.go:237: smooth-04    truth 0.00 | unreliable age 2.997 [2.137, 3.866] | LR 23 | deviance 404 vs 250 (p 3.6e-13) | The models do not describe …
    othermodel_check_test.go:102: burst-0.50: with burst, expansion 3: ln L = -995.65 at …
    othermodel_check_test.go:237: burst-0.50   truth 0.50 | weak       age 0.454 [0.345, 0.652] | LR 612 | deviance 370 vs 191 (p 0) | …
`), 0o644))
	b := filepath.Join(dir, "b.log")
	require.NoError(t, os.WriteFile(b, []byte(`    othermodel_check_test.go:237: burst-0.50   truth 0.50 | moderate   age 0.480 [0.400, 0.600] | LR 650 | deviance 360 vs 190 (p 0.001) | …
`), 0o644))
	rs, err := readCheckLogs([]string{a, b})
	require.NoError(t, err)
	require.Len(t, rs, 2)
	assert.Equal(t, checkResult{checkCase: checkCase{name: "smooth-04"}, strength: "unreliable", age: 2.997, lo95: 2.137, hi95: 3.866,
		lr: 23, deviance: 404, exp: 250, adequacyP: 3.6e-13}, rs[0])
	assert.Equal(t, "moderate", rs[1].strength, "the later log's line replaces the earlier")
	assert.Equal(t, []float64{0.5, 0.48, 0.4, 0.6, 650}, []float64{rs[1].ageGyr, rs[1].age, rs[1].lo95, rs[1].hi95, rs[1].lr})
	_, err = readCheckLogs([]string{filepath.Join(dir, "missing.log")})
	assert.Error(t, err)

	// What runCheck writes now reads back (the two must change together).
	c := filepath.Join(dir, "c.log")
	want := checkResult{checkCase: checkCase{name: "burst-1.28", ageGyr: 1.28}, strength: "moderate", age: 1.556, lo95: 1.181, hi95: 2.011, lr: 277, deviance: 352, exp: 228, adequacyP: 0.0012}
	line := fmt.Sprintf(checkLineFormat+" | verdict | ", want.name, want.ageGyr, want.strength, want.age, want.lo95, want.hi95, want.lr, want.deviance, want.exp, want.adequacyP)
	require.NoError(t, os.WriteFile(c, []byte("    othermodel_check_test.go:116: "+line+"\n"), 0o644))
	rs, err = readCheckLogs([]string{c})
	require.NoError(t, err)
	require.Len(t, rs, 1)
	assert.Equal(t, want, rs[0])
}

// TestOtherModelFigureFromLogs redraws the check's figure and summary from
// the logs of several runs (SPINPOP_OTHERMODEL_LOGS, comma-separated; the
// figure to SPINPOP_OTHERMODEL_FIGURE), for a check run in pieces.
func TestOtherModelFigureFromLogs(t *testing.T) {
	logs, fig := os.Getenv("SPINPOP_OTHERMODEL_LOGS"), os.Getenv("SPINPOP_OTHERMODEL_FIGURE")
	if logs == "" || fig == "" {
		t.Skip("set SPINPOP_OTHERMODEL_LOGS and SPINPOP_OTHERMODEL_FIGURE to redraw the long check's figure from its logs")
	}
	rs, err := readCheckLogs(strings.Split(logs, ","))
	require.NoError(t, err)
	require.NotEmpty(t, rs, "no check lines in %s", logs)
	summarise(t, rs)
	require.NoError(t, writeCheckFigure(fig, rs))
}

// TestControlFigureFromLogs draws the own-model control's figure
// (writeControlFigure) from the logs of the check on the other model's
// catalogs (SPINPOP_OTHERMODEL_LOGS) and of the same check on spinpop's
// own (SPINPOP_OTHERMODEL_OWN=1), one set or more
// (SPINPOP_OWNMODEL_LOGS=a.log;b.log, each set a comma-separated list of
// logs), labelled by SPINPOP_OWNMODEL_LABELS (label;label).
func TestControlFigureFromLogs(t *testing.T) {
	other, own, fig := os.Getenv("SPINPOP_OTHERMODEL_LOGS"), os.Getenv("SPINPOP_OWNMODEL_LOGS"), os.Getenv("SPINPOP_CONTROL_FIGURE")
	if other == "" || own == "" || fig == "" {
		t.Skip("set SPINPOP_OTHERMODEL_LOGS, SPINPOP_OWNMODEL_LOGS (and _LABELS) and SPINPOP_CONTROL_FIGURE to draw the own-model control's figure")
	}
	ro, err := readCheckLogs(strings.Split(other, ","))
	require.NoError(t, err)
	require.NotEmpty(t, ro, "no check lines in %s", other)
	summarise(t, ro)
	sets := []controlSet{{ro, "another model's catalogs"}}
	labels := strings.Split(os.Getenv("SPINPOP_OWNMODEL_LABELS"), ";")
	for i, logs := range strings.Split(own, ";") {
		rs, err := readCheckLogs(strings.Split(logs, ","))
		require.NoError(t, err)
		require.NotEmpty(t, rs, "no check lines in %s", logs)
		summarise(t, rs)
		label := "spinpop's own catalogs"
		if i < len(labels) && labels[i] != "" {
			label = labels[i]
		}
		sets = append(sets, controlSet{rs, label})
	}
	require.NoError(t, writeControlFigure(fig, sets))
}

// The own-model control makes what it says: a catalog of
// ownCatalogStars rows from a truth that is example:fit with the case's
// seed and the box burst's centre, share and standard deviation (w/√12, the
// standard deviation of a uniform distribution of width w), and a smooth
// case whose burst holds no mass.
func TestOwnModelCatalogs(t *testing.T) {
	if testing.Short() {
		t.Skip("draws two mock catalogs; skipped with -short")
	}
	dir := t.TempDir()
	maker := ownModelCatalogs("\n[spin]\nperiod_scatter_dex = 0.08\n")
	for _, cs := range []checkCase{
		{name: "burst", seed: 31, hist: othermodel.BoxBurst(1.2, 0.1, 0.15), ageGyr: 1.2},
		{name: "smooth", seed: 32, hist: othermodel.SmoothHistory()},
	} {
		path := filepath.Join(dir, cs.name+".csv")
		require.NoError(t, maker.write(path, cs))
		res, err := scenarios.Resolve(filepath.Join(dir, cs.name+"-truth.toml"))
		require.NoError(t, err)
		s := res.Scenario
		assert.Equal(t, cs.seed, s.Run.Seed)
		assert.Equal(t, 0.08, s.Spin.PeriodScatterDex, "the truth's extra lines are read")
		b, ok := s.History.Parts["burst"]
		require.True(t, ok)
		if cs.hist.Burst == nil {
			assert.Zero(t, b.Float("mass_fraction"), "a smooth case's burst holds no mass")
		} else {
			assert.InDelta(t, 1.2, b.Float("age_gyr"), 1e-12)
			assert.InDelta(t, 0.1/math.Sqrt(12), b.Float("width_gyr"), 1e-12)
			assert.InDelta(t, 0.15, b.Float("mass_fraction"), 1e-12)
		}
		data, err := os.ReadFile(path)
		require.NoError(t, err)
		rows := 0
		for _, line := range strings.Split(strings.TrimSpace(string(data)), "\n") {
			if !strings.HasPrefix(line, "#") {
				rows++
			}
		}
		assert.Equal(t, ownCatalogStars+1, rows, "header and one row per catalog star")
	}
}
