package pipeline

import (
	"fmt"

	"spinpop/assemble"
	"spinpop/model"
	"spinpop/model/spin"
	"spinpop/scenarios"
)

// Gyrochrones tabulates the scenario's spin-down law at each age on points
// colors spread over the catalog's B−V cut, and returns the law too (its
// name heads a table).
func Gyrochrones(s *scenarios.Scenario, source string, agesGyr []float64, points int) ([]model.Gyrochrone, spin.Law, error) {
	rel, err := model.DwarfSequence()
	if err != nil {
		return nil, nil, err
	}
	law, err := assemble.Law(s, rel)
	if err != nil {
		return nil, nil, InputError{fmt.Errorf("%s: %w", source, err)}
	}
	return model.Gyrochrones(law, rel, agesGyr, s.Cuts.BVMin, s.Cuts.BVMax, points), law, nil
}
