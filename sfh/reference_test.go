package sfh_test

import (
	"encoding/json"
	"os"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

type mixtureRef struct {
	Name       string
	Ages       []float64
	Rate       []float64
	Cumulative []float64
	MeanRange  [2]float64 `json:"mean_range"`
	MeanAge    float64    `json:"mean_age"`
}

type kolmogorovRef struct{ X, SF float64 }

func loadRef(t *testing.T) (mix []mixtureRef, ks []kolmogorovRef) {
	t.Helper()
	b, err := os.ReadFile("testdata/reference.json")
	require.NoError(t, err)
	var ref struct {
		Mixtures   []mixtureRef
		Kolmogorov []kolmogorovRef
	}
	require.NoError(t, json.Unmarshal(b, &ref))
	require.Len(t, ref.Mixtures, 2)
	require.NotEmpty(t, ref.Kolmogorov)
	return ref.Mixtures, ref.Kolmogorov
}

// Rate, CumulativeMass and MeanAgeInRange of two sums with dips against an
// independent implementation of the documented definitions.
// Source: SciPy 1.10 scipy.integrate.quad and scipy.stats.truncnorm,
// testdata/reference.py.
func TestMixturesAgainstSciPy(t *testing.T) {
	mix, _ := loadRef(t)
	for i, m := range mix {
		parts := mix1()
		if i == 1 {
			parts = mix2()
		}
		h := mustNew(t, parts)
		for k, a := range m.Ages {
			assert.InDeltaf(t, m.Rate[k], h.Rate(a), 1e-9, "%s rate at %g", m.Name, a)
			assert.InDeltaf(t, m.Cumulative[k], h.CumulativeMass(a), 1e-9, "%s cumulative at %g", m.Name, a)
		}
		assert.InDelta(t, m.MeanAge, h.MeanAgeInRange(m.MeanRange[0], m.MeanRange[1]), 1e-8, m.Name)
	}
}

// The test's own Kolmogorov distribution against SciPy, including the
// critical value 1.9495 for ksAlpha = 0.001.
// Source: SciPy 1.10 scipy.special.kolmogorov, testdata/reference.py.
func TestKolmogorovDistribution(t *testing.T) {
	_, ks := loadRef(t)
	for _, k := range ks {
		assert.InDeltaf(t, k.SF, kolmogorovSF(k.X), 1e-12, "x = %g", k.X)
	}
	assert.InDelta(t, ksAlpha, kolmogorovSF(1.9495), 1e-6)
}
