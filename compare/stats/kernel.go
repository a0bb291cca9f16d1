package stats

// Matrix–vector kernels for the template-mixture hot path.
//
// A block of m bins × k templates, bins-major with row stride k, needs two
// products per evaluation: μ = A·w and g += Aᵀ·c. On amd64 processors with
// AVX and FMA they run in assembly (kernel_amd64.s) four rows at a time,
// four templates per instruction; elsewhere, or when built with the noasm
// tag, the Go loops below do the same arithmetic. The assembly exists
// because gonum's SSE2 Dgemv pair alone costs ~37 µs for 2,500 × 40 on the
// reference machine, most of the 50 µs budget (see BenchmarkMixture*).

// useAsmKernels selects the assembly kernels; kernel_amd64.go sets it from
// the CPU's feature flags, and tests flip it to exercise both paths.
var useAsmKernels = haveAVXFMA()

// MatVec sets y[i] = Σ_j a[i*k+j]·x[j] for i < m: the product of an m × k
// bins-major block with a vector, in the kernel the mixture likelihood
// uses. It panics if a slice is too short.
func MatVec(a []float64, m, k int, x, y []float64) {
	if m < 0 || k < 0 || len(a) < m*k || len(x) < k || len(y) < m {
		panic("stats: MatVec slice too short for the block")
	}
	if k == 0 {
		clear(y[:m])
		return
	}
	gemvRows(a, m, k, x, y)
}

// MatTVecAdd adds Σ_i c[i]·a[i*k+j] to g[j] for j < k: the transposed
// product of an m × k bins-major block. It panics if a slice is too short.
func MatTVecAdd(a []float64, m, k int, c, g []float64) {
	if m < 0 || k < 0 || len(a) < m*k || len(c) < m || len(g) < k {
		panic("stats: MatTVecAdd slice too short for the block")
	}
	if k == 0 {
		return
	}
	gemvRowsTAdd(a, m, k, c, g)
}

// LogTerms returns Σ_{n_i≠0} n_i ln μ_i and Σ_i μ_i, and overwrites μ_i
// with n_i/μ_i − sub (−sub where n_i = 0): the per-bin part of a Poisson
// log-likelihood and of its gradient in one pass, in assembly where the
// processor allows. ok is false when a non-empty bin has a μ_i that pass
// declines (zero, negative, subnormal, infinite or NaN); μ is then partly
// overwritten, and the caller must decide those bins itself.
func LogTerms(mu, n []float64, sub float64) (sumNLog, sumMu float64, ok bool) {
	if len(n) < len(mu) {
		panic("stats: LogTerms has fewer counts than expectations")
	}
	return blockTerms(mu, n, sub)
}

// gemvRows sets y[i] = Σ_j a[i*k+j]·x[j] for i < m.
func gemvRows(a []float64, m, k int, x, y []float64) {
	if m == 0 {
		return
	}
	_ = a[m*k-1]
	_ = x[k-1]
	_ = y[m-1]
	if useAsmKernels {
		gemvRowsAsm(&a[0], m, k, &x[0], &y[0])
		return
	}
	gemvRowsGo(a, m, k, x, y)
}

// gemvRowsTAdd adds Σ_i c[i]·a[i*k+j] to g[j] for j < k.
func gemvRowsTAdd(a []float64, m, k int, c, g []float64) {
	if m == 0 {
		return
	}
	_ = a[m*k-1]
	_ = c[m-1]
	_ = g[k-1]
	if useAsmKernels {
		gemvRowsTAddAsm(&a[0], m, k, &c[0], &g[0])
		return
	}
	gemvRowsTAddGo(a, m, k, c, g)
}

func gemvRowsGo(a []float64, m, k int, x, y []float64) {
	x = x[:k]
	i := 0
	for ; i+4 <= m; i += 4 {
		r0 := a[i*k : i*k+k]
		r1 := a[(i+1)*k : (i+1)*k+k]
		r2 := a[(i+2)*k : (i+2)*k+k]
		r3 := a[(i+3)*k : (i+3)*k+k]
		var s0, s1, s2, s3 float64
		for j, xj := range x {
			s0 += r0[j] * xj
			s1 += r1[j] * xj
			s2 += r2[j] * xj
			s3 += r3[j] * xj
		}
		y[i], y[i+1], y[i+2], y[i+3] = s0, s1, s2, s3
	}
	for ; i < m; i++ {
		r := a[i*k : i*k+k]
		var s float64
		for j, xj := range x {
			s += r[j] * xj
		}
		y[i] = s
	}
}

func gemvRowsTAddGo(a []float64, m, k int, c, g []float64) {
	g = g[:k]
	i := 0
	for ; i+4 <= m; i += 4 {
		r0 := a[i*k : i*k+k]
		r1 := a[(i+1)*k : (i+1)*k+k]
		r2 := a[(i+2)*k : (i+2)*k+k]
		r3 := a[(i+3)*k : (i+3)*k+k]
		c0, c1, c2, c3 := c[i], c[i+1], c[i+2], c[i+3]
		for j := range g {
			g[j] += c0*r0[j] + c1*r1[j] + c2*r2[j] + c3*r3[j]
		}
	}
	for ; i < m; i++ {
		r := a[i*k : i*k+k]
		ci := c[i]
		for j := range g {
			g[j] += ci * r[j]
		}
	}
}
