package stats

import (
	"math"
)

// The distribution of the one-sample two-sided Kolmogorov–Smirnov statistic
// D_n, computed with the algorithm selection of Simard & L'Ecuyer (2011,
// J. Stat. Softw. 39(11)) exactly as scipy 1.10 implements it in
// scipy/stats/_ksstats.py (read from that source): Ruben–Gambino closed
// forms at the extremes, the Durbin matrix algorithm in the form of
// Marsaglia, Tsang & Wang (2003) and the Pomeranz (1974) recursion for
// small n, the Pelz–Good (1976) asymptotic series for large n and small d,
// and twice the one-sided Smirnov tail where the two one-sided events
// cannot overlap or their overlap is negligible. The two-sample test uses
// it the way scipy's ks_2samp(method='asymp') does.

const (
	ksE128  = 128
	ksMinLn = -708
)

var (
	ksEP128 = math.Ldexp(1, ksE128)
	ksEM128 = math.Ldexp(1, -ksE128)
)

// KolmogorovSF returns P(D_n ≥ d) for the two-sided one-sample
// Kolmogorov–Smirnov statistic of a sample of size n (scipy's
// kstwo.sf(d, n)). It returns NaN for n < 1.
func KolmogorovSF(n int, d float64) float64 {
	if n < 1 || math.IsNaN(d) {
		return math.NaN()
	}
	if d >= 1 {
		return 0
	}
	if d <= 0 {
		return 1
	}
	fn := float64(n)
	t := fn * d
	if t <= 1 { // Ruben–Gambino: 1/2n ≤ d ≤ 1/n
		if t <= 0.5 {
			return 1
		}
		var prob float64
		if n <= 140 {
			prob = 1
			for i := 1; i <= n; i++ {
				prob *= float64(i) * (1.0 / fn) * (2*t - 1)
			}
		} else {
			prob = math.Exp(lnFactorialOverPowN(fn) + fn*math.Log(2*t-1))
		}
		return clip01(1 - prob)
	}
	if t >= fn-1 { // Ruben–Gambino
		return clip01(2 * math.Pow(1-d, fn))
	}
	if d >= 0.5 { // exact: the one-sided events are disjoint
		return clip01(2 * SmirnovSF(n, d))
	}
	nxSq := t * d
	if n <= 140 {
		switch {
		case nxSq <= 0.754693:
			return clip01(1 - kolmogorovCDFDurbin(n, d))
		case nxSq <= 4:
			return clip01(1 - kolmogorovCDFPomeranz(n, d))
		}
		return clip01(2 * SmirnovSF(n, d))
	}
	if nxSq >= 370 {
		return 0
	}
	if nxSq >= 2.2 {
		return clip01(2 * SmirnovSF(n, d))
	}
	var cdf float64
	if n <= 100000 && fn*math.Pow(d, 1.5) <= 1.4 {
		cdf = kolmogorovCDFDurbin(n, d)
	} else {
		cdf = kolmogorovCDFPelzGood(n, d)
	}
	return clip01(1 - cdf)
}

func clip01(p float64) float64 { return math.Min(math.Max(p, 0), 1) }

// stirlingCoeffs are B_2j/(2j(2j−1)) for j = 8 … 1, as in scipy's
// _ksstats.py (lifted there from _loggamma.pxd).
var stirlingCoeffs = [...]float64{-2.955065359477124183e-2, 6.4102564102564102564e-3,
	-1.9175269175269175269e-3, 8.4175084175084175084e-4,
	-5.952380952380952381e-4, 7.9365079365079365079e-4,
	-2.7777777777777777778e-3, 8.3333333333333333333e-2}

// lnFactorialOverPowN returns ln(n!/nⁿ) by Stirling's series with the
// n ln n term removed up front, avoiding the cancellation of ln n! − n ln n.
func lnFactorialOverPowN(n float64) float64 {
	rn := 1 / n
	x := rn / n
	var p float64
	for _, c := range stirlingCoeffs {
		p = p*x + c
	}
	return math.Log(n)/2 - n + math.Log(2*math.Pi)/2 + rn*p
}

// kolmogorovCDFDurbin returns P(D_n ≤ d) by the Durbin (1968) matrix
// algorithm as arranged by Marsaglia, Tsang & Wang (2003): with
// d = (k − h)/n, the k-th diagonal element of Hⁿ times n!/nⁿ, with binary
// powering and explicit exponent bookkeeping against overflow.
func kolmogorovCDFDurbin(n int, d float64) float64 {
	if d >= 1 {
		return 1
	}
	fn := float64(n)
	nd := fn * d
	if nd <= 0.5 {
		return 0
	}
	k := int(math.Ceil(nd))
	h := float64(k) - nd
	m := 2*k - 1

	v := make([]float64, m)
	w := make([]float64, m)
	fac := 1.0
	for j := 1; j <= m; j++ {
		v[j-1] = 1 - math.Pow(h, float64(j))
		w[j-1] = fac
		fac /= float64(j)
		v[j-1] *= fac
	}
	tt := math.Pow(math.Max(2*h-1, 0), float64(m)) - 2*math.Pow(h, float64(m))
	v[m-1] = (1 + tt) * fac

	H := make([]float64, m*m)
	for i := 1; i < m; i++ {
		for r := i - 1; r < m; r++ {
			H[r*m+i] = w[r-(i-1)]
		}
	}
	for r := 0; r < m; r++ {
		H[r*m] = v[r]
	}
	for c := 0; c < m; c++ {
		H[(m-1)*m+c] = v[m-1-c]
	}

	pw := make([]float64, m*m) // running power, starts as the identity
	for i := 0; i < m; i++ {
		pw[i*m+i] = 1
	}
	tmp := make([]float64, m*m)
	expnt, hExpnt := 0, 0
	for nn := n; nn > 0; nn /= 2 {
		if nn%2 == 1 {
			matMul(tmp, pw, H, m)
			pw, tmp = tmp, pw
			expnt += hExpnt
		}
		matMul(tmp, H, H, m)
		H, tmp = tmp, H
		hExpnt *= 2
		if math.Abs(H[(k-1)*m+k-1]) > ksEP128 {
			for i := range H {
				H[i] /= ksEP128
			}
			hExpnt += ksE128
		}
	}
	p := pw[(k-1)*m+k-1]
	for i := 1; i <= n; i++ {
		p = float64(i) * p / fn
		if math.Abs(p) < ksEM128 {
			p *= ksEP128
			expnt -= ksE128
		}
	}
	if expnt != 0 {
		p = math.Ldexp(p, expnt)
	}
	return clip01(p)
}

// matMul sets dst = a·b for m×m row-major matrices.
func matMul(dst, a, b []float64, m int) {
	for i := 0; i < m; i++ {
		row := dst[i*m : i*m+m]
		for j := range row {
			row[j] = 0
		}
		for l := 0; l < m; l++ {
			ail := a[i*m+l]
			if ail == 0 {
				continue
			}
			bl := b[l*m : l*m+m]
			for j := range row {
				row[j] += ail * bl[j]
			}
		}
	}
}

// pomeranzJ1J2 returns the range of non-zero entries of row i of the
// Pomeranz recursion (scipy's _pomeranz_compute_j1j2).
func pomeranzJ1J2(i, n, ll, ceilf, roundf int) (int, int) {
	var j1, j2 int
	if i == 0 {
		j1, j2 = -ll-ceilf-1, ll+ceilf-1
	} else {
		ip1div2, ip1mod2 := (i+1)/2, (i+1)%2
		if ip1mod2 == 0 {
			if ip1div2 == n+1 {
				j1, j2 = n-ll-ceilf-1, n+ll+ceilf-1
			} else {
				j1, j2 = ip1div2-1-ll-roundf-1, ip1div2+ll-1+ceilf-1
			}
		} else {
			j1, j2 = ip1div2-1-ll-1, ip1div2+ll+roundf-1
		}
	}
	return max(j1+2, 0), min(j2, n)
}

// kolmogorovCDFPomeranz returns P(D_n ≤ d) by the Pomeranz (1974)
// recursion: each row is the previous one convolved with (unnormalised)
// Poisson probabilities; n! times the last entry is the answer.
func kolmogorovCDFPomeranz(n int, x float64) float64 {
	fn := float64(n)
	t := fn * x
	ll := int(math.Floor(t))
	f := t - float64(ll)
	g := math.Min(f, 1-f)
	ceilf, roundf := 0, 0
	if f > 0 {
		ceilf = 1
	}
	if f > 0.5 {
		roundf = 1
	}
	npwrs := 2 * (ll + 1)
	gpower := make([]float64, npwrs)
	twogpower := make([]float64, npwrs)
	onem2gpower := make([]float64, npwrs)
	gpower[0], twogpower[0], onem2gpower[0] = 1, 1, 1
	gOverN, twoGOverN, oneMinus2GOverN := g/fn, 2*g/fn, (1-2*g)/fn
	for m := 1; m < npwrs; m++ {
		gpower[m] = gpower[m-1] * gOverN / float64(m)
		twogpower[m] = twogpower[m-1] * twoGOverN / float64(m)
		onem2gpower[m] = onem2gpower[m-1] * oneMinus2GOverN / float64(m)
	}
	V0 := make([]float64, npwrs)
	V1 := make([]float64, npwrs)
	V1[0] = 1
	V0s, V1s := 0, 0
	expnt := 0
	j1, j2 := pomeranzJ1J2(0, n, ll, ceilf, roundf)
	for i := 1; i < 2*n+2; i++ {
		k1 := j1
		V0, V1 = V1, V0
		V0s, V1s = V1s, V0s
		for j := range V1 {
			V1[j] = 0
		}
		j1, j2 = pomeranzJ1J2(i, n, ll, ceilf, roundf)
		var pwrs []float64
		switch {
		case i == 1 || i == 2*n+1:
			pwrs = gpower
		case i%2 == 1:
			pwrs = twogpower
		default:
			pwrs = onem2gpower
		}
		ln2 := j2 - k1 + 1
		if ln2 <= 0 {
			continue
		}
		lo := k1 - V0s
		a := V0[lo:min(lo+ln2, len(V0))]
		b := pwrs[:ln2]
		convStart := j1 - k1
		convLen := j2 - j1 + 1
		vmax := 0.0
		for c := 0; c < convLen; c++ {
			idx := convStart + c // index into the full convolution of a and b
			var s float64
			for q := max(0, idx-len(b)+1); q <= idx && q < len(a); q++ {
				s += a[q] * b[idx-q]
			}
			V1[c] = s
			vmax = math.Max(vmax, s)
		}
		if vmax > 0 && vmax < ksEM128 {
			for j := range V1 {
				V1[j] *= ksEP128
			}
			expnt -= ksE128
		}
		V1s = V0s + j1 - k1
	}
	ans := V1[n-V1s]
	for m := 1; m <= n; m++ {
		if math.Abs(ans) > ksEP128 {
			ans *= ksEM128
			expnt += ksE128
		}
		ans *= float64(m)
	}
	if expnt != 0 {
		ans = math.Ldexp(ans, expnt)
	}
	return clip01(ans)
}

// kolmogorovCDFPelzGood returns the Pelz–Good (1976) approximation to
// P(D_n ≤ x): the Li-Chien/Korolyuk expansion K0 + K1/√n + K2/n + K3/n^1.5
// rewritten with Jacobi theta identities so that it converges for small z.
func kolmogorovCDFPelzGood(n int, x float64) float64 {
	if x <= 0 {
		return 0
	}
	if x >= 1 {
		return 1
	}
	const (
		pi2 = math.Pi * math.Pi
		pi4 = pi2 * pi2
		pi6 = pi4 * pi2
	)
	fn := float64(n)
	z := math.Sqrt(fn) * x
	z2, z3, z4, z6 := z*z, z*z*z, z*z*z*z, math.Pow(z, 6)
	qlog := -pi2 / 8 / z2
	if qlog < ksMinLn {
		return 0
	}
	q := math.Exp(qlog)

	k1a := -z2
	k1b := pi2 / 4
	k2a := 6*z6 + 2*z4
	k2b := (2*z4 - 5*z2) * pi2 / 4
	k2c := pi4 * (1 - 2*z2) / 16
	k3d := pi6 * (5 - 30*z2) / 64
	k3c := pi4 * (-60*z2 + 212*z4) / 16
	k3b := pi2 * (135*z4 - 96*z6) / 4
	k3a := -30*z6 - 90*math.Pow(z, 8)

	var K [4]float64
	maxk := int(math.Ceil(16 * z / math.Pi))
	for k := maxk; k > 0; k-- {
		m := float64(2*k - 1)
		m2, m4, m6 := m*m, m*m*m*m, math.Pow(m, 6)
		qpower := math.Pow(q, float64(8*k))
		coeffs := [4]float64{1,
			k1a + k1b*m2,
			k2a + k2b*m2 + k2c*m4,
			k3a + k3b*m2 + k3c*m4 + k3d*m6}
		for i := range K {
			K[i] = K[i]*qpower + coeffs[i]
		}
	}
	sqrt2pi := math.Sqrt(2 * math.Pi)
	den := [4]float64{z, 6 * z4, 72 * math.Pow(z, 7), 6480 * math.Pow(z, 10)}
	for i := range K {
		K[i] = K[i] * q * sqrt2pi / den[i]
	}

	q = math.Exp(-pi2 / 2 / z2)
	sqrt3z := math.Sqrt(3) * z
	var k2extra, k3extra float64
	for k := maxk; k > 0; k-- {
		fk := float64(k)
		ks2 := fk * fk
		qp := math.Pow(q, ks2)
		kspi := math.Pi * fk
		k2extra += ks2 * qp
		k3extra += (sqrt3z + kspi) * (sqrt3z - kspi) * ks2 * qp
	}
	K[2] += k2extra * pi2 * sqrt2pi / (-36 * z3)
	K[3] += k3extra * pi2 * sqrt2pi / (216 * z6)
	var sum float64
	for i := range K {
		sum += K[i] / math.Pow(fn, float64(i)/2)
	}
	return sum
}

// SmirnovSF returns P(D_n⁺ ≥ d), the upper tail of the one-sided
// Kolmogorov–Smirnov statistic of a sample of size n (scipy.special.smirnov),
// by the exact finite sum of Birnbaum & Tingey (1951):
//
//	P(D_n⁺ ≥ d) = d Σ_{j=0}^{⌊n(1−d)⌋} C(n,j) (1 − d − j/n)^(n−j) (d + j/n)^(j−1).
//
// All terms are positive; they are summed in log space, so the result
// keeps its relative precision far into the tail.
func SmirnovSF(n int, d float64) float64 {
	if n < 1 || math.IsNaN(d) {
		return math.NaN()
	}
	if d <= 0 {
		return 1
	}
	if d >= 1 {
		return 0
	}
	fn := float64(n)
	jmax := int(math.Floor(fn * (1 - d)))
	lnN1, _ := math.Lgamma(fn + 1)
	// First pass for the largest log-term, second for the scaled sum.
	maxLog := math.Inf(-1)
	term := func(j int) float64 {
		fj := float64(j)
		a := (1 - d) - fj/fn
		if a <= 0 {
			return math.Inf(-1)
		}
		lj1, _ := math.Lgamma(fj + 1)
		lnj1, _ := math.Lgamma(fn - fj + 1)
		return lnN1 - lj1 - lnj1 + (fn-fj)*math.Log(a) + (fj-1)*math.Log(d+fj/fn)
	}
	for j := 0; j <= jmax; j++ {
		maxLog = math.Max(maxLog, term(j))
	}
	var s float64
	for j := 0; j <= jmax; j++ {
		s += math.Exp(term(j) - maxLog)
	}
	return clip01(d * s * math.Exp(maxLog))
}
