package sfh

import (
	"encoding/json"
	"os"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// reference mirrors testdata/reference.json, written by testdata/reference.py.
type reference struct {
	NormalPPF0975 float64 `json:"normal_ppf_0975"`
	TruncNorm     []struct {
		Mu, Sigma, Lo, Hi, X, CDF, U, PPF, Mean float64
	} `json:"truncnorm"`
	Mixtures []struct {
		Name       string
		Ages       []float64
		Rate       []float64
		Cumulative []float64
		MeanRange  [2]float64 `json:"mean_range"`
		MeanAge    float64    `json:"mean_age"`
	}
	Kolmogorov []struct{ X, SF float64 }
}

func loadReference(t *testing.T) reference {
	t.Helper()
	b, err := os.ReadFile("testdata/reference.json")
	require.NoError(t, err)
	var ref reference
	require.NoError(t, json.Unmarshal(b, &ref))
	require.NotEmpty(t, ref.TruncNorm)
	return ref
}

// The truncated-Gaussian inverse CDF against a worked value: with the
// truncation far away it is the standard normal quantile.
func TestNormalQuantileWorkedValue(t *testing.T) {
	// From memory of Abramowitz & Stegun (1964), ch. 26, table of normal
	// percentage points: Φ⁻¹(0.975) = 1.959964; tolerance reflects its six
	// printed decimals.
	tn := newTruncNormal(-40, 40)
	assert.InDelta(t, 1.959964, tn.quantile(0.975), 1e-6)
	assert.InDelta(t, -1.959964, tn.quantile(0.025), 1e-6)

	// Source: SciPy 1.10 scipy.stats.norm.ppf(0.975), testdata/reference.py.
	ref := loadReference(t)
	assert.InDelta(t, ref.NormalPPF0975, tn.quantile(0.975), 1e-12)

	// Half-normal (truncated at its mean): quantile u is Φ⁻¹((1+u)/2), so
	// u = 0.95 gives the same 1.959964. From memory of Abramowitz & Stegun
	// (1964), ch. 26, as above.
	half := newTruncNormal(0, 40)
	assert.InDelta(t, 1.959964, half.quantile(0.95), 1e-6)
}

// Truncated Gaussian CDF, inverse CDF and mean against SciPy, including
// ranges 8–9σ into either tail.
// Source: SciPy 1.10 scipy.stats.truncnorm, testdata/reference.py.
func TestTruncatedNormalAgainstSciPy(t *testing.T) {
	ref := loadReference(t)
	for _, c := range ref.TruncNorm {
		s := newNormalShape(c.Mu, c.Sigma, 40)
		sp := s.span(c.Lo, c.Hi)
		assert.InEpsilonf(t, c.PPF, sp.quantile(c.U), 1e-10, "ppf %+v", c)
		assert.InEpsilonf(t, c.CDF, s.mass(c.Lo, c.X)/s.mass(c.Lo, c.Hi), 1e-10, "cdf %+v", c)
		assert.InEpsilonf(t, c.Mean, s.mean(c.Lo, c.Hi), 1e-10, "mean %+v", c)
	}
}

// Every shape's restricted inverse CDF inverts its own mass function.
func TestSpanQuantileInvertsMass(t *testing.T) {
	const T = 13.0
	shapes := map[string]shape{
		"uniform":   &uniformShape{maxAge: T},
		"exp+":      newExpShape(3, T),
		"exp-":      newExpShape(-0.5, T),
		"exp-flat":  newExpShape(1e9, T),
		"exp-spike": newExpShape(1e-3, T),
		"normal":    newNormalShape(4, 0.7, T),
		"steps":     newStepShape([]float64{0.5, 1, 3, 6, 12}, []float64{3, 0, 1, 0.5}),
	}
	ranges := [][2]float64{{0, T}, {2, 2.5}, {3.9, 4.1}, {0.7, 6.5}, {12.9, 13}, {9, 9.001}}
	for name, s := range shapes {
		for _, rg := range ranges {
			total := s.mass(rg[0], rg[1])
			if !(total > 1e-250) {
				continue
			}
			sp := s.span(rg[0], rg[1])
			assert.Equal(t, total, sp.mass)
			for _, u := range []float64{0, 1e-9, 0.1, 0.37, 0.5, 0.81, 0.999999} {
				x := sp.quantile(u)
				require.Truef(t, x >= rg[0] && x <= rg[1], "%s %v u=%g: %g outside", name, rg, u, x)
				assert.InDeltaf(t, u, s.mass(rg[0], x)/total, 1e-9, "%s %v u=%g", name, rg, u)
			}
		}
	}
}
