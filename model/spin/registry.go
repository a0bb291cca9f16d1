package spin

import (
	"fmt"
	"math"

	"spinpop/internal/registry"
)

// A spin-down law makes itself known in one place: a LawSpec handed to
// Register, usually from an init function beside the law. The scenario
// format learns from the registry which names spin.law takes, which option
// tables ([spin.<table>]) exist, their keys with units, defaults and
// ranges; the scenario builder calls New; the tools take the label, the
// caveats and the variants the laws comparison shows from here. Nothing
// else in the project names a law.

// LawSpec describes one spin-down law.
type LawSpec struct {
	Name  string // the value of spin.law, e.g. "barnes2007"
	Label string // for tables and plots, e.g. "Barnes (2007)"
	// Tables are the law's option tables, [spin.<Name>] in a scenario.
	// Every scenario carries every registered table, defaults filled in,
	// so a scenario's canonical form lists them whichever law it uses.
	Tables []OptionTable
	// Borrows names option tables of other laws that this law reads too
	// (the empirical laws read the torque law's [spin.stall]): a scenario
	// using this law may switch them on and fit their keys.
	Borrows []string
	// New builds the law from its options (Options.Float("torque",
	// "solar_period_d"), ...) and what the scenario knows of the stars.
	New func(o Options, env Env) (Law, error)
	// Caveats are the warnings a run using the law reports; youngestGyr is
	// the youngest age the run holds.
	Caveats func(youngestGyr float64) []string
	// Variants are the prescriptions the laws comparison shows for this
	// law: each a label and the switchable tables it turns on (all others
	// off). None means one variant, the law plain, under its Label.
	Variants []Variant
}

// Variant is one prescription of a law for the laws comparison.
type Variant struct {
	Label string
	On    []string // switchable option tables turned on
}

// OptionTable is one table of options, [spin.<Name>].
type OptionTable struct {
	Name string
	Doc  string
	// Switch, if set, names a bool key ("enabled") that turns the table's
	// feature on; a switched-on table of a law other than the scenario's
	// is an error. With SkipWhenOff, the other keys are not checked while
	// the switch is off.
	Switch      string
	SkipWhenOff bool
	Keys        []Key
	// Retired lists keys the table no longer reads, each with what to
	// write instead; a scenario that still sets one gets that as its error.
	Retired map[string]string
}

// Key is one option: its name carries its unit (solar_period_d).
type Key struct {
	Name string
	Doc  string
	// Default is a float64, bool or string; its type is the key's type.
	Default any
	// Number range: Min and Max (±Inf for none), each inclusive unless
	// MinOpen / MaxOpen. Why explains the range in messages.
	Min, Max         float64
	MinOpen, MaxOpen bool
	Why              string
	// Above names a key of the same table this one must exceed; AboveWhy
	// says what the two make ("empty period range").
	Above, AboveWhy string
	// OneOf lists the values a string key takes.
	OneOf []string
	// Memory marks a default recalled from a source, not read from it.
	Memory string
}

// Options are the values of a scenario's law option tables.
type Options interface {
	Float(table, key string) float64
	Bool(table, key string) bool
	String(table, key string) string
}

// Env is what the scenario knows of the stars besides the law's options.
type Env struct {
	Turnover   TurnoverTime
	TeffOfMass func(massMsun float64) float64 // from the relation table
}

var laws = registry.New(func(s LawSpec) string { return s.Name })

// Register adds a law. Its name, and the names of its option tables, must
// be new.
func Register(spec LawSpec) error {
	if spec.New == nil {
		return fmt.Errorf("spin: law %q needs a constructor", spec.Name)
	}
	for _, t := range spec.Tables {
		for _, k := range t.Keys {
			switch k.Default.(type) {
			case float64, bool, string:
			default:
				return fmt.Errorf("spin: law %q: key %s.%s: default %v is not a float64, bool or string", spec.Name, t.Name, k.Name, k.Default)
			}
		}
	}
	err := laws.Add(spec, func(existing []LawSpec) error {
		for _, s := range existing {
			for _, t := range s.Tables {
				for _, u := range spec.Tables {
					if t.Name == u.Name {
						return fmt.Errorf("option table %q belongs to law %q", u.Name, s.Name)
					}
				}
			}
		}
		return nil
	})
	if err != nil {
		return fmt.Errorf("spin: law %q: %w", spec.Name, err)
	}
	return nil
}

// MustRegister is Register for init functions: a clash is a programming
// error.
func MustRegister(spec LawSpec) {
	if err := Register(spec); err != nil {
		panic(err)
	}
}

// ReadTables returns the option tables the law reads: its own, then the
// ones it borrows from other laws.
func (s LawSpec) ReadTables() []OptionTable {
	out := append([]OptionTable(nil), s.Tables...)
	all, _ := OptionTables()
	for _, name := range s.Borrows {
		for _, t := range all {
			if t.Name == name {
				out = append(out, t)
			}
		}
	}
	return out
}

// Laws returns the registered laws in registration order.
func Laws() []LawSpec { return laws.All() }

// Lookup returns the law registered under name.
func Lookup(name string) (LawSpec, bool) { return laws.Lookup(name) }

// Names lists the registered law names in registration order.
func Names() []string { return laws.Names() }

// OptionTables returns every registered law's option tables, with the law
// that owns each.
func OptionTables() (tables []OptionTable, owners []string) {
	for _, s := range Laws() {
		for _, t := range s.Tables {
			tables = append(tables, t)
			owners = append(owners, s.Name)
		}
	}
	return tables, owners
}

// Defaults are the default options of every registered law, as Options.
type Defaults struct{}

func (Defaults) value(table, key string) any {
	tables, _ := OptionTables()
	for _, t := range tables {
		if t.Name != table {
			continue
		}
		for _, k := range t.Keys {
			if k.Name == key {
				return k.Default
			}
		}
	}
	return nil
}

// Float returns the default of a number key (NaN if there is none).
func (d Defaults) Float(table, key string) float64 {
	if v, ok := d.value(table, key).(float64); ok {
		return v
	}
	return math.NaN()
}

// Bool returns the default of a bool key.
func (d Defaults) Bool(table, key string) bool { v, _ := d.value(table, key).(bool); return v }

// String returns the default of a string key.
func (d Defaults) String(table, key string) string { v, _ := d.value(table, key).(string); return v }

// ByName returns the law with the given name, built with its default
// options and the Wright et al. (2018) turnover time (mass only).
func ByName(name string) (Law, error) {
	spec, ok := Lookup(name)
	if !ok {
		return nil, fmt.Errorf("spin: unknown spin-down law %q; use one of %q", name, Names())
	}
	return spec.New(Defaults{}, Env{Turnover: Wright2018})
}

// Typical is implemented by laws whose period depends on a random initial
// state: TypicalPeriod is the period of the star that starts from the
// median initial state, the one a gyrochrone follows.
type Typical interface {
	TypicalPeriod(s Star) (periodD float64, ok bool)
}
