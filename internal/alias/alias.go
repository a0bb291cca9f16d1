// Package alias is Walker's alias method for drawing from a discrete
// distribution in constant time, built by Vose's (1991) construction: the
// project's one alias table, used for age bins and IMF intervals (model)
// and for the position sampler's blocks and height classes (disk).
package alias

import "math/bits"

// Build sets prob and alias (each len(w)) from the non-negative weights w,
// at least one of them positive, so that a draw keeps column i with
// probability prob[i] and takes alias[i] otherwise, which draws index i
// with probability w[i]/Σw.
func Build(w []float64, prob []float64, alias []uint32) {
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
		prob[s], alias[s] = scaled[s], l
		scaled[l] -= 1 - scaled[s]
		if scaled[l] < 1 {
			large = large[:len(large)-1]
			small = append(small, l)
		}
	}
	// What is left has scaled weight 1 up to rounding.
	for _, i := range large {
		prob[i], alias[i] = 1, i
	}
	for _, i := range small {
		prob[i], alias[i] = 1, i
	}
}

// Table is an alias table with float64 probabilities, drawn from one
// uniform number.
type Table struct {
	Prob  []float64
	Alias []uint32
}

// New builds a Table from weights as Build does.
func New(w []float64) Table {
	t := Table{Prob: make([]float64, len(w)), Alias: make([]uint32, len(w))}
	Build(w, t.Prob, t.Alias)
	return t
}

// Draw returns an index given a uniform u in [0, 1): the integer part of
// u·n picks the column, the fraction decides between it and its alias.
func (t Table) Draw(u float64) int {
	x := u * float64(len(t.Prob))
	i := int(x)
	if i >= len(t.Prob) {
		i = len(t.Prob) - 1
	}
	if x-float64(i) < t.Prob[i] {
		return i
	}
	return int(t.Alias[i])
}

// Entry is one column of a packed table: eight bytes, so that tables read
// at random in a hot loop stay small in cache.
type Entry struct {
	Prob  float32 // probability of keeping the column rather than its alias
	Alias uint32
}

// BuildPacked sets e (len(w)) from weights as Build does, with the
// probabilities rounded to float32.
func BuildPacked(w []float64, e []Entry) {
	prob := make([]float64, len(w))
	al := make([]uint32, len(w))
	Build(w, prob, al)
	for i := range e {
		e[i] = Entry{Prob: float32(prob[i]), Alias: al[i]}
	}
}

// Pick draws an index from the packed table e with one 64-bit variate x:
// the high word of x·n is a uniform index (bias below n/2⁶⁴) and the top
// 24 bits of the low word a uniform coin for that column.
func Pick(x uint64, e []Entry) int {
	hi, coin := Split(x, len(e))
	if coin < e[hi].Prob {
		return hi
	}
	return int(e[hi].Alias)
}

// Split turns one 64-bit variate into a uniform column index below n and a
// uniform float32 coin in [0, 1), as Pick uses them (for tables that carry
// more per column than an Entry).
func Split(x uint64, n int) (column int, coin float32) {
	hi, lo := bits.Mul64(x, uint64(n))
	return int(hi), float32(lo>>40) * (1.0 / (1 << 24))
}
