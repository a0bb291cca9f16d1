package sfh

import (
	"math"
	"sort"

	"gonum.org/v1/gonum/integrate/quad"
)

// glOrder is the Gauss–Legendre order used on each quadrature panel. Ten
// nodes integrate polynomials of degree 19 exactly; panels are split until a
// panel and its two halves agree, so a partial panel is as well resolved.
const glOrder = 10

// glNodes and glWeights are the rule on [−1, 1], from gonum.
var glNodes, glWeights = func() ([]float64, []float64) {
	x := make([]float64, glOrder)
	w := make([]float64, glOrder)
	quad.Legendre{}.FixedLocations(x, w, -1, 1)
	return x, w
}()

// gaussLegendre integrates f and age·f over [a, b].
func gaussLegendre(f func(float64) float64, a, b float64) (m0, m1 float64) {
	mid, half := 0.5*(a+b), 0.5*(b-a)
	for i, x := range glNodes {
		t := mid + half*x
		v := glWeights[i] * f(t)
		m0 += v
		m1 += v * t
	}
	return m0 * half, m1 * half
}

// panelTable integrates a density that has no closed form (a history with
// dips) on a fixed set of panels. cum0 and cum1 hold ∫ f and ∫ age·f from 0
// to each boundary, so any range costs two partial panels.
type panelTable struct {
	f    func(float64) float64
	x    []float64 // panel boundaries, x[0] = 0, x[n] = MaxAgeGyr
	cum0 []float64
	cum1 []float64
}

// Tolerances of the adaptive split: absolute (the total is about 1) plus a
// relative part, a depth cap and a smallest panel as a fraction of the range.
const (
	panelAbsTol   = 1e-15
	panelRelTol   = 1e-13
	panelMaxDepth = 48
	panelMinFrac  = 1e-13
)

// newPanelTable splits [0, maxAge] at the given break ages and then halves
// each panel until ten-point Gauss–Legendre on it agrees with the sum over its
// halves.
func newPanelTable(f func(float64) float64, maxAge float64, breaks []float64) *panelTable {
	pts := []float64{0, maxAge}
	for _, b := range breaks {
		if b > 0 && b < maxAge {
			pts = append(pts, b)
		}
	}
	sort.Float64s(pts)
	minWidth := panelMinFrac * maxAge
	uniq := pts[:1]
	for _, p := range pts[1:] {
		if p-uniq[len(uniq)-1] > minWidth {
			uniq = append(uniq, p)
		}
	}
	uniq[len(uniq)-1] = maxAge

	t := &panelTable{f: f, x: []float64{0}, cum0: []float64{0}, cum1: []float64{0}}
	type job struct {
		a, b   float64
		m0, m1 float64
		depth  int
	}
	var stack []job
	for i := len(uniq) - 1; i > 0; i-- {
		a, b := uniq[i-1], uniq[i]
		m0, m1 := gaussLegendre(f, a, b)
		stack = append(stack, job{a, b, m0, m1, 0})
	}
	// Depth-first, left half last on the stack so panels come out in order.
	for len(stack) > 0 {
		j := stack[len(stack)-1]
		stack = stack[:len(stack)-1]
		mid := 0.5 * (j.a + j.b)
		l0, l1 := gaussLegendre(f, j.a, mid)
		r0, r1 := gaussLegendre(f, mid, j.b)
		fine := l0 + r0
		if math.Abs(fine-j.m0) <= panelAbsTol+panelRelTol*math.Abs(fine) ||
			j.depth >= panelMaxDepth || j.b-j.a <= 2*minWidth {
			t.push(mid, l0, l1)
			t.push(j.b, r0, r1)
			continue
		}
		stack = append(stack, job{mid, j.b, r0, r1, j.depth + 1}, job{j.a, mid, l0, l1, j.depth + 1})
	}
	t.x[len(t.x)-1] = maxAge
	return t
}

func (t *panelTable) push(b, m0, m1 float64) {
	n := len(t.x) - 1
	t.x = append(t.x, b)
	t.cum0 = append(t.cum0, t.cum0[n]+m0)
	t.cum1 = append(t.cum1, t.cum1[n]+m1)
}

// total returns ∫ f over the whole range.
func (t *panelTable) total() float64 { return t.cum0[len(t.cum0)-1] }

// upTo returns ∫_0^age f and ∫_0^age age·f for age in [0, MaxAgeGyr].
func (t *panelTable) upTo(age float64) (m0, m1 float64) {
	n := len(t.x) - 1
	if age <= 0 {
		return 0, 0
	}
	if age >= t.x[n] {
		return t.cum0[n], t.cum1[n]
	}
	lo, hi := 0, n // invariant: x[lo] ≤ age < x[hi]
	for hi-lo > 1 {
		mid := (lo + hi) / 2
		if t.x[mid] <= age {
			lo = mid
		} else {
			hi = mid
		}
	}
	m0, m1 = t.cum0[lo], t.cum1[lo]
	if age > t.x[lo] {
		p0, p1 := gaussLegendre(t.f, t.x[lo], age)
		m0 += p0
		m1 += p1
	}
	return m0, m1
}

// between returns ∫ f and ∫ age·f over [lo, hi] with 0 ≤ lo ≤ hi ≤ MaxAgeGyr.
func (t *panelTable) between(lo, hi float64) (m0, m1 float64) {
	a0, a1 := t.upTo(lo)
	b0, b1 := t.upTo(hi)
	return math.Max(b0-a0, 0), b1 - a1
}
