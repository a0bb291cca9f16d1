package othermodel

import "testing"

// BenchmarkGenerate measures one catalog of 3,000 stars with the defaults.
func BenchmarkGenerate(b *testing.B) {
	cfg := DefaultConfig()
	cfg.Stars = 3000
	for i := 0; b.Loop(); i++ {
		if _, _, err := Generate(cfg, uint64(i)); err != nil {
			b.Fatal(err)
		}
	}
}
