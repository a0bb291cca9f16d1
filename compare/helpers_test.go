package compare

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/stat/distuv"

	"spinpop/model/spin"
)

// randomTemplates returns nk templates over a space of nColor × nP × nZ
// bins whose counts are Poisson draws around smooth random shapes with
// about perBin stars per template bin.
func randomTemplates(t testing.TB, nk, nColor, nP, nZ int, perBin float64, seed uint64) *Templates {
	t.Helper()
	var hEdges []float64
	if nZ > 0 {
		for z := 0; z <= nZ; z++ {
			hEdges = append(hEdges, 100*float64(z))
		}
	}
	sp, err := NewSpace(0.45, 1.6, nColor, 0.5, 100, nP, hEdges)
	require.NoError(t, err)
	r := rand.New(rand.NewPCG(seed, 7))
	nb := sp.NumBins()
	edges := make([]float64, nk+1)
	for k := range edges {
		edges[k] = 10 * float64(k) / float64(nk)
	}
	tpl := &Templates{Space: sp, AgeEdgesGyr: edges, Counts: make([]float64, nk*nb), DrawnPerBin: make([]int64, nk)}
	for k := range nk {
		c0, p0 := r.Float64()*float64(nColor), r.Float64()*float64(nP)
		for i := range nb {
			c, p, z := sp.Split(i)
			dc, dp := (float64(c)-c0)/float64(nColor), (float64(p)-p0)/float64(nP)
			lam := perBin * (0.2 + 2*math.Exp(-8*(dc*dc+dp*dp))) * math.Exp(-0.3*float64(z))
			tpl.Counts[k*nb+i] = distuv.Poisson{Lambda: lam, Src: r}.Rand()
		}
		tpl.DrawnPerBin[k] = 1000
	}
	return tpl
}

// gyroTemplates returns demo-like templates computed, not simulated: in
// every age bin stars of uniform B−V follow the Barnes (2007) gyrochrone,
// ages spread uniformly through the bin, with a lognormal period scatter of
// scatterDex, on a 2-D space. The expected counts per template are scaled
// so that each age bin holds starsPerBin stars; older bins lose stars to a
// mild efficiency factor so the templates differ in total as real ones do.
func gyroTemplates(t testing.TB, edges []float64, nColor, nP int, starsPerBin, scatterDex float64) *Templates {
	t.Helper()
	sp, err := NewSpace(0.45, 1.6, nColor, 0.8, 80, nP, nil)
	require.NoError(t, err)
	law := spin.Barnes2007()
	nk := len(edges) - 1
	nb := sp.NumBins()
	tpl := &Templates{Space: sp, AgeEdgesGyr: append([]float64(nil), edges...), Counts: make([]float64, nk*nb), DrawnPerBin: make([]int64, nk)}
	const sub = 8
	norm := distuv.Normal{Mu: 0, Sigma: scatterDex}
	for k := range nk {
		row := tpl.Counts[k*nb : (k+1)*nb]
		for c := range nColor {
			for sc := range 4 {
				bv := sp.ColorEdges[c] + (sp.ColorEdges[c+1]-sp.ColorEdges[c])*(float64(sc)+0.5)/4
				for s := range sub {
					age := edges[k] + (edges[k+1]-edges[k])*(float64(s)+0.5)/sub
					per, ok := law.PeriodAt(bv, age)
					if !ok {
						continue
					}
					lp := math.Log10(per)
					for p := range nP {
						f := norm.CDF(sp.LogPeriodEdges[p+1]-lp) - norm.CDF(sp.LogPeriodEdges[p]-lp)
						row[c*nP+p] += f / float64(4*sub*nColor)
					}
				}
			}
		}
		eff := starsPerBin * (1 - 0.03*edges[k])
		for i := range row {
			row[i] *= eff
		}
		tpl.DrawnPerBin[k] = int64(starsPerBin)
	}
	return tpl
}

// demoEdges are 40 age bins of a 10 Gyr history, 0.05 Gyr wide to 1 Gyr,
// then log-spaced (the scenarios' default before the fine bins reached
// 3 Gyr): a grid for these tests, not the default.
func demoEdges() []float64 {
	edges := make([]float64, 41)
	for i := 0; i <= 20; i++ {
		edges[i] = float64(i) / 20
	}
	for i := 1; i < 20; i++ {
		edges[20+i] = math.Pow(10, float64(i)/20)
	}
	edges[40] = 10
	return edges
}

// asimovBurstFit is the likelihood of noiseless (Asimov) data of the
// given size from a 20 % burst at 0.6 Gyr on demo-like templates whose
// ridges have scatterDex, with the burst model (age and share free).
func asimovBurstFit(t testing.TB, scatterDex, stars float64) (*Likelihood, HistoryModel) {
	t.Helper()
	edges := demoEdges()
	tpl := gyroTemplates(t, edges, 23, 30, 1e5, scatterDex)
	truth := burstHistory(t, 0.6, 0.05, 0.2)
	like, err := NewLikelihood(tpl, asimov(tpl, truth.BinWeights(edges), stars), LikeOptions{TemplateNoise: NoiseIgnore})
	require.NoError(t, err)
	_, burst := demoModels(t, edges)
	return like, burst
}
