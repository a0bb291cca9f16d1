package compare

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"sort"
	"strings"

	"gonum.org/v1/gonum/stat"

	"spinpop/compare/stats"
)

// Alternative is one explanation of a catalog: its own templates (its own
// physics — a stalled spin-down, say), a family of histories and the
// nuisance parameters fitted with them. Every alternative of a comparison
// scores the same data in the same comparison space.
type Alternative struct {
	Name     string
	Like     *Likelihood
	History  HistoryModel
	Nuisance *Nuisance
}

// AltOptions control CompareAlternatives.
type AltOptions struct {
	Replicates      int    // bootstrap replicates under each alternative (0: 200)
	Seed            uint64 // replicate i of alternative h draws from a stream of (Seed, h, i)
	Workers         int
	FitStarts       int // starts of the fits to the data (0: 4)
	ReplicateStarts int // starts of each replicate's refits (0: 2)
	Progress        func(done, total int)
	NoEvidence      bool
	MaxRounds       int // bounds the expansions of each joint fit to the data (0: MaxRounds)
	// Stage, if not nil, is told what the fits to the data are doing
	// (each message names the alternative).
	Stage func(msg string)
}

// AltFit is one alternative fitted to the data.
type AltFit struct {
	Name     string    `json:"name"`
	Fit      FitResult `json:"-"`
	K        int       `json:"parameters"` // free history and nuisance parameters and normalisations
	LogL     float64   `json:"log_likelihood"`
	AIC      float64   `json:"aic"`
	BIC      float64   `json:"bic"`
	Adequacy Adequacy  `json:"adequacy"`
	// LogEvidence is ln Z by grid integration over at most three of the
	// alternative's free history parameters (their priors), the others at
	// their best fit; EvidenceParams names them.
	LogEvidence    float64  `json:"log_evidence"`
	EvidenceParams []string `json:"evidence_params"`
	HasEvidence    bool     `json:"has_evidence"`
	// Strains are the nuisance parameters this fit strains (Strains), of
	// GaussianPriors with a gaussian prior.
	Strains        []Strain `json:"-"`
	GaussianPriors int      `json:"-"`
	// AgesOnEdge are the ages that set this alternative apart
	// (distinguishingAges) which its fit put on an edge of their free
	// range (rangeEdge), in words: such an age is the range's, not the
	// catalog's, and the burst test refuses a burst there (onRangeEdge).
	AgesOnEdge []string `json:"ages_on_range_edge,omitempty"`
}

// PairTest compares two alternatives by their likelihood ratio
// LR = 2(ln L̂_B − ln L̂_A), calibrated by the parametric bootstrap under
// each: PUnderA = P(LR* ≥ LR | A) (small: the data reject A in favour of
// B), PUnderB = P(LR* ≤ LR | B) (small: the data reject B in favour of
// A). For non-nested models this is the bootstrap form of Cox's test
// (Cox 1962, JRSS B 24, 406; Williams 1970) [memory]: each model is
// tested as the null against the other. When no replicate reaches the
// observed LR, the p-value is the normal tail of the replicates' LR
// instead of 1/(1 + B), as for the goodness of fit (Adequacy.PValue): an
// LR thousands of units beyond every replicate must not read as "not
// rejected at 1 %" merely because 20 replicates cannot show p < 0.048.
type PairTest struct {
	A             string  `json:"a"`
	B             string  `json:"b"`
	LR            float64 `json:"lr"`
	PUnderA       float64 `json:"p_under_a"`
	PUnderB       float64 `json:"p_under_b"`
	LogBayesBOver float64 `json:"ln_bayes_b_over_a"` // NaN without evidence
}

// AltResult is the outcome of CompareAlternatives.
type AltResult struct {
	Fits       []AltFit   `json:"fits"`
	Pairs      []PairTest `json:"pairs"`
	N          int        `json:"stars"`
	Replicates int        `json:"replicates"`
	Best       string     `json:"best"`    // the alternative the verdict prefers ("" if none)
	Outcome    string     `json:"outcome"` // "prefers", "cannot-tell", "neither-fits"
	Verdict    string     `json:"verdict"`
}

// CompareAlternatives fits every alternative to the data, calibrates the
// likelihood ratio of every pair by parametric bootstrap under each
// member of the pair, calibrates each alternative's deviance by its own
// replicates (Adequacy), and says in plain words which explanation the
// catalog prefers — or that it cannot tell, or that none fits.
func CompareAlternatives(ctx context.Context, alts []Alternative, opts AltOptions) (*AltResult, error) {
	if len(alts) < 2 {
		return nil, errors.New("compare: a comparison of alternatives needs at least two")
	}
	if opts.Replicates <= 0 {
		opts.Replicates = 200
	}
	if opts.FitStarts <= 0 {
		opts.FitStarts = 4
	}
	if opts.ReplicateStarts <= 0 {
		opts.ReplicateStarts = 2
	}
	seen := map[string]bool{}
	for i, a := range alts {
		switch {
		case a.Name == "":
			return nil, fmt.Errorf("compare: alternative %d has no name", i+1)
		case seen[a.Name]:
			return nil, fmt.Errorf("compare: two alternatives are named %q", a.Name)
		case a.Like == nil:
			return nil, fmt.Errorf("compare: alternative %q has no likelihood", a.Name)
		case !slices.Equal(a.Like.Counts(), alts[0].Like.Counts()) || !a.Like.Space().Equal(alts[0].Like.Space()):
			return nil, fmt.Errorf("compare: alternative %q scores other data or another comparison space than %q; every alternative must read the same catalog with the same cuts and bins", a.Name, alts[0].Name)
		case a.Like.Options().Normalisation != alts[0].Like.Options().Normalisation:
			return nil, fmt.Errorf("compare: alternative %q uses normalisation %q, %q uses %q; likelihoods of different kinds cannot be compared", a.Name, a.Like.Options().Normalisation, alts[0].Name, alts[0].Like.Options().Normalisation)
		}
		seen[a.Name] = true
	}
	res := &AltResult{N: int(math.Round(alts[0].Like.N())), Replicates: opts.Replicates}
	regs := misfitRegions(alts[0].Like.Space())
	data := make([]devianceRecord, len(alts))
	fits, err := fitAlternatives(ctx, alts, opts)
	if err != nil {
		return nil, err
	}
	for h, a := range alts {
		f := fits[h]
		k := a.History.Dim() + a.Nuisance.Dim() + a.Like.NumScales()
		af := AltFit{Name: a.Name, Fit: f, K: k, LogL: f.LogL, AIC: stats.AIC(f.LogL, k), BIC: stats.BIC(f.LogL, k, res.N), LogEvidence: math.NaN(),
			Strains: Strains(f, a.Nuisance), GaussianPriors: GaussianPriors(a.Nuisance), AgesOnEdge: agesOnEdge(a.History, f, distinguishingAges(alts, h))}
		var err error
		if data[h], err = fitDeviance(a.Like, f, regs); err != nil {
			return nil, err
		}
		if !opts.NoEvidence {
			if err := useTemplates(a.Like, f, nil); err != nil {
				return nil, err
			}
			af.LogEvidence, af.EvidenceParams, af.HasEvidence = logEvidence(a.Like, a.History, f)
		}
		res.Fits = append(res.Fits, af)
	}

	// Replicates are drawn on the bins every alternative reaches at its
	// best fit, as the data are (a bin only one explanation can fill says
	// nothing about the others, and would end every other's refit at
	// ln L = −∞).
	support := make([]bool, alts[0].Like.NumBins())
	for i := range support {
		support[i] = true
	}
	for h, a := range alts {
		if err := useTemplates(a.Like, res.Fits[h].Fit, nil); err != nil {
			return nil, err
		}
		for i, ok := range a.Like.reached() {
			support[i] = support[i] && ok
		}
	}

	// Replicates under each alternative, each refitted by every one.
	H := len(alts)
	lnL := make([][][]float64, H) // lnL[h][i][g]: replicate i drawn under h, refitted by g
	own := make([][]devianceRecord, H)
	total := H * opts.Replicates
	doneBefore := 0
	for h := range alts {
		lnL[h] = make([][]float64, opts.Replicates)
		own[h] = make([]devianceRecord, opts.Replicates)
		a := alts[h]
		if err := useTemplates(a.Like, res.Fits[h].Fit, nil); err != nil {
			return nil, err
		}
		mu := a.Like.Expected(res.Fits[h].Fit.Weights, nil)
		var progress func(done, _ int)
		if opts.Progress != nil {
			base := doneBefore
			progress = func(done, _ int) { opts.Progress(base+done, total) }
		}
		for _, b := range alts {
			b.Like.markShared()
		}
		err := parallelReplicates(ctx, opts.Replicates, opts.Workers, progress, func(i int, counts []float64) error {
			drawLikeMock(counts, mu, a.Like, altStream(opts.Seed, h, i))
			for c, ok := range support {
				if !ok {
					counts[c] = 0
				}
			}
			row := make([]float64, H)
			for g, b := range alts {
				l, err := b.Like.withCounts(counts, false)
				if err != nil {
					return err
				}
				if !l.reachable() {
					// Stars where this explanation's templates have none:
					// it cannot produce the replicate at all.
					row[g] = math.Inf(-1)
					if g == h {
						return fmt.Errorf("compare: replicate %d of %q has stars where its own templates have none", i, a.Name)
					}
					continue
				}
				fg := res.Fits[g].Fit
				r, err := refitAt(l, b.History, b.Nuisance, fg.morph, FitOptions{Starts: opts.ReplicateStarts, Seed: opts.Seed, Init: [][]float64{fg.Theta}}, fg.Nuisance)
				if err != nil {
					return fmt.Errorf("compare: replicate %d under %q, refit of %q: %w", i, a.Name, b.Name, err)
				}
				row[g] = r.LogL
				if g == h {
					if own[h][i], err = fitDeviance(l, r, regs); err != nil {
						return err
					}
				}
			}
			lnL[h][i] = row
			return nil
		}, len(mu))
		if err != nil {
			return nil, err
		}
		doneBefore += opts.Replicates
		res.Fits[h].Adequacy = newAdequacy(data[h], own[h], regs, a.Like.Counts())
	}
	for a := 0; a < H; a++ {
		for b := a + 1; b < H; b++ {
			pt := PairTest{A: alts[a].Name, B: alts[b].Name, LR: 2 * (res.Fits[b].LogL - res.Fits[a].LogL), LogBayesBOver: math.NaN()}
			var geA, leB int
			for i := range opts.Replicates {
				if 2*(lnL[a][i][b]-lnL[a][i][a]) >= pt.LR-lrTieTol {
					geA++
				}
				if 2*(lnL[b][i][b]-lnL[b][i][a]) <= pt.LR+lrTieTol {
					leB++
				}
			}
			nb := float64(opts.Replicates)
			pt.PUnderA, pt.PUnderB = (1+float64(geA))/(1+nb), (1+float64(leB))/(1+nb)
			underA, underB := make([]float64, opts.Replicates), make([]float64, opts.Replicates)
			for i := range opts.Replicates {
				underA[i] = 2 * (lnL[a][i][b] - lnL[a][i][a])
				underB[i] = 2 * (lnL[b][i][b] - lnL[b][i][a])
			}
			if m, sd := stat.MeanStdDev(underA, nil); geA == 0 && sd > 0 {
				pt.PUnderA = math.Min(pt.PUnderA, normalUpperTail(pt.LR, m, sd))
			}
			if m, sd := stat.MeanStdDev(underB, nil); leB == 0 && sd > 0 {
				pt.PUnderB = math.Min(pt.PUnderB, normalUpperTail(-pt.LR, -m, sd))
			}
			if res.Fits[a].HasEvidence && res.Fits[b].HasEvidence {
				pt.LogBayesBOver = res.Fits[b].LogEvidence - res.Fits[a].LogEvidence
			}
			res.Pairs = append(res.Pairs, pt)
		}
	}
	res.Best, res.Outcome, res.Verdict = altVerdict(res)
	return res, nil
}

// normalUpperTail is P(X ≥ x) for X normal with mean m and standard
// deviation sd (with sd = 0: 0 beyond m, 1 up to it).
func normalUpperTail(x, m, sd float64) float64 {
	if !(sd > 0) {
		if x > m {
			return 0
		}
		return 1
	}
	return 0.5 * math.Erfc((x-m)/(sd*math.Sqrt2))
}

// altStream is the stream of replicate i under alternative h: a function
// of (seed, h, i) only.
func altStream(seed uint64, h, i int) *rand.Rand {
	return replicateStream(seed^uint64(h+1)*0x9e3779b97f4a7c15, i)
}

// pReject is the bootstrap p-value at which one alternative is rejected in
// favour of another: the "moderate" level of the burst test.
const pReject = pModerate

// altVerdict says which alternative the catalog prefers, if any.
func altVerdict(r *AltResult) (best, outcome, text string) {
	idx := map[string]int{}
	for i, f := range r.Fits {
		idx[f.Name] = i
	}
	// rejected[a][b]: a is rejected in favour of b.
	H := len(r.Fits)
	rejected := make([][]bool, H)
	for i := range rejected {
		rejected[i] = make([]bool, H)
	}
	for _, p := range r.Pairs {
		a, b := idx[p.A], idx[p.B]
		rejected[a][b] = p.PUnderA <= pReject // LR beyond what A makes: A loses to B
		rejected[b][a] = p.PUnderB <= pReject // LR below what B makes: B loses to A
	}
	order := make([]int, H)
	for i := range order {
		order[i] = i
	}
	sort.SliceStable(order, func(i, j int) bool { return r.Fits[order[i]].LogL > r.Fits[order[j]].LogL })
	var lines []string
	anyAdequate := false
	for _, i := range order {
		f := r.Fits[i]
		a := f.Adequacy
		ok := a.Adequate(AdequacyLevel)
		anyAdequate = anyAdequate || ok
		desc := "describes the catalog"
		if !ok {
			desc = "does not describe the catalog" + worstRegions(a)
		}
		lines = append(lines, fmt.Sprintf("%s: ln L = %.1f, deviance %.0f against %.0f ± %.0f from counting noise (%s) — %s", f.Name, f.LogL, a.Deviance, a.ReplicateMean, a.ReplicateSD, pIs(a.PValue), desc))
	}
	c := order[0]
	cf := r.Fits[c]
	second := r.Fits[order[1]]
	gain := 2 * (cf.LogL - second.LogL)
	summary := strings.Join(lines, "; ") + "."
	if !anyAdequate && gain <= misfitFactor*cf.Adequacy.Excess {
		return "", "neither-fits", fmt.Sprintf("Neither explanation fits: none describes the catalog, and the best, %q, beats %q by 2Δln L = %.1f, no more than the misfit it still leaves (excess deviance %.1f); no preference is claimed. %s", cf.Name, second.Name, gain, cf.Adequacy.Excess, summary)
	}
	beatsAll, beaten := true, false
	for _, o := range order[1:] {
		if !rejected[o][c] {
			beatsAll = false
		}
		if rejected[c][o] {
			beaten = true
		}
	}
	if beaten {
		return "", "neither-fits", fmt.Sprintf("Neither explanation fits: each is rejected in favour of another by the bootstrap in both directions. %s", summary)
	}
	lead := ""
	if !cf.Adequacy.Adequate(AdequacyLevel) {
		lead = fmt.Sprintf("The best explanation, %q, does not describe the catalog fully (dispersion φ̂ = %.2f); read the preference with that in mind. ", cf.Name, cf.Adequacy.Dispersion)
	}
	if beatsAll {
		var ps []string
		for _, p := range r.Pairs {
			if p.A == cf.Name || p.B == cf.Name {
				other, pv := p.B, p.PUnderB
				if p.B == cf.Name {
					other, pv = p.A, p.PUnderA
				}
				ps = append(ps, fmt.Sprintf("%q rejected at bootstrap %s", other, pIs(pv)))
			}
		}
		if w := cf.EdgeWarning(); w != "" {
			lead = "Caution: " + w + "; read the preference as one for the range's end, not for an event there, and test again with the range widened (or, at a youngest edge, more of the young cells masked). " + lead
		}
		return cf.Name, "prefers", lead + fmt.Sprintf("The catalog prefers %q (%s). %s", cf.Name, strings.Join(ps, ", "), summary)
	}
	return "", "cannot-tell", lead + fmt.Sprintf("The catalog cannot tell the explanations apart: %q fits best (2Δln L = %.1f over %q), but the bootstrap does not reject the others at p ≤ %.2g. %s", cf.Name, gain, second.Name, pReject, summary)
}

// agesOnEdge describes the ages among names that fit f put on an edge of
// their free range in m (nil when none).
func agesOnEdge(m HistoryModel, f FitResult, names []string) []string {
	var out []string
	for _, p := range m.Free {
		i := indexOf(f.Names, p.Name)
		if i < 0 || !slices.Contains(names, p.Name) {
			continue
		}
		if _, where := rangeEdge(f.Theta[i], p.Min, p.Max); where != "" {
			out = append(out, fmt.Sprintf("%s at %s", p.Name, where))
		}
	}
	return out
}

// EdgeWarning says, when the fit put ages that set this alternative apart
// on an edge of their range (AgesOnEdge), which and what that means (""
// otherwise): such an age is the range's, not the catalog's, as the burst
// test's refusal of a burst there says (onRangeEdge).
func (f AltFit) EdgeWarning() string {
	switch len(f.AgesOnEdge) {
	case 0:
		return ""
	case 1:
		return fmt.Sprintf("the fit of %q puts %s, so that age is the range's, not the catalog's, and marks no event", f.Name, f.AgesOnEdge[0])
	}
	return fmt.Sprintf("the fit of %q puts %s, so those ages are the ranges', not the catalog's, and mark no event", f.Name, strings.Join(f.AgesOnEdge, " and "))
}

// BestFit is the fit of the alternative the verdict prefers (false when
// it prefers none).
func (r *AltResult) BestFit() (AltFit, bool) {
	if r.Best == "" {
		return AltFit{}, false
	}
	for _, f := range r.Fits {
		if f.Name == r.Best {
			return f, true
		}
	}
	return AltFit{}, false
}
