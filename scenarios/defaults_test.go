package scenarios

import (
	"math"
	"os"
	"reflect"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func loadMinimal(t *testing.T, extra string) *Resolved {
	t.Helper()
	r, err := LoadBytes("minimal.toml", []byte(minimal+extra), nil)
	require.NoError(t, err)
	return r
}

func TestDefaultsFilled(t *testing.T) {
	s := loadMinimal(t, "").Scenario
	// Project defaults as documented in schema.go.
	assert.Equal(t, "minimal", s.Name, "name defaults to the file name")
	assert.Equal(t, Run{Seed: 1, StarsGenerated: 2_000_000, ChunkStars: 65536}, s.Run)
	assert.Equal(t, IMF{Form: "kroupa2001", MassMinMsun: 0.2, MassMaxMsun: 1.4}, s.IMF)
	assert.Equal(t, 10.0, s.History.MaxAgeGyr)
	assert.Equal(t, map[string]Part{"smooth": {Kind: "constant", Values: map[string]float64{"weight": 1}, Arrays: map[string][]float64{}}}, s.History.Parts)
	assert.Equal(t, Dust{Model: "none", ScaleHeightPc: 110, MidplaneAvPerKpc: 0.8}, s.Dust)
	assert.Equal(t, "barnes2007", s.Spin.Law)
	assert.Equal(t, "wright2018", s.Spin.Turnover)
	assert.True(t, s.Spin.Spots.Enabled)
	assert.False(t, s.Spin.Options.Bool("stall", "enabled"))
	assert.True(t, s.Stars.Evolved)
	assert.True(t, s.Output.Catalog)
	assert.True(t, s.Output.Plots)
	assert.Equal(t, []float64{0.3, 0.6, 1, 2, 4}, s.Output.GyrochroneAgesGyr)
	assert.Equal(t, Field{Kind: "sphere", DistanceMaxPc: 500}, s.Survey.Field)
	assert.Equal(t, Data{Format: "auto", Columns: DataColumns{PeriodD: "period_d", BV: "b_v"}}, s.Data, "no data unless a file names it")
	assert.Equal(t, Compare{
		ColorBins: 23, LogPeriodBins: 30, PeriodMinD: 0.5, PeriodMaxD: 100,
		HeightEdgesPc: []float64{0, 100, 200, 300, 450, 700, 1000, 1500},
		TemplateStars: 20_000_000, Normalisation: "free", TemplateNoise: "barlow-beeston-lite", ColorAxis: "measured",
		Bootstrap: 1000, SplitAgeGyr: 0, BurstPart: "burst", MaskAgeGyr: 0, MaskMarginDex: 0.1,
		Free: nil, // no part named "burst": nothing to free by default
	}, s.Compare)

	// Derived defaults.
	// Source: Nyquist sampling: a period needs at least two samples per cycle.
	assert.Equal(t, 2*0.03125, s.Cuts.PeriodMinD)
	assert.Equal(t, 1000.0/3, s.Cuts.PeriodMaxD, "baseline holds min_cycles cycles")
	assert.Equal(t, DefaultAgeBinEdges(10), s.Disk.AgeBinEdgesGyr)
}

func TestDerivedDefaultsFollowTheirSources(t *testing.T) {
	s := loadMinimal(t, "[survey]\ncadence_d = 0.5\nbaseline_d = 100.0\nmin_cycles = 4.0\n[history]\nmax_age_gyr = 12.0\n").Scenario
	assert.Equal(t, 1.0, s.Cuts.PeriodMinD)
	assert.Equal(t, 25.0, s.Cuts.PeriodMaxD)
	assert.Equal(t, DefaultAgeBinEdges(12), s.Disk.AgeBinEdgesGyr)
	assert.Equal(t, 12.0, s.Disk.AgeBinEdgesGyr[len(s.Disk.AgeBinEdgesGyr)-1])

	assert.Equal(t, 1.0, s.Compare.PeriodMinD, "max(cuts.period_min_d, 0.5)")
	assert.Equal(t, 25.0, s.Compare.PeriodMaxD, "min(cuts.period_max_d, 100)")

	s = loadMinimal(t, "[cuts]\nperiod_min_d = 0.3\nperiod_max_d = 70.0\n").Scenario
	assert.Equal(t, 0.3, s.Cuts.PeriodMinD, "explicit values win")
	assert.Equal(t, 70.0, s.Cuts.PeriodMaxD)
	assert.Equal(t, 0.5, s.Compare.PeriodMinD)
	assert.Equal(t, 70.0, s.Compare.PeriodMaxD)

	s = loadMinimal(t, "[compare]\nperiod_min_d = 2.0\nperiod_max_d = 50.0\n").Scenario
	assert.Equal(t, 2.0, s.Compare.PeriodMinD, "explicit values win")
	assert.Equal(t, 50.0, s.Compare.PeriodMaxD)
}

func TestDefaultAgeBinEdges(t *testing.T) {
	e := DefaultAgeBinEdges(10)
	// 60 fine bins to 3 Gyr, then ceil(20 log10(10/3)) = ceil(10.46) = 11.
	require.Len(t, e, 72)
	for i := 0; i <= 60; i++ {
		assert.InDelta(t, 0.05*float64(i), e[i], 1e-15, "0.05 Gyr bins up to 3 Gyr")
	}
	for i := 61; i <= 71; i++ {
		assert.InDelta(t, 3*math.Pow(10.0/3, float64(i-60)/11), e[i], 1e-6, "log-spaced above 3 Gyr")
		assert.Greater(t, e[i]-e[i-1], e[i-1]-e[i-2]-1e-9, "bins widen with age")
	}
	assert.Equal(t, 10.0, e[71])
	// The burst ages example:fit seeks (0.1–3 Gyr) lie in bins narrower
	// than the ±0.1 Gyr of issue 8's target.
	for i := 1; i < len(e) && e[i-1] < 3; i++ {
		assert.LessOrEqual(t, e[i]-e[i-1], 0.05+1e-12)
	}

	for _, maxAge := range []float64{0.8, 1.000001, 1.9} {
		e = DefaultAgeBinEdges(maxAge)
		require.Len(t, e, 41)
		assert.Equal(t, 0.0, e[0])
		assert.Equal(t, maxAge, e[40])
		for i := 1; i <= 40; i++ {
			assert.InDelta(t, maxAge/40, e[i]-e[i-1], 1e-12, "a young history gets equal bins")
		}
	}
	// Between 2 and 3 Gyr: fine bins to the last multiple of 0.05, then
	// what is left as one bin if it is at least half a bin, else merged
	// into the last; a multiple of 0.05 ends on its own edge.
	e = DefaultAgeBinEdges(2.5)
	require.Len(t, e, 51)
	assert.Equal(t, 2.5, e[50])
	e = DefaultAgeBinEdges(2.04)
	require.Len(t, e, 42)
	assert.InDelta(t, 2.0, e[40], 1e-15)
	assert.Equal(t, 2.04, e[41])
	for _, maxAge := range []float64{2.02, 2.100001, 3.0000001, 3.02} {
		e = DefaultAgeBinEdges(maxAge)
		n := len(e) - 1
		assert.Equal(t, maxAge, e[n])
		assert.InDelta(t, 0.05, e[n]-e[n-1], 0.025+1e-9, "max age %g: no sliver of a last bin", maxAge)
	}
	// Just past the fine bins' end: the log bins stay distinct after rounding.
	for _, maxAge := range []float64{2, 3.01, 3.2, 3.6, 13.5} {
		e = DefaultAgeBinEdges(maxAge)
		assert.Equal(t, maxAge, e[len(e)-1])
		for i := 1; i < len(e); i++ {
			assert.Greater(t, e[i], e[i-1], "max age %g, edge %d", maxAge, i)
		}
	}
}

// TestEveryKeyHasADefaultOrIsRequired guards the defaults layer: each key of
// the canonical form comes from builtinDefaults, unless it is derived or
// belongs to the parts a user must give.
func TestEveryKeyHasADefaultOrIsRequired(t *testing.T) {
	def, err := defaultLayer()
	require.NoError(t, err)
	derived := map[string]bool{"name": true, "cuts.period_min_d": true, "cuts.period_max_d": true, "disk.age_bin_edges_gyr": true,
		"compare.period_min_d": true, "compare.period_max_d": true, "compare.free": true}
	tree := toTree(reflect.ValueOf(loadMinimal(t, "").Scenario))
	var walk func(path string, tree, defs map[string]any)
	walk = func(path string, tree, defs map[string]any) {
		for k, v := range tree {
			p := joinKey(path, k)
			if derived[p] || p == "history.smooth" || (path == "survey.field" && k != "kind") {
				continue
			}
			dv, ok := defs[k]
			if !assert.True(t, ok, "%s has no built-in default", p) {
				continue
			}
			if sub, isTable := v.(map[string]any); isTable {
				walk(p, sub, dv.(map[string]any))
			}
		}
		for k := range defs {
			_, ok := tree[k]
			if p := joinKey(path, k); p == "survey.search_by_rossby" || p == "survey.search_falloff" {
				// Left out of the canonical form at its defaults (no loss).
				_, ok = fieldsOf(reflect.TypeFor[Survey]()).index[k]
			}
			assert.True(t, ok, "default for unknown key %s", joinKey(path, k))
		}
	}
	walk("", tree, def.data)
}

// TestSchemaCommentsMatchDefaults keeps schema.go's "default X" comments in
// step with the defaults the loader applies.
func TestSchemaCommentsMatchDefaults(t *testing.T) {
	src, err := os.ReadFile("schema.go")
	require.NoError(t, err)
	tables := map[string]string{
		"Run": "run", "IMF": "imf", "History": "history", "Disk": "disk", "Dust": "dust",
		"Stars": "stars", "Spin": "spin", "Spots": "spin.spots", "Survey": "survey",
		"Field": "survey.field", "Cuts": "cuts", "Output": "output",
		"Data": "data", "DataColumns": "data.columns", "Compare": "compare",
	}
	typeRe := regexp.MustCompile(`^type (\w+) struct`)
	fieldRe := regexp.MustCompile("`toml:\"(\\w+)\"`\\s*//(.*)$")
	numRe := regexp.MustCompile(`default (-?[0-9][0-9_.]*)\s*(?:$|;|\()`)
	strRe := regexp.MustCompile(`"([^"]+)" \(default`)
	boolRe := regexp.MustCompile(`default (true|false)`)
	quotedRe := regexp.MustCompile(`default "([^"]*)"`)
	arrayRe := regexp.MustCompile(`default \[([^\]]*)\]`)
	// A cone field without an explicit kind, so the field's default kind shows.
	r, err := LoadBytes("x.toml", []byte("[history.s]\nkind = \"constant\"\n[survey.field]\nl_deg = 1.0\nb_deg = 2.0\nradius_deg = 3.0\ndistance_max_pc = 4.0\n"), nil)
	require.NoError(t, err)
	tree := toTree(reflect.ValueOf(r.Scenario))
	table := ""
	checked := 0
	for _, line := range strings.Split(string(src), "\n") {
		if m := typeRe.FindStringSubmatch(line); m != nil {
			table = tables[m[1]]
			continue
		}
		m := fieldRe.FindStringSubmatch(line)
		if m == nil || table == "" {
			continue
		}
		var node any = tree
		for _, k := range strings.Split(table, ".") {
			node = node.(map[string]any)[k]
		}
		got, ok := node.(map[string]any)[m[1]]
		if !ok {
			continue // a field key of another kind
		}
		comment := m[2]
		switch {
		case numRe.MatchString(comment):
			want, err := strconv.ParseFloat(strings.ReplaceAll(strings.TrimSuffix(numRe.FindStringSubmatch(comment)[1], "."), "_", ""), 64)
			require.NoError(t, err, line)
			var x float64
			switch g := got.(type) {
			case float64:
				x = g
			case int64:
				x = float64(g)
			case uint64:
				x = float64(g)
			}
			assert.Equal(t, want, x, "%s.%s", table, m[1])
			checked++
		case strRe.MatchString(comment):
			assert.Equal(t, strRe.FindStringSubmatch(comment)[1], got, "%s.%s", table, m[1])
			checked++
		case boolRe.MatchString(comment):
			assert.Equal(t, boolRe.FindStringSubmatch(comment)[1] == "true", got, "%s.%s", table, m[1])
			checked++
		case quotedRe.MatchString(comment):
			assert.Equal(t, quotedRe.FindStringSubmatch(comment)[1], got, "%s.%s", table, m[1])
			checked++
		case arrayRe.MatchString(comment):
			var want []float64
			for _, f := range strings.Split(arrayRe.FindStringSubmatch(comment)[1], ",") {
				x, err := strconv.ParseFloat(strings.TrimSpace(f), 64)
				require.NoError(t, err, line)
				want = append(want, x)
			}
			assert.Equal(t, want, got, "%s.%s", table, m[1])
			checked++
		}
	}
	assert.Greater(t, checked, 70, "the comment scan found too few defaults; has schema.go's layout changed? (the spin-down laws' options are declared in model/spin, and checked there)")
}
