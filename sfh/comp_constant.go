package sfh

// Constant forms stars at a flat rate over [0, MaxAgeGyr].
type Constant struct{}

func (Constant) kind() string                                            { return "Constant" }
func (Constant) role() Role                                              { return Smooth }
func (Constant) strength() string                                        { return "" }
func (Constant) check(string, float64) error                             { return nil }
func (Constant) newShape(maxAge float64) shape                           { return &uniformShape{maxAge: maxAge} }
func (Constant) params(func(string, float64, float64, float64), float64) {}
func (c Constant) with(string, float64) (Component, bool)                { return c, false }
func (c Constant) clone() Component                                      { return c }

// String describes the component in a few words.
func (Constant) String() string { return "constant rate" }
