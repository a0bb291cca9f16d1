package compare

import (
	"context"
	"fmt"
	"math"
	"strings"
	"sync"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/model"
	"spinpop/model/spin"
	"spinpop/model/spots"
	"spinpop/sfh"
)

// jointEdges: 0.1 Gyr bins to 1.5 Gyr, then coarser.
var jointEdges = []float64{0, 0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.9, 1.0, 1.2, 1.5, 2, 3, 4.5, 6.5, 10}

// jointSetup is a real population's templates with their bank, and a
// nuisance model freeing the Barnes (2007) coefficient a and the color
// zero point, built once for the tests of this file.
type jointSetup struct {
	world *testWorld
	tpl   *Templates
	obs   *BankObserver
}

var (
	jointOnce sync.Once
	jointVal  *jointSetup
)

func newJointSetup(t testing.TB) *jointSetup {
	jointOnce.Do(func() {
		hist, err := sfh.New(10, []sfh.Part{{Name: "flat", Component: sfh.Constant{}, Weight: 1}})
		require.NoError(t, err)
		world := newTestWorld(t, hist, jointEdges)
		sp, err := NewSpace(0.5, 1.5, 10, 1, 60, 24, nil)
		require.NoError(t, err)
		tpl, err := BuildTemplates(context.Background(), world.pop, world.binIntegrals(), jointEdges, sp,
			TemplateOptions{Stars: 1_500_000, Seed: 3, Workers: 2, Bank: &model.BankMargin{ColorMag: 0.06}})
		require.NoError(t, err)
		base := world.pop
		obs := &BankObserver{Bank: tpl.Bank, Space: sp, AgeEdgesGyr: jointEdges, BaseFractionScale: 1, Workers: 2,
			Apply: func(v []float64) (*model.Population, error) {
				q := *base
				law := spin.Barnes2007()
				law.A = v[0]
				q.Law = law
				q.Survey.Color = model.ColorCalibration{OffsetMag: v[1]}
				return &q, nil
			}}
		jointVal = &jointSetup{world: world, tpl: tpl, obs: obs}
	})
	return jointVal
}

func (s *jointSetup) nuisance() *Nuisance {
	return &Nuisance{Source: s.obs, Params: []NuisanceParam{
		{Name: "spin.a", Nominal: 0.7725, Min: 0.6, Max: 0.95, Sigma: 0.05},
		{Name: "survey.color_offset_mag", Nominal: 0, Min: -0.05, Max: 0.05, Sigma: 0.02},
	}}
}

// burstModel is a constant history plus a Gaussian burst with free age and
// mass fraction.
func (s *jointSetup) burstModel(t testing.TB) HistoryModel {
	h, err := sfh.New(10, []sfh.Part{
		{Name: "flat", Component: sfh.Constant{}, Weight: 1},
		{Name: "burst", Component: sfh.Burst{AgeGyr: 0.6, WidthGyr: 0.05, MassFraction: 0.1}},
	})
	require.NoError(t, err)
	return HistoryModel{Base: h, AgeEdgesGyr: jointEdges, Free: []FreeParam{
		{Name: "burst.age_gyr", Min: 0.2, Max: 1.4},
		{Name: "burst.mass_fraction", Min: 0, Max: 0.5},
	}}
}

// asimovLikelihood is noise-free data of 30,000 stars made by nu's source
// (re-observing the stored stars) at trueNu with a burst at 0.6 Gyr of 20 %, in a
// likelihood whose templates are made at nu's nominal values.
func (s *jointSetup) asimovLikelihood(t testing.TB, m HistoryModel, nu *Nuisance, trueNu []float64) (*Likelihood, *Templates, []float64) {
	truth, err := nu.Source.Observe(context.Background(), trueNu)
	require.NoError(t, err)
	w, err := m.Weights([]float64{0.6, 0.2})
	require.NoError(t, err)
	data := Asimov(truth, w, 30000)
	nominal, err := nu.Source.Observe(context.Background(), nu.Nominal())
	require.NoError(t, err)
	like, err := NewLikelihood(nominal, data, LikeOptions{TemplateNoise: NoiseIgnore})
	require.NoError(t, err)
	return like, nominal, data
}

// jointTrueNu are the nuisance values (a, color zero point) the joint
// tests' shifted data are made at, away from the nominal (0.7725, 0).
var jointTrueNu = []float64{0.82, 0.015}

// shifted is the nuisance model, the burst model and asimovLikelihood's
// data made at jointTrueNu: the set-up of the tests that fit their way
// back to the truth.
func (s *jointSetup) shifted(t testing.TB) (*Nuisance, HistoryModel, *Likelihood, *Templates, []float64) {
	nu, m := s.nuisance(), s.burstModel(t)
	like, nominal, data := s.asimovLikelihood(t, m, nu, jointTrueNu)
	return nu, m, like, nominal, data
}

// The nuisance gradient of the joint objective agrees with finite
// differences. Common practice, no source: central differences.
func TestJointObjectiveGradient(t *testing.T) {
	s := newJointSetup(t)
	nu := s.nuisance()
	m := s.burstModel(t)
	nominal, err := nu.Templates(context.Background(), nu.Nominal())
	require.NoError(t, err)
	w, err := m.Weights([]float64{0.55, 0.2})
	require.NoError(t, err)
	data := poissonData(nominal.Collapse2D(), w, 20000/sum(nominal.Expected(w, nil)), 5)
	for _, norm := range []string{NormFree, NormPerColor} {
		for _, noise := range []string{NoiseIgnore, NoiseBarlowBeeston} {
			like, err := NewLikelihood(nominal, data, LikeOptions{Normalisation: norm, TemplateNoise: noise})
			require.NoError(t, err)
			mo, err := newMorph(context.Background(), like, nu, nu.Nominal(), nil)
			require.NoError(t, err)
			o := newObjective(like, m, nu, mo)
			x := append(m.ToInternal([]float64{0.5, 0.15}), nuisanceToInternal(o.nuLo, o.nuHi, []float64{0.79, 0.006})...)
			o.eval(x)
			g := append([]float64(nil), o.lastG...)
			for j := range x {
				h := 1e-5
				xp, xm := append([]float64(nil), x...), append([]float64(nil), x...)
				xp[j] += h
				xm[j] -= h
				o.eval(xp)
				fp := o.lastF
				o.eval(xm)
				fd := (fp - o.lastF) / (2 * h)
				assert.InDelta(t, fd, g[j], 1e-4*(1+math.Abs(fd)), "%s/%s: ∂f/∂x_%d", norm, noise, j)
			}
		}
	}
}

// The expansion reproduces the templates at its side points exactly and,
// between them, the templates made at that point to a small fraction of
// the change the parameter makes.
func TestMorphInterpolates(t *testing.T) {
	s := newJointSetup(t)
	nu := s.nuisance()
	data := Asimov(s.tpl, s.tpl.Totals(), 1000)
	like, err := NewLikelihood(s.tpl, data, LikeOptions{})
	require.NoError(t, err)
	mo, err := newMorph(context.Background(), like, nu, nu.Nominal(), nil)
	require.NoError(t, err)
	rows := make([]float64, len(mo.t0))
	for _, v := range [][]float64{{0.7725 + 0.05, 0}, {0.7725 + 0.025, 0}, {0.7725, -0.01}} {
		mo.apply(v, rows, make([]float64, len(rows)), nil, nil)
		exact, err := nu.Templates(context.Background(), v)
		require.NoError(t, err)
		want, _, err := like.rowsOf(exact)
		require.NoError(t, err)
		var change, miss float64
		for i := range rows {
			change += math.Abs(want[i] - mo.t0[i])
			miss += math.Abs(want[i] - rows[i])
		}
		t.Logf("at %v: interpolation misses %.3g of a change of %.3g (%.1f %%)", v, miss, change, 100*miss/change)
		assert.Less(t, miss, 0.25*change, "at %v", v)
		if v[0] == 0.7725+0.05 {
			assert.Less(t, miss, 1e-9*change, "side points are exact")
		}
	}
}

// A joint fit recovers a shifted spin-down coefficient and color zero
// point together with the burst, from noise-free (Asimov) data made by
// re-observing the same stars at the true values; held at the nominal
// values instead, the fit puts the burst at the wrong age — the bias that
// freeing the coefficient removes.
func TestFitJointRecoversNuisanceAndBurst(t *testing.T) {
	nu, m, like, nominal, data := newJointSetup(t).shifted(t)
	trueNu := jointTrueNu
	joint, err := FitJoint(context.Background(), like, m, nu, FitOptions{Starts: 3})
	require.NoError(t, err)
	t.Logf("joint: θ = %v, ν = %v, ln L = %.2f, rounds %d, evaluations %d", joint.Theta, joint.Nuisance, joint.LogL, joint.Rounds, joint.Evaluations)
	assert.InDelta(t, 0.6, joint.Theta[0], 0.02, "burst age")
	assert.InDelta(t, 0.2, joint.Theta[1], 0.02, "burst fraction")
	assert.InDelta(t, trueNu[0], joint.Nuisance[0], 0.01, "coefficient a")
	assert.InDelta(t, trueNu[1], joint.Nuisance[1], 0.004, "color offset")
	require.NotNil(t, joint.Templates)
	assert.False(t, joint.RoundLimit, "converged well inside the round limit")
	assert.Zero(t, joint.LastGain, "its last round found nothing better")
	assert.Empty(t, joint.OtherMaxima, "no starting grid: one search")

	// Stopped after one expansion, which moved the centre toward the
	// truth: the fit says it stopped at its limit and is not converged.
	short, err := FitJoint(context.Background(), like, m, nu, FitOptions{Starts: 3, MaxRounds: 1})
	require.NoError(t, err)
	assert.True(t, short.RoundLimit)
	assert.False(t, short.Converged)
	assert.NotEqual(t, nu.Nominal(), short.Nuisance, "the one expansion moved")
	start, err := profileAtValues(context.Background(), like, m, nu, nu.Nominal(), FitOptions{Starts: 3})
	require.NoError(t, err)
	assert.Greater(t, short.LastGain, 0.0)
	assert.InDelta(t, short.LogL-start.LogL, short.LastGain, 1e-9, "what the one round gained over the start")

	// Held at the nominal values: the burst moves.
	lnom, err := NewLikelihood(nominal, data, LikeOptions{TemplateNoise: NoiseIgnore})
	require.NoError(t, err)
	fixed, err := Fit(lnom, m, FitOptions{Starts: 3})
	require.NoError(t, err)
	t.Logf("nominal physics: θ = %v, ln L = %.2f", fixed.Theta, fixed.LogL)
	assert.Greater(t, math.Abs(fixed.Theta[0]-0.6), 0.04, "a fit with the wrong coefficient misplaces the burst")
	assert.Greater(t, joint.LogLData(), fixed.LogL+20)
}

// A joint fit gives the same numbers with one worker as with several: the
// round's side points and proposal starts are fitted concurrently, each on
// its own copy of the likelihood (onCopies), and combined in one order.
func TestFitJointSameOnAnyThreads(t *testing.T) {
	nu, m, like, _, _ := newJointSetup(t).shifted(t)
	fit := func(workers int) FitResult {
		nu.ResetCache()
		r, err := FitJoint(context.Background(), like, m, nu, FitOptions{Starts: 3, Workers: workers})
		require.NoError(t, err)
		return r
	}
	one := fit(1)
	assert.Greater(t, one.Rounds, 1, "rounds with side points to fit")
	for _, w := range []int{3, 0} {
		other := fit(w)
		assert.Equal(t, one.Theta, other.Theta, "%d workers", w)
		assert.Equal(t, one.Nuisance, other.Nuisance, "%d workers", w)
		assert.Equal(t, one.LogL, other.LogL, "%d workers", w)
		assert.Equal(t, one.Evaluations, other.Evaluations, "%d workers", w)
		assert.Equal(t, one.Rounds, other.Rounds, "%d workers", w)
	}
}

func sum(x []float64) float64 {
	var s float64
	for _, v := range x {
		s += v
	}
	return s
}

// shiftObserver is a stand-in source of templates for speed measurements:
// the base templates with every count scaled by a smooth function of each
// nuisance value.
type shiftObserver struct{ base *Templates }

func (s shiftObserver) Observe(_ context.Context, v []float64) (*Templates, error) {
	t := *s.base
	t.Counts = append([]float64(nil), s.base.Counts...)
	for i := range t.Counts {
		f := 1.0
		for j, x := range v {
			f *= 1 + 0.1*x*math.Sin(float64(i*(j+3)))
		}
		t.Counts[i] *= f
	}
	return &t, nil
}

// BenchmarkJointLogL40x2500 times one evaluation of the joint objective —
// history weights and eight nuisance parameters moved, templates
// interpolated, ln L and its full gradient — at 40 age bins × 2,500 bins.
func BenchmarkJointLogL40x2500(b *testing.B) {
	tpl := randomTemplates(b, 40, 25, 100, 0, 3, 1)
	data := poissonData(tpl, randomWeights(40, 2), 0.15, 3)
	nu := &Nuisance{Source: shiftObserver{tpl}}
	for j := range 8 {
		nu.Params = append(nu.Params, NuisanceParam{Name: fmt.Sprintf("p%d", j), Nominal: 0, Min: -1, Max: 1, Sigma: 0.3})
	}
	for _, noise := range []string{NoiseIgnore, NoiseBarlowBeeston} {
		b.Run(noise, func(b *testing.B) {
			like, err := NewLikelihood(tpl, data, LikeOptions{TemplateNoise: noise})
			require.NoError(b, err)
			mo, err := newMorph(context.Background(), like, nu, nu.Nominal(), nil)
			require.NoError(b, err)
			edges := make([]float64, 41)
			for k := range edges {
				edges[k] = 10 * float64(k) / 40
			}
			h, err := sfh.New(10, []sfh.Part{{Name: "flat", Component: sfh.Constant{}, Weight: 1}, {Name: "burst", Component: sfh.Burst{AgeGyr: 1, WidthGyr: 0.1, MassFraction: 0.1}}})
			require.NoError(b, err)
			m := HistoryModel{Base: h, AgeEdgesGyr: edges, Free: []FreeParam{{Name: "burst.age_gyr", Min: 0.2, Max: 5}, {Name: "burst.mass_fraction", Min: 0, Max: 0.5}}}
			o := newObjective(like, m, nu, mo)
			x := append(m.ToInternal([]float64{1.2, 0.1}), nuisanceToInternal(o.nuLo, o.nuHi, []float64{0.1, -0.1, 0.2, 0, 0.05, -0.2, 0.1, 0.3})...)
			b.ReportAllocs()
			for i := 0; b.Loop(); i++ {
				x[2] = 0.01 * float64(i%7) // a nuisance change every evaluation
				o.lastX = nil
				o.eval(x)
			}
		})
	}
}

// BenchmarkBankObserve times one re-observation of a bank, per stored star.
func BenchmarkBankObserve(b *testing.B) {
	s := newJointSetup(b)
	for b.Loop() {
		if _, err := s.obs.Observe(context.Background(), []float64{0.79, 0.01}); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(s.tpl.Bank.Len()), "ns/star")
	b.ReportMetric(float64(s.tpl.Bank.Len()), "stars")
}

// The starting grid: every combination of the parameters' starting values
// is scored exactly before the search, and the search's first expansion
// is centred on the best of them — here the true coefficient, far from
// the nominal one — rather than on the nominal values.
func TestFitJointStartsAtBestOfGrid(t *testing.T) {
	s := newJointSetup(t)
	nu := s.nuisance()
	nu.Params[0].Starts = []float64{0.65, 0.84, 0.93}
	nu.Params[1].Starts = []float64{-0.03, 0.015}
	m := s.burstModel(t)
	trueNu := []float64{0.84, 0.015}
	like, _, _ := s.asimovLikelihood(t, m, nu, trueNu)
	var grid, expansions []string
	opts := FitOptions{Starts: 3, Stage: func(msg string) {
		switch {
		case strings.HasPrefix(msg, "starting grid"):
			grid = append(grid, msg)
		case strings.HasPrefix(msg, "expansion"):
			expansions = append(expansions, msg)
		}
	}}
	joint, err := FitJoint(context.Background(), like, m, nu, opts)
	require.NoError(t, err)
	assert.Len(t, grid, 6, "3 × 2 starting values")
	require.NotEmpty(t, expansions)
	assert.Contains(t, expansions[0], "spin.a = 0.84, survey.color_offset_mag = 0.015", "the search starts at the best grid point")
	assert.InDelta(t, trueNu[0], joint.Nuisance[0], 0.01, "coefficient a")
	assert.InDelta(t, 0.6, joint.Theta[0], 0.02, "burst age")
	// A second search ran from the second-best grid point; on this
	// likelihood, with one maximum, it ends no higher.
	require.Len(t, joint.OtherMaxima, 1)
	assert.LessOrEqual(t, joint.OtherMaxima[0].LogL, joint.LogL)
	assert.Len(t, joint.OtherMaxima[0].Nuisance, 2)

	// A given starting point (a previous answer) skips the grid.
	grid, expansions = nil, nil
	opts.NuisanceStart = joint.Nuisance
	_, err = FitJoint(context.Background(), like, m, nu, opts)
	require.NoError(t, err)
	assert.Empty(t, grid)
}

// Starting values outside the bounds, or a grid too large to score, are
// refused before any template is made.
func TestNuisanceStartsValidated(t *testing.T) {
	nu := &Nuisance{Source: shiftObserver{}, Params: []NuisanceParam{
		{Name: "x", Nominal: 1, Min: 0, Max: 2, Starts: []float64{0.5, 2.5}},
	}}
	assert.ErrorContains(t, nu.Validate(), "starting value 2.5 lies outside its bounds [0, 2]")
	nu.Params[0].Starts = []float64{0, 0.25, 0.5, 0.75, 1, 1.25, 1.5, 1.75, 2}
	nu.Params = append(nu.Params, NuisanceParam{Name: "y", Nominal: 1, Min: 0, Max: 2, Starts: nu.Params[0].Starts})
	assert.ErrorContains(t, nu.Validate(), "more than 64 points")
	nu.Params[1].Starts = nu.Params[1].Starts[:7]
	assert.NoError(t, nu.Validate(), "9 × 7 = 63 points")
}

// linearObserver makes templates linear in each value: the base counts
// times 1 + Σ_j v_j g_j(i), a stand-in for a detection efficiency, and
// counts its re-observations.
type linearObserver struct {
	base  *Templates
	calls *int
}

func (o linearObserver) Observe(_ context.Context, v []float64) (*Templates, error) {
	*o.calls++
	t := *o.base
	t.Counts = append([]float64(nil), o.base.Counts...)
	for i := range t.Counts {
		f := 1.0
		for j, x := range v {
			f += x * (0.5 + 0.5*math.Sin(float64(i*(j+2))))
		}
		t.Counts[i] *= f
	}
	return &t, nil
}

// A parameter the templates are linear in is expanded from one side
// point, not two, and the expansion is still exact anywhere in it (here
// at values four steps below the centre, where the side point is above).
func TestMorphLinearParameterOneSide(t *testing.T) {
	tpl := randomTemplates(t, 6, 5, 12, 0, 50, 4)
	data := poissonData(tpl, randomWeights(6, 5), 1, 5)
	like, err := NewLikelihood(tpl, data, LikeOptions{})
	require.NoError(t, err)
	for _, linear := range []bool{false, true} {
		calls := 0
		nu := &Nuisance{Source: linearObserver{tpl, &calls}, Params: []NuisanceParam{
			{Name: "e1", Nominal: 0.5, Min: 0, Max: 1, Linear: linear},
			{Name: "e2", Nominal: 0.5, Min: 0, Max: 1, Linear: linear}}}
		mo, err := newMorph(context.Background(), like, nu, nu.Nominal(), nil)
		require.NoError(t, err)
		want := map[bool]int{false: 5, true: 3}[linear] // centre plus two sides, or one side, per parameter
		assert.Equal(t, want, calls, "re-observations with linear = %v", linear)
		rows := make([]float64, len(mo.t0))
		for _, v := range [][]float64{{0.0, 0.5}, {0.9, 0.1}, {0.2, 1.0}} {
			mo.apply(v, rows, make([]float64, len(rows)), nil, nil)
			exact, err := nu.Templates(context.Background(), v)
			require.NoError(t, err)
			wantRows, _, err := like.rowsOf(exact)
			require.NoError(t, err)
			for i := range rows {
				require.InDelta(t, wantRows[i], rows[i], 1e-9*(1+wantRows[i]), "linear = %v, at %v, entry %d", linear, v, i)
			}
		}
	}
}

// slopeObserver is linearObserver that also gives its derivatives,
// worked from its formula: ∂counts_i/∂v_j = base_i·g_j(i).
type slopeObserver struct{ linearObserver }

func (o slopeObserver) Slopes(j int) bool { return j == 0 } // the first parameter only

func (o slopeObserver) ObserveSlopes(ctx context.Context, v []float64, params []int) (*Templates, []Slope, error) {
	t, err := o.Observe(ctx, v)
	if err != nil {
		return nil, nil, err
	}
	var ds []Slope
	for _, j := range params {
		d := *o.base
		d.Var = nil
		d.Counts = make([]float64, len(o.base.Counts))
		for i, c := range o.base.Counts {
			d.Counts[i] = c * (0.5 + 0.5*math.Sin(float64(i*(j+2))))
		}
		ds = append(ds, Slope{First: &d})
	}
	return t, ds, nil
}

// A linear parameter whose derivative the source gives costs no
// re-observation: the centre's pass makes the expansion, which is exact
// in it; the side point made from the derivative holds the counts a
// re-observation there gives.
func TestMorphLinearParameterFromSlopes(t *testing.T) {
	tpl := randomTemplates(t, 6, 5, 12, 0, 50, 4)
	data := poissonData(tpl, randomWeights(6, 5), 1, 5)
	like, err := NewLikelihood(tpl, data, LikeOptions{})
	require.NoError(t, err)
	calls := 0
	nu := &Nuisance{Source: slopeObserver{linearObserver{tpl, &calls}}, Params: []NuisanceParam{
		{Name: "e1", Nominal: 0.5, Min: 0, Max: 1, Linear: true},
		{Name: "e2", Nominal: 0.5, Min: 0, Max: 1, Linear: true}}}
	ctx := context.Background()
	mo, err := newMorph(ctx, like, nu, nu.Nominal(), nil)
	require.NoError(t, err)
	assert.Equal(t, 2, calls, "the centre (with e1's derivative) and e2's side point")
	require.Len(t, mo.sides, 2)
	for _, sp := range mo.sides {
		exact, err := linearObserver{tpl, new(int)}.Observe(ctx, sp.values)
		require.NoError(t, err)
		assert.InDeltaSlice(t, exact.Counts, sp.tpl.Counts, 1e-9, "side point at %v", sp.values)
		assert.Equal(t, sp.values[0] != 0.5, sp.derived, "only e1's side point is made from its derivative")
	}
	rows := make([]float64, len(mo.t0))
	for _, v := range [][]float64{{0.0, 0.5}, {0.9, 0.1}, {0.2, 1.0}} {
		mo.apply(v, rows, make([]float64, len(rows)), nil, nil)
		exact, err := linearObserver{tpl, new(int)}.Observe(ctx, v)
		require.NoError(t, err)
		wantRows, _, err := like.rowsOf(exact)
		require.NoError(t, err)
		for i := range rows {
			require.InDelta(t, wantRows[i], rows[i], 1e-9*(1+wantRows[i]), "at %v, entry %d", v, i)
		}
	}
	lo, hi := mo.trustRegion(nu)
	assert.Equal(t, []float64{0, 0}, lo, "a linear parameter may move eight steps of an eighth of its range: all of it below 0.5")
	assert.Equal(t, []float64{1, 1}, hi, "and above")
	nu.Params[1].Linear = false
	lo, hi = mo.trustRegion(nu)
	assert.Equal(t, []float64{0, 0.25}, lo, "any other, two steps")
	assert.Equal(t, []float64{1, 0.75}, hi)
}

// quadObserver makes templates quadratic in each value: the base counts
// times 1 + Σ_j (α_j(i) v_j + β_j(i) v_j²), and gives the first and second
// derivatives in the first value (none with noSecond).
type quadObserver struct {
	base     *Templates
	calls    *int
	noSecond bool
}

func quadCoeffs(i, j int) (alpha, beta float64) {
	return 0.4 * math.Sin(float64(i*(j+2))), 0.3 * math.Cos(float64(i*(j+3)))
}

func (o quadObserver) Observe(_ context.Context, v []float64) (*Templates, error) {
	*o.calls++
	t := *o.base
	t.Counts = append([]float64(nil), o.base.Counts...)
	for i := range t.Counts {
		f := 1.0
		for j, x := range v {
			a, b := quadCoeffs(i, j)
			f += a*x + b*x*x
		}
		t.Counts[i] *= f
	}
	return &t, nil
}

func (o quadObserver) Slopes(j int) bool { return j == 0 }

func (o quadObserver) ObserveSlopes(ctx context.Context, v []float64, params []int) (*Templates, []Slope, error) {
	t, err := o.Observe(ctx, v)
	if err != nil {
		return nil, nil, err
	}
	var ds []Slope
	for _, j := range params {
		first, second := *o.base, *o.base
		first.Var, second.Var = nil, nil
		first.Counts, second.Counts = make([]float64, len(o.base.Counts)), make([]float64, len(o.base.Counts))
		for i, c := range o.base.Counts {
			a, b := quadCoeffs(i, j)
			first.Counts[i] = c * (a + 2*b*v[j])
			second.Counts[i] = c * 2 * b
		}
		d := Slope{First: &first, Second: &second}
		if o.noSecond {
			d.Second = nil
		}
		ds = append(ds, d)
	}
	return t, ds, nil
}

// A parameter the templates are not linear in, whose first and second
// derivatives the source gives, costs no re-observation either: the
// expansion is their Taylor series, exact for templates quadratic in it
// (between the side points, where it is quadratic), and both side points
// are made from the derivatives, with the counts a re-observation there
// gives. A source that gives no second derivative for such a parameter is
// refused by name.
func TestMorphCurvedParameterFromSlopes(t *testing.T) {
	tpl := randomTemplates(t, 6, 5, 12, 0, 50, 4)
	data := poissonData(tpl, randomWeights(6, 5), 1, 5)
	like, err := NewLikelihood(tpl, data, LikeOptions{})
	require.NoError(t, err)
	calls := 0
	nu := &Nuisance{Source: quadObserver{base: tpl, calls: &calls}, Params: []NuisanceParam{
		{Name: "q1", Nominal: 0.5, Min: 0, Max: 1},
		{Name: "q2", Nominal: 0.5, Min: 0, Max: 1}}}
	ctx := context.Background()
	mo, err := newMorph(ctx, like, nu, nu.Nominal(), nil)
	require.NoError(t, err)
	assert.Equal(t, 3, calls, "the centre (with q1's derivatives) and q2's two side points")
	require.Len(t, mo.sides, 4)
	derived := 0
	for _, sp := range mo.sides {
		exact, err := quadObserver{base: tpl, calls: new(int)}.Observe(ctx, sp.values)
		require.NoError(t, err)
		assert.InDeltaSlice(t, exact.Counts, sp.tpl.Counts, 1e-9, "side point at %v", sp.values)
		assert.Equal(t, sp.values[0] != 0.5, sp.derived, "q1's side points are made from its derivatives")
		if sp.derived {
			derived++
		}
	}
	assert.Equal(t, 2, derived, "both of q1's side points")
	rows := make([]float64, len(mo.t0))
	for _, v := range [][]float64{{0.4, 0.5}, {0.61, 0.45}, {0.375, 0.625}} {
		mo.apply(v, rows, make([]float64, len(rows)), nil, nil)
		exact, err := quadObserver{base: tpl, calls: new(int)}.Observe(ctx, v)
		require.NoError(t, err)
		wantRows, _, err := like.rowsOf(exact)
		require.NoError(t, err)
		for i := range rows {
			require.InDelta(t, wantRows[i], rows[i], 1e-9*(1+wantRows[i]), "at %v, entry %d", v, i)
		}
	}
	nu.Source = quadObserver{base: tpl, calls: new(int), noSecond: true}
	nu.ResetCache()
	_, err = newMorph(ctx, like, nu, nu.Nominal(), nil)
	assert.ErrorContains(t, err, "no second derivative in q1")
}

// countingBank counts a BankObserver's passes over its stars.
type countingBank struct {
	*BankObserver
	passes *int
}

func (c countingBank) Observe(ctx context.Context, v []float64) (*Templates, error) {
	*c.passes++
	return c.BankObserver.Observe(ctx, v)
}

func (c countingBank) ObserveSlopes(ctx context.Context, v []float64, params []int) (*Templates, []Slope, error) {
	*c.passes++
	return c.BankObserver.ObserveSlopes(ctx, v, params)
}

// A joint fit freeing two nodes of the free-form search loss with the
// law's coefficient recovers all three and the burst from noise-free
// data, whether the nodes' derivatives come from the templates' own pass
// or from side points re-observed — the former in fewer passes. (With
// the nodes held to two steps a round, as other parameters are, the fit
// stopped 0.02–0.03 short of them.)
func TestFitJointSearchNodesFromSlopes(t *testing.T) {
	s := newJointSetup(t)
	m := s.burstModel(t)
	base := s.obs.Apply
	obs := *s.obs
	obs.Apply = func(v []float64) (*model.Population, error) {
		p, err := base([]float64{v[0], 0})
		if err != nil {
			return nil, err
		}
		p.Survey.Search = spots.SearchCompleteness{TurnoverPower: 1, RossbyBands: []float64{1, 1, 1, v[1], v[2], 1}}
		return p, nil
	}
	params := []NuisanceParam{
		{Name: "spin.a", Nominal: 0.7725, Min: 0.6, Max: 0.95, Sigma: 0.05},
		{Name: "efficiency_24d", Nominal: 1, Min: 0, Max: 1, Linear: true},
		{Name: "efficiency_48d", Nominal: 1, Min: 0, Max: 1, Linear: true},
	}
	trueNu := []float64{0.82, 0.6, 0.3}
	passes := map[bool]int{}
	for _, withSlopes := range []bool{false, true} {
		o := obs
		if withSlopes {
			o.SearchParams = []bool{false, true, true}
			o.SearchGradient = func(_ []float64, j int) ([]float64, error) {
				g := make([]float64, 6)
				g[j+2] = 1 // parameter 1 sets node 3 (24 d), 2 node 4 (48 d)
				return g, nil
			}
		}
		n := 0
		nu := &Nuisance{Source: countingBank{&o, &n}, Params: params}
		like, _, _ := s.asimovLikelihood(t, m, nu, trueNu)
		n = 0
		joint, err := FitJoint(context.Background(), like, m, nu, FitOptions{Starts: 3})
		require.NoError(t, err)
		passes[withSlopes] = n
		t.Logf("slopes %v: θ = %v, ν = %v, ln L = %.2f, rounds %d, passes %d", withSlopes, joint.Theta, joint.Nuisance, joint.LogL, joint.Rounds, n)
		assert.InDelta(t, 0.6, joint.Theta[0], 0.02, "burst age")
		assert.InDelta(t, 0.2, joint.Theta[1], 0.02, "burst fraction")
		assert.InDelta(t, trueNu[0], joint.Nuisance[0], 0.01, "coefficient a")
		assert.InDelta(t, trueNu[1], joint.Nuisance[1], 0.02, "24 d node")
		assert.InDelta(t, trueNu[2], joint.Nuisance[2], 0.02, "48 d node")
	}
	assert.Less(t, passes[true], passes[false])
}

// The monotone form of the search loss: shares r24, r48 of the periods
// kept from one node to the next, so that the efficiencies are 1, 1, 1,
// r24, r24·r48, r24·r48 — linear in each share with the other held, not
// jointly. The derivative in a share that ObserveSlopes makes by the
// chain rule through the nodes equals the difference quotient of two
// re-observations (exact, as the templates are linear in the share), at a
// point where the other share is 0 too (a product without r_j, not ε/r_j);
// and a joint fit on noise-free data recovers both shares and the burst.
func TestFitJointSearchFalloffShares(t *testing.T) {
	s := newJointSetup(t)
	m := s.burstModel(t)
	base := s.obs.Apply
	o := *s.obs
	o.Apply = func(v []float64) (*model.Population, error) {
		p, err := base([]float64{v[0], 0})
		if err != nil {
			return nil, err
		}
		p.Survey.Search = spots.SearchCompleteness{TurnoverPower: 1, RossbyBands: []float64{1, 1, 1, v[1], v[1] * v[2], v[1] * v[2]}}
		return p, nil
	}
	o.SearchParams = []bool{false, true, true}
	o.SearchGradient = func(v []float64, j int) ([]float64, error) {
		if j == 1 {
			return []float64{0, 0, 0, 1, v[2], v[2]}, nil
		}
		return []float64{0, 0, 0, 0, v[1], v[1]}, nil
	}
	ctx := context.Background()
	for _, at := range [][]float64{{0.78, 0.7, 0.4}, {0.78, 0.5, 0}, {0.78, 0, 0.6}} {
		tpl, ds, err := o.ObserveSlopes(ctx, at, []int{1, 2})
		require.NoError(t, err)
		for q, j := range []int{1, 2} {
			moved := append([]float64(nil), at...)
			moved[j] += 0.25
			t2, err := o.Observe(ctx, moved)
			require.NoError(t, err)
			var worst, scale float64
			for i := range tpl.Counts {
				fd := (t2.Counts[i] - tpl.Counts[i]) / 0.25
				worst = math.Max(worst, math.Abs(fd-ds[q].First.Counts[i]))
				scale = math.Max(scale, math.Abs(fd))
			}
			if at[1] == 0 && j == 2 {
				// Nothing is kept beyond 24 d whatever the 48 d share.
				assert.Zero(t, scale, "share %d at %v", j, at)
				assert.Zero(t, worst, "share %d at %v", j, at)
				continue
			}
			require.Positive(t, scale, "share %d at %v moves the templates", j, at)
			assert.Less(t, worst, 1e-9*scale, "share %d at %v", j, at)
		}
	}

	params := []NuisanceParam{
		{Name: "spin.a", Nominal: 0.7725, Min: 0.6, Max: 0.95, Sigma: 0.05},
		{Name: "kept_24d", Nominal: 1, Min: 0, Max: 1, Linear: true},
		{Name: "kept_48d", Nominal: 1, Min: 0, Max: 1, Linear: true},
	}
	trueNu := []float64{0.82, 0.6, 0.5}
	nu := &Nuisance{Source: &o, Params: params}
	like, _, _ := s.asimovLikelihood(t, m, nu, trueNu)
	joint, err := FitJoint(ctx, like, m, nu, FitOptions{Starts: 3})
	require.NoError(t, err)
	t.Logf("θ = %v, ν = %v, ln L = %.2f, rounds %d", joint.Theta, joint.Nuisance, joint.LogL, joint.Rounds)
	assert.InDelta(t, 0.6, joint.Theta[0], 0.02, "burst age")
	assert.InDelta(t, 0.2, joint.Theta[1], 0.02, "burst fraction")
	assert.InDelta(t, trueNu[0], joint.Nuisance[0], 0.01, "coefficient a")
	assert.InDelta(t, trueNu[1], joint.Nuisance[1], 0.02, "24 d share")
	assert.InDelta(t, trueNu[2], joint.Nuisance[2], 0.03, "48 d share")
}

// valuesObserver makes templates whose counts are the values themselves,
// counting its calls.
type valuesObserver struct{ calls *int }

func (o valuesObserver) Observe(_ context.Context, v []float64) (*Templates, error) {
	*o.calls++
	return &Templates{Counts: append([]float64(nil), v...)}, nil
}

// A Nuisance keeps at most maxCachedSets sets of templates, dropping the
// oldest: a burst test over many catalogs once grew past the machine's
// 24 GB keeping every point it scored. A recent point is served from the
// cache; a dropped one is made again, to the same numbers.
func TestNuisanceCacheBounded(t *testing.T) {
	calls := 0
	nu := &Nuisance{Source: valuesObserver{&calls}, Params: []NuisanceParam{{Name: "x", Min: 0, Max: 1000}}}
	ctx := context.Background()
	const n = 3 * maxCachedSets
	for i := range n {
		_, err := nu.Templates(ctx, []float64{float64(i)})
		require.NoError(t, err)
	}
	require.Equal(t, n, calls)
	assert.LessOrEqual(t, len(nu.cache), maxCachedSets)
	assert.Len(t, nu.order, len(nu.cache))
	recent, err := nu.Templates(ctx, []float64{float64(n - 1)})
	require.NoError(t, err)
	assert.Equal(t, n, calls, "the last point is kept")
	assert.Equal(t, []float64{float64(n - 1)}, recent.Counts)
	first, err := nu.Templates(ctx, []float64{0})
	require.NoError(t, err)
	assert.Equal(t, n+1, calls, "the first point was dropped and is made again")
	assert.Equal(t, []float64{0}, first.Counts)
	assert.LessOrEqual(t, len(nu.cache), maxCachedSets)
}

// The pattern move across rounds (Hooke & Jeeves 1961): after a round moved
// the centre a fifth of the way from the nominal values toward the truth,
// repeating that move once, twice and four times over lands on the truth
// (nominal + 5 moves) with exact templates, and ln L rises with it; a move
// that would leave a parameter's range stops at the range's end.
func TestExtrapolateRepeatsAGainingMove(t *testing.T) {
	nu, m, like, _, _ := newJointSetup(t).shifted(t)
	trueNu := jointTrueNu
	ctx := context.Background()
	prev := nu.Nominal()
	fifth := []float64{prev[0] + (trueNu[0]-prev[0])/5, prev[1] + (trueNu[1]-prev[1])/5}
	best, err := profileAtValues(ctx, like, m, nu, fifth, FitOptions{Starts: 3})
	require.NoError(t, err)
	got, evals, err := extrapolate(ctx, like, m, nu, prev, best, FitOptions{})
	require.NoError(t, err)
	assert.Positive(t, evals)
	assert.InDelta(t, trueNu[0], got.Nuisance[0], 1e-9, "a: the fifth move repeated four times over")
	assert.InDelta(t, trueNu[1], got.Nuisance[1], 1e-9, "color offset")
	assert.Greater(t, got.LogL, best.LogL+10, "the truth fits the noise-free data far better")
	assert.InDelta(t, 0.6, got.Theta[0], 0.02, "the history refitted there: the burst's age")

	// From the truth, moving on overshoots: nothing gains, best comes back.
	atTruth, err := profileAtValues(ctx, like, m, nu, trueNu, FitOptions{Starts: 3})
	require.NoError(t, err)
	same, _, err := extrapolate(ctx, like, m, nu, fifth, atTruth, FitOptions{})
	require.NoError(t, err)
	assert.Equal(t, atTruth.Nuisance, same.Nuisance)
	assert.Equal(t, atTruth.LogL, same.LogL)

	// A move into the offset's upper bound (0.05) is clamped there.
	edge, err := profileAtValues(ctx, like, m, nu, []float64{trueNu[0], 0.045}, FitOptions{Starts: 3})
	require.NoError(t, err)
	edge.LogL = math.Inf(-1) // so that any try gains
	clamped, _, err := extrapolate(ctx, like, m, nu, []float64{trueNu[0], 0.035}, edge, FitOptions{})
	require.NoError(t, err)
	assert.Equal(t, 0.05, clamped.Nuisance[1], "stopped at the range's end")
}
