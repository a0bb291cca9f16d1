package sfh_test

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/sfh"
)

// Every user error is an error, not a panic, and names the part, the
// parameter and what would be accepted.
func TestValidationErrors(t *testing.T) {
	flat := sfh.Part{Name: "smooth", Component: sfh.Constant{}, Weight: 1}
	one := func(p sfh.Part) []sfh.Part { return []sfh.Part{flat, p} }
	cases := []struct {
		name   string
		maxAge float64
		parts  []sfh.Part
		want   []string
	}{
		{"zero max age", 0, []sfh.Part{flat}, []string{"maxAgeGyr = 0", "(0, +Inf)"}},
		{"NaN max age", math.NaN(), []sfh.Part{flat}, []string{"maxAgeGyr = NaN"}},
		{"infinite max age", math.Inf(1), []sfh.Part{flat}, []string{"maxAgeGyr = +Inf"}},
		{"no parts", maxAge, nil, []string{"no parts"}},
		{"empty name", maxAge, []sfh.Part{{Component: sfh.Constant{}, Weight: 1}}, []string{"part 0 has an empty Name"}},
		{"dotted name", maxAge, []sfh.Part{{Name: "a.b", Component: sfh.Constant{}, Weight: 1}}, []string{`"a.b"`, "letters, digits"}},
		{"duplicate name", maxAge, []sfh.Part{flat, flat}, []string{`both named "smooth"`}},
		{"nil component", maxAge, []sfh.Part{{Name: "x", Weight: 1}}, []string{`part "x" has no Component`}},
		{"nil pointer", maxAge, []sfh.Part{{Name: "x", Component: (*sfh.Burst)(nil)}}, []string{`part "x" has no Component`}},
		{"zero timescale", maxAge, one(sfh.Part{Name: "exp", Component: sfh.Exponential{}, Weight: 1}),
			[]string{`part "exp" (Exponential)`, "TimescaleGyr = 0", "non-zero", `"exp.timescale_gyr"`}},
		{"NaN timescale", maxAge, one(sfh.Part{Name: "exp", Component: sfh.Exponential{TimescaleGyr: math.NaN()}, Weight: 1}),
			[]string{"TimescaleGyr = NaN"}},
		{"negative burst age", maxAge, one(sfh.Part{Name: "burst", Component: sfh.Burst{AgeGyr: -1, WidthGyr: 1, MassFraction: 0.1}}),
			[]string{`part "burst" (Burst)`, "AgeGyr = -1", "[0, 13]", `"burst.age_gyr"`}},
		{"burst older than max age", maxAge, one(sfh.Part{Name: "burst", Component: sfh.Burst{AgeGyr: 14, WidthGyr: 1, MassFraction: 0.1}}),
			[]string{"AgeGyr = 14", "[0, 13]"}},
		{"zero burst width", maxAge, one(sfh.Part{Name: "burst", Component: sfh.Burst{AgeGyr: 2, MassFraction: 0.1}}),
			[]string{"WidthGyr = 0", "(0, +Inf)", `"burst.width_gyr"`}},
		{"negative burst width", maxAge, one(sfh.Part{Name: "burst", Component: sfh.Burst{AgeGyr: 2, WidthGyr: -0.1, MassFraction: 0.1}}),
			[]string{"WidthGyr = -0.1"}},
		{"burst fraction above 1", maxAge, one(sfh.Part{Name: "burst", Component: sfh.Burst{AgeGyr: 2, WidthGyr: 1, MassFraction: 1.5}}),
			[]string{"MassFraction = 1.5", "[0, 1]", `"burst.mass_fraction"`}},
		{"negative burst fraction", maxAge, one(sfh.Part{Name: "burst", Component: sfh.Burst{AgeGyr: 2, WidthGyr: 1, MassFraction: -0.1}}),
			[]string{"MassFraction = -0.1"}},
		{"burst fractions sum above 1", maxAge, []sfh.Part{
			{Name: "a", Component: sfh.Burst{AgeGyr: 2, WidthGyr: 1, MassFraction: 0.6}},
			{Name: "b", Component: sfh.Burst{AgeGyr: 4, WidthGyr: 1, MassFraction: 0.6}},
		}, []string{"sum to 1.2", "maximum 1"}},
		{"bursts leave mass but no smooth weight", maxAge, []sfh.Part{
			{Name: "a", Component: sfh.Burst{AgeGyr: 2, WidthGyr: 1, MassFraction: 0.6}},
			{Name: "s", Component: sfh.Constant{}},
		}, []string{"remaining 0.4", "Weight > 0"}},
		{"negative weight", maxAge, []sfh.Part{{Name: "s", Component: sfh.Constant{}, Weight: -1}},
			[]string{`part "s" (Constant)`, "Weight = -1", `"s.weight"`}},
		{"weight on a burst", maxAge, one(sfh.Part{Name: "b", Component: sfh.Burst{AgeGyr: 2, WidthGyr: 1, MassFraction: 0.1}, Weight: 2}),
			[]string{`part "b" (Burst)`, "Weight = 2 must be 0", "MassFraction"}},
		{"dip depth above 1", maxAge, one(sfh.Part{Name: "dip", Component: sfh.Dip{AgeGyr: 5, WidthGyr: 1, Depth: 1.2}}),
			[]string{`part "dip" (Dip)`, "Depth = 1.2", "[0, 1]", `"dip.depth"`}},
		{"zero dip width", maxAge, one(sfh.Part{Name: "dip", Component: sfh.Dip{AgeGyr: 5, Depth: 0.5}}),
			[]string{"WidthGyr = 0", `"dip.width_gyr"`}},
		{"negative dip age", maxAge, one(sfh.Part{Name: "dip", Component: sfh.Dip{AgeGyr: -3, WidthGyr: 1, Depth: 0.5}}),
			[]string{"AgeGyr = -3", `"dip.age_gyr"`}},
		{"dip removes nearly everything", maxAge, []sfh.Part{
			{Name: "b", Component: sfh.Burst{AgeGyr: 5, WidthGyr: 0.01, MassFraction: 1}},
			{Name: "dip", Component: sfh.Dip{AgeGyr: 5, WidthGyr: 1, Depth: 1}},
		}, []string{"dips remove", "reduce their Depth"}},
		{"edges not increasing", maxAge, []sfh.Part{{Name: "bins", Weight: 1, Component: sfh.Piecewise{
			EdgesGyr: []float64{0, 3, 3, 13}, Rates: []float64{1, 1, 1}}}},
			[]string{`part "bins" (Piecewise)`, "EdgesGyr[2] = 3 is not above EdgesGyr[1] = 3", "increase strictly"}},
		{"edges beyond max age", maxAge, []sfh.Part{{Name: "bins", Weight: 1, Component: sfh.Piecewise{
			EdgesGyr: []float64{0, 3, 14}, Rates: []float64{1, 1}}}},
			[]string{"EdgesGyr[2] = 14", "[0, 13]"}},
		{"negative edge", maxAge, []sfh.Part{{Name: "bins", Weight: 1, Component: sfh.Piecewise{
			EdgesGyr: []float64{-1, 3}, Rates: []float64{1}}}},
			[]string{"EdgesGyr[0] = -1"}},
		{"edges and rates mismatch", maxAge, []sfh.Part{{Name: "bins", Weight: 1, Component: sfh.Piecewise{
			EdgesGyr: []float64{0, 3, 13}, Rates: []float64{1, 1, 1}}}},
			[]string{"3 edges and 3 rates", "one more edge than rates"}},
		{"negative rate", maxAge, []sfh.Part{{Name: "bins", Weight: 1, Component: sfh.Piecewise{
			EdgesGyr: []float64{0, 3, 13}, Rates: []float64{1, -2}}}},
			[]string{"Rates[1] = -2", `"bins.rate_1"`}},
		{"all rates zero", maxAge, []sfh.Part{{Name: "bins", Weight: 1, Component: sfh.Piecewise{
			EdgesGyr: []float64{0, 3, 13}, Rates: []float64{0, 0}}}},
			[]string{"all 2 rates are zero"}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			var (
				h   *sfh.History
				err error
			)
			require.NotPanics(t, func() { h, err = sfh.New(tc.maxAge, tc.parts) })
			require.Error(t, err)
			assert.Nil(t, h)
			for _, w := range tc.want {
				assert.Contains(t, err.Error(), w)
			}
		})
	}
}

// Values at the edges of the allowed ranges are accepted, and pointer
// components work like values.
func TestValidationAcceptsLimits(t *testing.T) {
	_, err := sfh.New(maxAge, []sfh.Part{
		{Name: "smooth", Component: &sfh.Constant{}, Weight: 1},
		{Name: "zero", Component: sfh.Exponential{TimescaleGyr: -1}},
		{Name: "young", Component: &sfh.Burst{AgeGyr: 0, WidthGyr: 0.1, MassFraction: 0}},
		{Name: "old", Component: sfh.Burst{AgeGyr: maxAge, WidthGyr: 0.1, MassFraction: 0.5}},
		{Name: "full-stop", Component: sfh.Dip{AgeGyr: 3, WidthGyr: 0.5, Depth: 1}},
		{Name: "none", Component: &sfh.Dip{AgeGyr: 0, WidthGyr: 0.5, Depth: 0}},
		{Name: "bins", Weight: 2, Component: sfh.Piecewise{EdgesGyr: []float64{0, maxAge}, Rates: []float64{1}}},
	})
	require.NoError(t, err)
	// Fractions meant to sum to one but rounding above it.
	_, err = sfh.New(maxAge, []sfh.Part{
		{Name: "a", Component: sfh.Burst{AgeGyr: 1, WidthGyr: 0.1, MassFraction: 0.1}},
		{Name: "b", Component: sfh.Burst{AgeGyr: 2, WidthGyr: 0.1, MassFraction: 0.2}},
		{Name: "c", Component: sfh.Burst{AgeGyr: 3, WidthGyr: 0.1, MassFraction: 0.7}},
	})
	require.NoError(t, err)
}

// New copies its input: changing the caller's slices later changes nothing.
func TestHistoryDoesNotAliasInput(t *testing.T) {
	rates := []float64{1, 2}
	h := mustNew(t, []sfh.Part{{Name: "bins", Weight: 1, Component: sfh.Piecewise{
		EdgesGyr: []float64{0, 5, 13}, Rates: rates}}})
	before := h.CumulativeMass(5)
	rates[0] = 100
	assert.Equal(t, before, h.CumulativeMass(5))
	parts := h.Parts()
	parts[0].Component.(sfh.Piecewise).Rates[1] = 100
	assert.Equal(t, before, h.CumulativeMass(5))
}
