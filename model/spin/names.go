package spin

import (
	"fmt"
	"strings"
)

// torqueName is the scenario name of TorqueLaw.
const torqueName = "torque"

// Names lists the law names ByName accepts.
func Names() []string {
	return []string{
		Barnes2007().LawName,
		MamajekHillenbrand2008().LawName,
		Angus2015().LawName,
		torqueName,
	}
}

// ByName returns the law with the given scenario name. The empirical laws
// come with their published coefficients; "torque" is the torque law with
// DefaultTorqueOptions — build it with NewTorqueLaw to change its options.
func ByName(name string) (Law, error) {
	switch strings.ToLower(name) {
	case "barnes2007":
		return Barnes2007(), nil
	case "mamajek2008":
		return MamajekHillenbrand2008(), nil
	case "angus2015":
		return Angus2015(), nil
	case torqueName:
		return NewTorqueLaw(DefaultTorqueOptions())
	}
	return nil, fmt.Errorf("spin: unknown spin-down law %q; use one of %q", name, Names())
}
