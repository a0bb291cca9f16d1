package compare

import "spinpop/compare/stats"

// Matrix–vector passes of the Barlow–Beeston-lite likelihood over the
// bins-major templates (rows[i*k+j] = T_ji), in the kernels the Poisson
// mixture uses (stats.MatVec, stats.MatTVecAdd: AVX2 assembly where the
// processor has it), each a single pass over the block.

// mixMoments sets m[i] = Σ_j T_ji w_j and v[i] = Σ_j T_ji w2_j.
func mixMoments(rows []float64, k int, w, w2, m, v []float64) {
	nb := len(m)
	stats.MatVec(rows, nb, k, w, m)
	stats.MatVec(rows, nb, k, w2, v)
}

// mixGradient sets g[j] = Σ_i T_ji a[i] and h[j] = Σ_i T_ji b[i].
func mixGradient(rows []float64, k int, a, b, g, h []float64) {
	nb := len(a)
	clear(g)
	clear(h)
	stats.MatTVecAdd(rows, nb, k, a, g)
	stats.MatTVecAdd(rows, nb, k, b, h)
}
