package stats

import (
	"encoding/json"
	"os"
	"sync"
	"testing"

	"github.com/stretchr/testify/require"
)

// reference mirrors testdata/stats_reference.json, written by
// testdata/stats_reference.py with Debian's python3-scipy 1.10.
type reference struct {
	ScipyVersion string `json:"scipy_version"`
	Poisson      []struct {
		Mu   []float64 `json:"mu"`
		N    []float64 `json:"n"`
		LogL float64   `json:"logL"`
	} `json:"poisson"`
	Multinomial []struct {
		Mu   []float64 `json:"mu"`
		N    []float64 `json:"n"`
		LogL float64   `json:"logL"`
	} `json:"multinomial"`
	KSTwoSF []struct {
		N  int     `json:"n"`
		D  float64 `json:"d"`
		SF float64 `json:"sf"`
	} `json:"kstwo_sf"`
	Smirnov []struct {
		N  int     `json:"n"`
		D  float64 `json:"d"`
		SF float64 `json:"sf"`
	} `json:"smirnov"`
	KS2Samp []struct {
		X []float64 `json:"x"`
		Y []float64 `json:"y"`
		D float64   `json:"D"`
		P float64   `json:"p"`
	} `json:"ks_2samp_asymp"`
	Anderson []struct {
		Samples   [][]float64 `json:"samples"`
		Statistic float64     `json:"statistic"`
		Critical  []float64   `json:"critical"`
		P         float64     `json:"p"`
	} `json:"anderson_ksamp"`
	Chi2SF []struct {
		T  float64 `json:"t"`
		SF float64 `json:"chi2_sf_1dof"`
	} `json:"chi2_sf"`
	Binomial []struct {
		K        int     `json:"k"`
		N        int     `json:"n"`
		Conf     float64 `json:"conf"`
		CPLo     float64 `json:"cp_lo"`
		CPHi     float64 `json:"cp_hi"`
		WilsonLo float64 `json:"wilson_lo"`
		WilsonHi float64 `json:"wilson_hi"`
	} `json:"binomial"`
}

var (
	refOnce sync.Once
	refData reference
	refErr  error
)

func loadReference(t *testing.T) *reference {
	t.Helper()
	refOnce.Do(func() {
		b, err := os.ReadFile("../../testdata/stats_reference.json")
		if err != nil {
			refErr = err
			return
		}
		refErr = json.Unmarshal(b, &refData)
	})
	require.NoError(t, refErr, "regenerate with /usr/bin/python3 testdata/stats_reference.py > testdata/stats_reference.json")
	require.NotEmpty(t, refData.Poisson)
	return &refData
}

// relClose asserts |got − want| ≤ tol·max(|want|, floor).
func relClose(t *testing.T, want, got, tol, floor float64, msgAndArgs ...any) {
	t.Helper()
	scale := want
	if scale < 0 {
		scale = -scale
	}
	if scale < floor {
		scale = floor
	}
	require.InDelta(t, want, got, tol*scale, msgAndArgs...)
}
