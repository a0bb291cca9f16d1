package compare

import (
	"context"
	"errors"
	"fmt"

	"spinpop/model"
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
}

// Observe implements Observer.
func (o *BankObserver) Observe(ctx context.Context, values []float64) (*Templates, error) {
	if o.Bank == nil || o.Apply == nil {
		return nil, errors.New("compare: BankObserver needs a bank and an Apply function")
	}
	if o.Bank.NumAgeBins() != len(o.AgeEdgesGyr)-1 {
		return nil, fmt.Errorf("compare: the bank has %d age bins, the age edges %d", o.Bank.NumAgeBins(), len(o.AgeEdgesGyr)-1)
	}
	p, err := o.Apply(values)
	if err != nil {
		return nil, err
	}
	var weight func(int, float64) float64
	if o.Reweight != nil {
		if weight, err = o.Reweight(values); err != nil {
			return nil, err
		}
	}
	g := model.Grid{ColorEdges: o.Space.ColorEdges, LogPeriodEdges: o.Space.LogPeriodEdges, HeightEdgesPc: o.Space.HeightEdgesPc}
	counts, vars, err := o.Bank.Observe(ctx, p, g, model.ObserveOptions{Workers: o.Workers, BaseFractionScale: o.BaseFractionScale, Weight: weight})
	if err != nil {
		return nil, err
	}
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
	return t, nil
}
