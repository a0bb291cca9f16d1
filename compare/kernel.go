package compare

import "gonum.org/v1/gonum/floats"

// Loops of the Barlow–Beeston-lite likelihood, on templates stored
// age-bin-major (cols[j*nb+i] = T_ji) so that every pass is a long unit-
// stride axpy or dot product, which gonum runs in SSE2 assembly; on the
// reference machine that is about twice as fast as a four-row blocked Go
// loop over the bins-major layout.

// mixMoments sets m[i] = Σ_j T_ji w_j and v[i] = Σ_j T_ji w2_j.
func mixMoments(cols []float64, w, w2, m, v []float64) {
	nb := len(m)
	for i := range m {
		m[i], v[i] = 0, 0
	}
	for j, wj := range w {
		c := cols[j*nb : (j+1)*nb]
		if wj != 0 {
			floats.AddScaled(m, wj, c)
			floats.AddScaled(v, w2[j], c)
		}
	}
}

// mixGradient sets g[j] = Σ_i T_ji a[i] and h[j] = Σ_i T_ji b[i].
func mixGradient(cols []float64, a, b, g, h []float64) {
	nb := len(a)
	for j := range g {
		c := cols[j*nb : (j+1)*nb]
		g[j] = floats.Dot(c, a)
		h[j] = floats.Dot(c, b)
	}
}
