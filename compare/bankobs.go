package compare

import (
	"context"
	"errors"
	"fmt"
	"slices"
	"sync"

	"gonum.org/v1/gonum/floats"

	"spinpop/model"
	"spinpop/model/spots"
)

// BankObserver makes templates at nuisance values by re-observing the
// catalog-eligible stars of the template run (model.Bank.Observe): no
// star is generated again. Apply turns nuisance values into the population
// that observes them — the template population with, say, another
// spin-down coefficient or detection threshold; it must change nothing that
// decides which stars exist.
type BankObserver struct {
	Bank        *model.Bank
	Space       Space
	AgeEdgesGyr []float64
	// Apply returns the observing population at values (one per nuisance
	// parameter, in order).
	Apply func(values []float64) (*model.Population, error)
	// Reweight, when not nil, returns the importance weight of a stored
	// star at values (model.ObserveOptions.Weight; nil: none), for nuisance
	// parameters that change where stars are rather than how they are
	// observed — the disk's heating.
	Reweight func(values []float64) (func(bin int, absZPc float64) float64, error)
	// BaseFractionScale is the binary fraction scale of the run that made
	// the bank.
	BaseFractionScale float64
	Workers           int
	// Mask, when not nil, marks (color, period) cells left out of the
	// comparison (Templates.ZeroCells), emptied in every set of templates.
	Mask []bool
	// SearchParams, when not nil, marks the nuisance parameters the
	// free-form search loss's node efficiencies
	// (spots.SearchCompleteness.RossbyBands) are linear in, and
	// SearchGradient gives, at values, the derivative of every node's
	// efficiency in parameter j: the templates' derivatives in those come
	// from the pass that makes the templates (ObserveSlopes), by the chain
	// rule through the nodes.
	SearchParams   []bool
	SearchGradient func(values []float64, j int) ([]float64, error)
	// Weights, when not nil, maps nuisance parameters to the model's
	// parameters that only re-weight stored stars (model.WeightParam),
	// with the nuisance value the model's value itself: their derivatives,
	// first and second, come from the pass that makes the templates too.
	Weights map[int]model.WeightParam
	// Depth, when not nil, ranks each nuisance parameter by how much of a
	// stored star's observation a change of it makes again (see
	// SideOrderer); nil: parameter order.
	Depth []int

	// centres are the values of the latest passes that made derivatives:
	// a joint fit's centres. A pass one parameter away from one of them is
	// a side point of its expansion, which a fit seldom observes again, so
	// it keeps nothing in the bank's memos (model.ObserveOptions.NoNewMemos):
	// filling them cost a tenth of a side point's time, and a side point's
	// memo pushed out one the centre's next side points read. (A side
	// point that wins a round and becomes the next centre is then observed
	// without its memos: a cost in time, never in numbers.) Made on
	// first use; a copy of the observer made after that shares it, which
	// changes what is kept, not what is computed.
	centres *centreLog
}

// centreLog is the latest centres, at most maxCentres: one a fit, with
// room for the bootstrap's concurrent refits.
type centreLog struct {
	mu     sync.Mutex
	values [][]float64
}

const maxCentres = 8

// centreLogInit guards the first use of an observer's centreLog.
var centreLogInit sync.Mutex

func (o *BankObserver) centreLog() *centreLog {
	centreLogInit.Lock()
	defer centreLogInit.Unlock()
	if o.centres == nil {
		o.centres = &centreLog{}
	}
	return o.centres
}

// note records values as a centre.
func (l *centreLog) note(values []float64) {
	l.mu.Lock()
	defer l.mu.Unlock()
	l.values = append(l.values, slices.Clone(values))
	if len(l.values) > maxCentres {
		l.values = l.values[len(l.values)-maxCentres:]
	}
}

// sidePoint reports whether values differ from a recorded centre in
// exactly one parameter.
func (l *centreLog) sidePoint(values []float64) bool {
	l.mu.Lock()
	defer l.mu.Unlock()
	for _, c := range l.values {
		if len(c) != len(values) {
			continue
		}
		differ := 0
		for j, v := range values {
			if v != c[j] {
				differ++
			}
		}
		if differ == 1 {
			return true
		}
	}
	return false
}

// SideOrder implements SideOrderer.
func (o *BankObserver) SideOrder() []int { return o.Depth }

// BankObserver gives derivatives, and ranks its side points.
var (
	_ SlopeObserver = (*BankObserver)(nil)
	_ SideOrderer   = (*BankObserver)(nil)
)

// Slopes implements SlopeObserver.
func (o *BankObserver) Slopes(j int) bool {
	_, weight := o.Weights[j]
	return weight || o.searchSlope(j)
}

// searchSlope reports whether parameter j sets search-efficiency nodes.
func (o *BankObserver) searchSlope(j int) bool {
	return j >= 0 && j < len(o.SearchParams) && o.SearchParams[j] && o.SearchGradient != nil
}

// Observe implements Observer.
func (o *BankObserver) Observe(ctx context.Context, values []float64) (*Templates, error) {
	t, _, err := o.ObserveSlopes(ctx, values, nil)
	return t, err
}

// ObserveSlopes implements SlopeObserver: every j in params must be a
// parameter Slopes accepts.
func (o *BankObserver) ObserveSlopes(ctx context.Context, values []float64, params []int) (*Templates, []Slope, error) {
	if o.Bank == nil || o.Apply == nil {
		return nil, nil, errors.New("compare: BankObserver needs a bank and an Apply function")
	}
	if o.Bank.NumAgeBins() != len(o.AgeEdgesGyr)-1 {
		return nil, nil, fmt.Errorf("compare: the bank has %d age bins, the age edges %d", o.Bank.NumAgeBins(), len(o.AgeEdgesGyr)-1)
	}
	grads := make([][]float64, len(params))
	var nodes []int // the nodes any parameter's efficiency gradient reaches
	var weights []model.WeightSlope
	weightAt := make([]int, len(params)) // where params[i]'s first derivative is in weights (−1: none)
	for i, j := range params {
		weightAt[i] = -1
		if w, ok := o.Weights[j]; ok {
			weightAt[i] = len(weights)
			weights = append(weights, model.WeightSlope{Param: w})
			if w != model.BinaryShare {
				weights = append(weights, model.WeightSlope{Param: w, Second: true})
			}
			continue
		}
		if !o.searchSlope(j) {
			return nil, nil, fmt.Errorf("compare: no derivative in nuisance parameter %d: it sets no search-efficiency node and only re-weights no star", j)
		}
		g, err := o.SearchGradient(values, j)
		if err != nil {
			return nil, nil, err
		}
		if len(g) != len(spots.RossbyNodesD) {
			return nil, nil, fmt.Errorf("compare: the search-efficiency gradient in nuisance parameter %d has %d entries; want one per node (%d)", j, len(g), len(spots.RossbyNodesD))
		}
		grads[i] = g
		for k, d := range g {
			if d != 0 && !slices.Contains(nodes, k) {
				nodes = append(nodes, k)
			}
		}
	}
	slices.Sort(nodes)
	p, err := o.Apply(values)
	if err != nil {
		return nil, nil, err
	}
	var weight func(int, float64) float64
	if o.Reweight != nil {
		if weight, err = o.Reweight(values); err != nil {
			return nil, nil, err
		}
	}
	g := model.Grid{ColorEdges: o.Space.ColorEdges, LogPeriodEdges: o.Space.LogPeriodEdges, HeightEdgesPc: o.Space.HeightEdgesPc,
		Dereddened: o.Space.Dereddened}
	side := false
	if recent := o.centreLog(); len(params) > 0 {
		recent.note(values)
	} else {
		side = recent.sidePoint(values)
	}
	counts, vars, slopes, err := o.Bank.ObserveSlopes(ctx, p, g, model.ObserveOptions{Workers: o.Workers, BaseFractionScale: o.BaseFractionScale, Weight: weight,
		BandSlopes: nodes, WeightSlopes: weights, NoNewMemos: side})
	if err != nil {
		return nil, nil, err
	}
	t := o.templates(counts, vars)
	ds := make([]Slope, len(params))
	for i, g := range grads {
		if at := weightAt[i]; at >= 0 {
			w := slopes[len(nodes)+at:]
			ds[i].First = o.templates(w[0], nil)
			if weights[at].Param != model.BinaryShare {
				ds[i].Second = o.templates(w[1], nil)
			}
			continue
		}
		d := make([]float64, len(counts))
		for q, k := range nodes {
			if g[k] != 0 {
				floats.AddScaled(d, g[k], slopes[q])
			}
		}
		ds[i].First = o.templates(d, nil)
	}
	return t, ds, nil
}

// templates wraps counts (and variances, or nil) made from the bank,
// with the mask applied.
func (o *BankObserver) templates(counts, vars []float64) *Templates {
	var drawn int64
	for _, d := range o.Bank.DrawnPerBin {
		drawn += d
	}
	t := &Templates{
		Space:       o.Space,
		AgeEdgesGyr: append([]float64(nil), o.AgeEdgesGyr...),
		Counts:      counts,
		Var:         vars,
		StarsDrawn:  drawn,
		DrawnPerBin: append([]int64(nil), o.Bank.DrawnPerBin...),
	}
	if o.Mask != nil {
		t.ZeroCells(o.Mask)
	}
	return t
}
