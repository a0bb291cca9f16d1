package disk

import "math/bits"

// aliasEntry is one column of Walker's alias table.
type aliasEntry struct {
	prob  float32 // probability of keeping column i rather than its alias
	alias uint32
}

// buildAlias sets e from the non-negative weights w with Vose's (1991)
// construction of Walker's alias table, so that pickAlias draws index i with
// probability w[i]/Σw in constant time. At least one weight must be
// positive.
func buildAlias(w []float64, e []aliasEntry) {
	n := len(w)
	sum := 0.0
	for _, x := range w {
		sum += x
	}
	scaled := make([]float64, n)
	small := make([]uint32, 0, n)
	large := make([]uint32, 0, n)
	for i, x := range w {
		scaled[i] = x * float64(n) / sum
		if scaled[i] < 1 {
			small = append(small, uint32(i))
		} else {
			large = append(large, uint32(i))
		}
	}
	for len(small) > 0 && len(large) > 0 {
		s := small[len(small)-1]
		small = small[:len(small)-1]
		l := large[len(large)-1]
		e[s].prob, e[s].alias = float32(scaled[s]), l
		scaled[l] -= 1 - scaled[s]
		if scaled[l] < 1 {
			large = large[:len(large)-1]
			small = append(small, l)
		}
	}
	// What is left has scaled weight 1 up to rounding.
	for _, i := range large {
		e[i].prob, e[i].alias = 1, i
	}
	for _, i := range small {
		e[i].prob, e[i].alias = 1, i
	}
}

// pickAlias draws an index from the alias table e with one 64-bit variate
// x: the high word of x·n is a uniform index (bias below n/2⁶⁴) and the top
// 24 bits of the low word a uniform coin for that column.
func pickAlias(x uint64, e []aliasEntry) int {
	hi, lo := bits.Mul64(x, uint64(len(e)))
	coin := float32(lo>>40) * (1.0 / (1 << 24))
	if coin < e[hi].prob {
		return int(hi)
	}
	return int(e[hi].alias)
}

// classEntry is a column of an alias table over height classes that also
// carries the density bound of the column's class and of its alias, so a
// draw reads one entry for both.
type classEntry struct {
	prob          float32
	alias         uint32
	env, envAlias float32
}

// classTable builds the alias table over classes of weights w, with the
// bounds env of each class.
func classTable(w []float64, env []bound) []classEntry {
	a := make([]aliasEntry, len(w))
	buildAlias(w, a)
	e := make([]classEntry, len(w))
	for i, x := range a {
		e[i] = classEntry{prob: x.prob, alias: x.alias, env: env[i].hi, envAlias: env[x.alias].hi}
	}
	return e
}

// pickClass draws a class from e as pickAlias does, and returns its bound.
func pickClass(x uint64, e []classEntry) (int, float64) {
	hi, lo := bits.Mul64(x, uint64(len(e)))
	coin := float32(lo>>40) * (1.0 / (1 << 24))
	c := &e[hi]
	if coin < c.prob {
		return int(hi), float64(c.env)
	}
	return int(c.alias), float64(c.envAlias)
}
