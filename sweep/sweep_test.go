package sweep

import (
	"context"
	"encoding/csv"
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"sync/atomic"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/scenarios"
)

func writeSweep(t testing.TB, text string) string {
	t.Helper()
	p := filepath.Join(t.TempDir(), "sweep.toml")
	require.NoError(t, os.WriteFile(p, []byte(text), 0o644))
	return p
}

const lawsSweep = `name = "laws"
scenario = "example:burst"
work = ["simulate"]

[set]
run.stars_generated = 100_000

[[axis]]
key = "spin.law"
choices = "all"

[[axis]]
key = "history.burst.age_gyr"
from = 0.3
to = 0.9
step = 0.3

[[axis]]
key = "run.seed"
values = [1, 2, 3]
zip = "noise"

[[axis]]
key = "history.burst.width_gyr"
values = [0.05, 0.06, 0.07]
zip = "noise"
`

// Each point is the base scenario with [set] and its axis values, so its
// hash is the one `check example:burst --set …` gives for the same keys.
func TestExpandPointsAreTheOverriddenScenario(t *testing.T) {
	s, err := Load(writeSweep(t, lawsSweep))
	require.NoError(t, err)
	laws, _ := scenarios.Choices("spin.law")
	require.Len(t, laws, 4)
	assert.Equal(t, 4*3*3, s.Len(), "laws × ages × (seed, width zipped)")
	assert.Equal(t, []any{0.3, 0.6, 0.9}, s.Axes[1].Values, "0.3 + 2 × 0.3 reads 0.9")

	plan, err := s.Plan(0)
	require.NoError(t, err)
	require.Len(t, plan.Points, 36)
	assert.Equal(t, []string{"spin.law", "history.burst.age_gyr", "run.seed", "history.burst.width_gyr"}, plan.Axes)
	// The last group varies fastest; zipped axes move together.
	assert.Equal(t, []any{laws[0], 0.3, int64(1), 0.05}, plan.Points[0].Values)
	assert.Equal(t, []any{laws[0], 0.3, int64(2), 0.06}, plan.Points[1].Values)
	assert.Equal(t, []any{laws[0], 0.6, int64(1), 0.05}, plan.Points[3].Values)
	assert.Equal(t, []any{laws[1], 0.3, int64(1), 0.05}, plan.Points[9].Values)

	for _, i := range []int{0, 13, 35} {
		v := plan.Points[i].Values
		sets := []string{"run.stars_generated=100000",
			"spin.law=" + v[0].(string),
			fmt.Sprintf("history.burst.age_gyr=%v", v[1]),
			fmt.Sprintf("run.seed=%v", v[2]),
			fmt.Sprintf("history.burst.width_gyr=%v", v[3])}
		o, err := scenarios.ParseOverrides(sets)
		require.NoError(t, err)
		want, err := scenarios.Resolve("example:burst", o...)
		require.NoError(t, err)
		assert.Equal(t, want.Hash(), plan.Points[i].Hash, "point %d", i)
	}
}

func TestSweepFileErrors(t *testing.T) {
	cases := []struct{ text, want string }{
		{"scenario = \"example:base\"\nwrk = [\"simulate\"]\n", `sweep.toml:2: unknown key "wrk"; did you mean "work"?`},
		{"scenario = \"example:base\"\nwork = [\"simulat\"]\n", `sweep.toml:2: work step simulat is not one of simulate, compare, test-burst, test-alternatives; did you mean "simulate"?`},
		{"scenario = \"example:base\"\nwork = [\"compare\"]\n", `work "compare" compares with an observed catalog, but scenario example:base names none`},
		{"scenario = \"nothere.toml\"\nwork = [\"simulate\"]\n", `sweep.toml:1: scenario = "nothere.toml": `},
		{"scenario = \"example:base\"\nwork = [\"simulate\"]\n[[axis]]\nkey = \"spin.turnover\"\nchoices = \"all\"\n[[axis]]\nkey = \"run.seed\"\nchoices = \"all\"\n",
			"sweep.toml:8: run.seed has no fixed set of names"},
		{"scenario = \"example:base\"\nwork = [\"simulate\"]\n[[axis]]\nkey = \"history.decline.timescale_gyr\"\nfrom = 1.0\nto = 2.0\nstep = -1.0\n",
			"sweep.toml:7: step must be a positive number"},
		{"scenario = \"example:base\"\nwork = [\"simulate\"]\n[[axis]]\nkey = \"run.seed\"\nvalues = [1, 2]\nzip = \"z\"\n[[axis]]\nkey = \"spin.law\"\nvalues = [\"torque\"]\nzip = \"z\"\n",
			`sweep.toml:7: axis "spin.law" has 1 values but axis "run.seed", zipped with it (zip = "z"), has 2`},
		{"scenario = \"example:base\"\nwork = [\"simulate\"]\n[[axis]]\nkey = \"run.seed\"\nvalues = [1, 2]\nfrom = 1\nto = 2\n",
			`sweep.toml:3: axis "run.seed" needs exactly one of`},
		{"scenario = \"example:base\"\nwork = [\"simulate\"]\n[set]\nspin.lwa = \"torque\"\n",
			`sweep.toml:4 ([set] spin): unknown key "lwa" in [spin]; did you mean "law"?`},
	}
	for _, c := range cases {
		_, err := Load(writeSweep(t, c.text))
		require.Error(t, err, c.text)
		assert.Contains(t, err.Error(), c.want, c.text)
	}
}

// A bad axis value is reported once, naming the sweep file, the axis's
// line and the value, with the scenario's own message.
func TestPlanErrorsNameTheAxis(t *testing.T) {
	s, err := Load(writeSweep(t, "scenario = \"example:burst\"\nwork = [\"simulate\"]\n[[axis]]\nkey = \"run.seed\"\nvalues = [1, 2]\n[[axis]]\nkey = \"history.burst.mass_fraction\"\nvalues = [0.1, 1.5]\n[[axis]]\nkey = \"spin.lwa\"\nvalues = [\"torque\"]\n"))
	require.NoError(t, err)
	_, err = s.Plan(1)
	require.Error(t, err)
	msg := err.Error()
	assert.Contains(t, msg, "sweep.toml:6 (axis history.burst.mass_fraction = 1.5): history.burst.mass_fraction = 1.5 is out of range; it must be in [0, 1]")
	assert.Contains(t, msg, `sweep.toml:9 (axis spin.lwa = "torque"): unknown key "lwa" in [spin]; did you mean "law"?`)
	assert.Equal(t, 1, strings.Count(msg, "out of range"), "each distinct problem once:\n%s", msg)

	s, err = Load(writeSweep(t, "scenario = \"example:base\"\nwork = [\"simulate\"]\n[[axis]]\nkey = \"run.seed\"\nvalues = [1, 2, 1]\n"))
	require.NoError(t, err)
	_, err = s.Plan(1)
	assert.ErrorContains(t, err, "points 0 (run.seed = 1) and 2 (run.seed = 1) are the same scenario")
}

// fakeWork is a stand-in for the workflow: it writes a file and reports
// numbers derived from the point's scenario, and fails where told.
type fakeWork struct {
	calls atomic.Int32
	fail  func(p *Point) error
}

func (f *fakeWork) Work(ctx context.Context, p *Point, steps []string, dir string) (Headline, error) {
	f.calls.Add(1)
	if f.fail != nil {
		if err := f.fail(p); err != nil {
			return Headline{}, err
		}
	}
	s := &p.Scenario.Scenario
	if err := os.WriteFile(filepath.Join(dir, "work.txt"), []byte(strings.Join(steps, ",")), 0o644); err != nil {
		return Headline{}, err
	}
	return Headline{CatalogStars: I(int64(s.Run.Seed) * 10), BurstAgeGyr: F(s.History.Parts["burst"].Float("age_gyr")),
		Verdict: s.Spin.Law, Extra: map[string]float64{"seed": float64(s.Run.Seed)}}, nil
}

func readCSV(t *testing.T, path string) []map[string]string {
	t.Helper()
	f, err := os.Open(path)
	require.NoError(t, err)
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	require.NoError(t, err)
	var out []map[string]string
	for _, r := range rows[1:] {
		m := map[string]string{}
		for i, h := range rows[0] {
			m[h] = r[i]
		}
		out = append(out, m)
	}
	return out
}

// The local runner: a failed point (an error or a panic) is recorded and
// the rest go on; a second run skips finished points and reruns only the
// failed ones; the table lists every point.
func TestRunnerRestartable(t *testing.T) {
	s, err := Load(writeSweep(t, "scenario = \"example:burst\"\nwork = [\"simulate\"]\n[[axis]]\nkey = \"run.seed\"\nfrom = 1\nto = 6\n[[axis]]\nkey = \"history.burst.age_gyr\"\nvalues = [0.5, 0.8]\n"))
	require.NoError(t, err)
	plan, err := s.Plan(0)
	require.NoError(t, err)
	require.Len(t, plan.Points, 12)
	out := t.TempDir()

	broken := true
	w := &fakeWork{fail: func(p *Point) error {
		if !broken {
			return nil
		}
		switch p.Scenario.Scenario.Run.Seed {
		case 2:
			return errors.New("deliberate failure")
		case 5:
			panic("deliberate panic")
		}
		return nil
	}}
	r := &Runner{Out: out, Workers: 3, Worker: w}
	sum, err := r.Run(context.Background(), s, plan)
	require.NoError(t, err)
	assert.Equal(t, 8, sum.Ran)
	assert.Equal(t, 4, sum.Failed)
	assert.EqualValues(t, 12, w.calls.Load())

	rows := readCSV(t, filepath.Join(out, "results.csv"))
	require.Len(t, rows, 12)
	for i, row := range rows {
		assert.Equal(t, fmt.Sprint(i), row["index"])
		assert.Equal(t, plan.Points[i].Hash, row["hash"])
		switch row["run.seed"] {
		case "2":
			assert.Equal(t, StatusFailed, row["status"])
			assert.Equal(t, "deliberate failure", row["error"])
		case "5":
			assert.Equal(t, StatusFailed, row["status"])
			assert.Contains(t, row["error"], "the work panicked: deliberate panic")
		default:
			assert.Equal(t, StatusDone, row["status"])
			assert.Equal(t, row["run.seed"]+"0", row["catalog_stars"])
			assert.Equal(t, row["history.burst.age_gyr"], row["burst_age_gyr"])
			assert.Equal(t, row["run.seed"], row["seed"], "extra numbers get columns")
		}
	}
	var table Table
	b, err := os.ReadFile(filepath.Join(out, "results.json"))
	require.NoError(t, err)
	require.NoError(t, json.Unmarshal(b, &table))
	assert.Equal(t, 8, table.Done)
	assert.Equal(t, 4, table.Failed)

	done0, err := os.ReadFile(filepath.Join(PointDir(out, plan.Points[0].Hash), resultFile))
	require.NoError(t, err)
	broken = false
	w.calls.Store(0)
	sum, err = r.Run(context.Background(), s, plan)
	require.NoError(t, err)
	assert.EqualValues(t, 4, w.calls.Load(), "only the failed points run again")
	assert.Equal(t, 8, sum.Skipped)
	assert.Equal(t, 4, sum.Ran)
	again, err := os.ReadFile(filepath.Join(PointDir(out, plan.Points[0].Hash), resultFile))
	require.NoError(t, err)
	assert.Equal(t, done0, again, "a finished point is not touched")
	for _, row := range readCSV(t, filepath.Join(out, "results.csv")) {
		assert.Equal(t, StatusDone, row["status"])
	}

	// Other work at the same points is not "done".
	st, _ := PointStatus(out, plan.Points[0].Hash, []string{StepSimulate, StepCompare})
	assert.Equal(t, StatusMissing, st)
}

// The plan refuses to run a point whose scenario changed since it was
// made (the base file edited between submission and run).
func TestRunPointRefusesChangedScenario(t *testing.T) {
	dir := t.TempDir()
	base := filepath.Join(dir, "base.toml")
	require.NoError(t, os.WriteFile(base, []byte("extends = \"example:base\"\n"), 0o644))
	sp := filepath.Join(dir, "sweep.toml")
	require.NoError(t, os.WriteFile(sp, []byte("scenario = \"base.toml\"\nwork = [\"simulate\"]\n[[axis]]\nkey = \"run.seed\"\nvalues = [1, 2]\n"), 0o644))
	s, err := Load(sp)
	require.NoError(t, err)
	plan, err := s.Plan(1)
	require.NoError(t, err)
	require.NoError(t, os.WriteFile(base, []byte("extends = \"example:base\"\n[spin]\nlaw = \"torque\"\n"), 0o644))
	s2, err := Load(sp)
	require.NoError(t, err)
	_, err = RunPoint(context.Background(), s2, t.TempDir(), plan.Points[0], &fakeWork{})
	assert.ErrorContains(t, err, "changed since the plan was made")
}

// BenchmarkPlan1000 is a dry run of 1,000 points: expand and resolve
// every point with its hash.
func BenchmarkPlan1000(b *testing.B) {
	s, err := Load(writeSweep(b, `scenario = "example:fit"
work = ["test-burst"]
[[axis]]
key = "spin.law"
choices = "all"
[[axis]]
key = "spin.turnover"
choices = "all"
[[axis]]
key = "history.burst.age_gyr"
from = 0.1
to = 2.5
count = 25
[[axis]]
key = "run.seed"
from = 1
to = 5
`))
	require.NoError(b, err)
	require.Equal(b, 1000, s.Len())
	for b.Loop() {
		if _, err := s.Plan(0); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkRunnerPerPoint is the runner's own cost per point (resolve,
// hash check, folders, markers, merge), with work that does nothing.
func BenchmarkRunnerPerPoint(b *testing.B) {
	s, err := Load(writeSweep(b, "scenario = \"example:fit\"\nwork = [\"test-burst\"]\n[[axis]]\nkey = \"run.seed\"\nfrom = 1\nto = 100\n"))
	require.NoError(b, err)
	plan, err := s.Plan(0)
	require.NoError(b, err)
	noop := WorkFunc(func(context.Context, *Point, []string, string) (Headline, error) { return Headline{}, nil })
	b.ResetTimer()
	for b.Loop() {
		r := &Runner{Out: b.TempDir(), Workers: 1, Worker: noop}
		if _, err := r.Run(context.Background(), s, plan); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Microseconds())/float64(b.N*len(plan.Points)), "µs/point")
}
