package compare

import (
	"errors"
	"fmt"
	"math"
	"strings"

	"spinpop/sfh"
)

// FreeParam is one fitted history parameter, named as sfh names it
// ("<part>.<key>", e.g. "burst.age_gyr"), with the bounds of the fit and of
// its prior: uniform in [Min, Max], or uniform in ln θ when LogPrior
// (then Min must be > 0).
type FreeParam struct {
	Name     string
	Min, Max float64
	LogPrior bool
}

// HistoryModel is a family of star-formation histories: Base with the
// Free parameters varied, seen through the template age bins.
type HistoryModel struct {
	Base        *sfh.History
	Free        []FreeParam
	AgeEdgesGyr []float64
}

// Validate checks that every free parameter exists in Base, that its
// bounds are ordered and inside the range sfh accepts, and that the age
// edges are increasing.
func (m HistoryModel) Validate() error {
	if m.Base == nil {
		return errors.New("compare: history model has no base history")
	}
	if len(m.AgeEdgesGyr) < 2 {
		return fmt.Errorf("compare: history model has %d age edges; want the templates' edges", len(m.AgeEdgesGyr))
	}
	for i := 1; i < len(m.AgeEdgesGyr); i++ {
		if !(m.AgeEdgesGyr[i] > m.AgeEdgesGyr[i-1]) {
			return fmt.Errorf("compare: age edges %v are not strictly increasing", m.AgeEdgesGyr)
		}
	}
	params := map[string]sfh.Param{}
	var names []string
	for _, p := range m.Base.Params() {
		params[p.Name] = p
		names = append(names, p.Name)
	}
	seen := map[string]bool{}
	for _, f := range m.Free {
		p, ok := params[f.Name]
		if !ok {
			return fmt.Errorf("compare: free parameter %q is not a parameter of the history; its parameters are %s", f.Name, strings.Join(names, ", "))
		}
		if seen[f.Name] {
			return fmt.Errorf("compare: free parameter %q is listed twice", f.Name)
		}
		seen[f.Name] = true
		if !(f.Min < f.Max) || math.IsInf(f.Min, 0) || math.IsInf(f.Max, 0) {
			return fmt.Errorf("compare: free parameter %q has bounds [%g, %g]; want finite min < max", f.Name, f.Min, f.Max)
		}
		if f.Min < p.Min || f.Max > p.Max {
			return fmt.Errorf("compare: free parameter %q has bounds [%g, %g] outside its allowed range [%g, %g]", f.Name, f.Min, f.Max, p.Min, p.Max)
		}
		if f.LogPrior && !(f.Min > 0) {
			return fmt.Errorf("compare: free parameter %q has a log-uniform prior but min = %g; a log-uniform prior needs min > 0", f.Name, f.Min)
		}
	}
	return nil
}

// Names returns the free parameters' names.
func (m HistoryModel) Names() []string {
	out := make([]string, len(m.Free))
	for i, f := range m.Free {
		out[i] = f.Name
	}
	return out
}

// Dim returns the number of free parameters.
func (m HistoryModel) Dim() int { return len(m.Free) }

// History returns Base with the free parameters set to theta.
func (m HistoryModel) History(theta []float64) (*sfh.History, error) {
	if len(theta) != len(m.Free) {
		return nil, fmt.Errorf("compare: %d parameter values for %d free parameters (%s)", len(theta), len(m.Free), strings.Join(m.Names(), ", "))
	}
	if len(theta) == 0 {
		return m.Base, nil
	}
	vals := make(map[string]float64, len(theta))
	for i, f := range m.Free {
		vals[f.Name] = theta[i]
	}
	return m.Base.WithParams(vals)
}

// Weights returns the history's mass fraction in each age bin.
func (m HistoryModel) Weights(theta []float64) ([]float64, error) {
	h, err := m.History(theta)
	if err != nil {
		return nil, err
	}
	return h.BinWeights(m.AgeEdgesGyr), nil
}

// Default returns the free parameters' values in Base, moved inside the
// fit bounds where they lie outside.
func (m HistoryModel) Default() []float64 {
	vals := map[string]float64{}
	for _, p := range m.Base.Params() {
		vals[p.Name] = p.Value
	}
	out := make([]float64, len(m.Free))
	for i, f := range m.Free {
		out[i] = math.Min(math.Max(vals[f.Name], f.Min), f.Max)
	}
	return out
}

// WithFixed returns the model with parameter name removed from Free and
// fixed at value in Base.
func (m HistoryModel) WithFixed(name string, value float64) (HistoryModel, error) {
	idx := -1
	for i, f := range m.Free {
		if f.Name == name {
			idx = i
		}
	}
	if idx < 0 {
		return HistoryModel{}, fmt.Errorf("compare: %q is not a free parameter; free are %s", name, strings.Join(m.Names(), ", "))
	}
	base, err := m.Base.WithParams(map[string]float64{name: value})
	if err != nil {
		return HistoryModel{}, err
	}
	free := append(append([]FreeParam(nil), m.Free[:idx]...), m.Free[idx+1:]...)
	return HistoryModel{Base: base, Free: free, AgeEdgesGyr: m.AgeEdgesGyr}, nil
}

// Bounded transform.
//
// The optimiser works on unbounded x; each parameter is
//
//	θ = Min + (Max − Min)(1 + sin x)/2,
//
// the transform MINUIT uses for doubly bounded parameters (James & Roos
// 1975, Comput. Phys. Commun. 10, 343) [memory]. Unlike a logistic map it
// reaches the bounds at finite x, so a fit whose optimum lies on a bound
// (a burst fraction of 0 under a smooth history) gets there exactly
// instead of creeping toward an infinitely distant point.

// ToInternal maps theta inside the bounds to the optimiser's x.
func (m HistoryModel) ToInternal(theta []float64) []float64 {
	x := make([]float64, len(theta))
	for i, f := range m.Free {
		u := 2*(theta[i]-f.Min)/(f.Max-f.Min) - 1
		x[i] = math.Asin(math.Max(-1, math.Min(1, u)))
	}
	return x
}

// FromInternal maps the optimiser's x to theta, writing dθ/dx into deriv
// when it is not nil.
func (m HistoryModel) FromInternal(x, theta, deriv []float64) {
	for i, f := range m.Free {
		half := 0.5 * (f.Max - f.Min)
		theta[i] = f.Min + half*(1+math.Sin(x[i]))
		theta[i] = math.Max(f.Min, math.Min(f.Max, theta[i]))
		if deriv != nil {
			deriv[i] = half * math.Cos(x[i])
		}
	}
}

// weightJacobian writes dw_k/dθ_j into jac (row j holds the k values) for
// h, the history at theta:
// the history's closed forms where it has them (sfh's BinWeightSlopes: no
// dips, no Piecewise rates), otherwise central finite differences of
// BinWeights (one-sided at a bound), with steps of 1e-6 of each
// parameter's range: BinWeights is a closed form of error functions and
// exponentials, smooth at that scale, so the differences are accurate to
// ~1e-8 relative.
func (m HistoryModel) weightJacobian(h *sfh.History, theta []float64, jac [][]float64) error {
	if len(theta) > 0 && h.BinWeightSlopes(m.AgeEdgesGyr, m.Names(), jac) {
		return nil
	}
	tp := append([]float64(nil), theta...)
	for j, f := range m.Free {
		h := 1e-6 * (f.Max - f.Min)
		lo, hi := theta[j]-h, theta[j]+h
		if lo < f.Min {
			lo = theta[j]
		}
		if hi > f.Max {
			hi = theta[j]
		}
		tp[j] = hi
		wp, err := m.Weights(tp)
		if err != nil {
			return err
		}
		tp[j] = lo
		wm, err := m.Weights(tp)
		if err != nil {
			return err
		}
		tp[j] = theta[j]
		d := hi - lo
		for k := range wp {
			jac[j][k] = (wp[k] - wm[k]) / d
		}
	}
	return nil
}

// logPrior returns the log prior density at theta (up to a constant) or
// −Inf outside the bounds.
func (m HistoryModel) logPrior(theta []float64) float64 {
	var s float64
	for i, f := range m.Free {
		v := theta[i]
		if !(v >= f.Min && v <= f.Max) {
			return math.Inf(-1)
		}
		if f.LogPrior {
			s -= math.Log(v)
		}
	}
	return s
}
