package stats

import (
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func TestBinomialIntervalsAgainstScipy(t *testing.T) {
	ref := loadReference(t)
	require.NotEmpty(t, ref.Binomial)
	for _, c := range ref.Binomial {
		lo, hi, err := ClopperPearsonInterval(c.K, c.N, c.Conf)
		require.NoError(t, err)
		// Source: scipy 1.10 scipy.stats.beta.ppf quantiles (Clopper & Pearson 1934), testdata/stats_reference.py
		assert.InDelta(t, c.CPLo, lo, 1e-9, "k=%d n=%d", c.K, c.N)
		assert.InDelta(t, c.CPHi, hi, 1e-9, "k=%d n=%d", c.K, c.N)
		lo, hi, err = WilsonInterval(c.K, c.N, c.Conf)
		require.NoError(t, err)
		// Source: scipy 1.10 binomtest(k, n).proportion_ci(method='wilson'), testdata/stats_reference.py
		assert.InDelta(t, c.WilsonLo, lo, 1e-12, "k=%d n=%d", c.K, c.N)
		assert.InDelta(t, c.WilsonHi, hi, 1e-12, "k=%d n=%d", c.K, c.N)
	}
}

func TestBinomialIntervalErrors(t *testing.T) {
	_, _, err := WilsonInterval(5, 3, 0.95)
	require.ErrorContains(t, err, "0 ≤ k ≤ n")
	_, _, err = ClopperPearsonInterval(1, 3, 95)
	require.ErrorContains(t, err, "(0, 1)")
}
