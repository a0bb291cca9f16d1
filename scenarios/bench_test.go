package scenarios

import "testing"

// Loading happens once per run, so these are for regressions, not a hot path.

func BenchmarkLoadExample(b *testing.B) {
	for b.Loop() {
		if _, err := LoadExample("burst"); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkHash(b *testing.B) {
	r, err := LoadExample("burst")
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	for b.Loop() {
		_ = r.Hash()
	}
}

// BenchmarkLoadFit loads the example with [data] and [compare]: free
// parameters checked against the history, the data path resolved.
func BenchmarkLoadFit(b *testing.B) {
	for b.Loop() {
		if _, err := LoadExample("fit"); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkBaseResolve is the cost of one sweep point: the fit example's
// chain, read once, resolved with two overrides and hashed.
func BenchmarkBaseResolve(b *testing.B) {
	base, err := ReadBase("example:fit")
	if err != nil {
		b.Fatal(err)
	}
	o, err := ParseOverrides([]string{"spin.law=torque", "history.burst.age_gyr=0.8"})
	if err != nil {
		b.Fatal(err)
	}
	for b.Loop() {
		r, err := base.Resolve(o...)
		if err != nil {
			b.Fatal(err)
		}
		_ = r.Hash()
	}
}
