package decimation

import (
	"math"

	"gonum.org/v1/gonum/mat"
)

// TransferRatio returns λ₂/λ₁, the ratio of the second largest to the
// largest (in magnitude) eigenvalue of the bond Boltzmann matrix W(x)
// (symmetric, site terms split half onto each end), signed: the
// correlation length of a chain with this bond is −1/ln|λ₂/λ₁|. In the
// Potts algebra the eigenvalues are e^K + q − 1 and e^K − 1.
func (m *Model) TransferRatio(x []float64) float64 {
	lw := make([]float64, m.size)
	m.Edge(lw, x)
	if m.algebra {
		e := math.Exp(lw[0] - lw[1]) // w_same/w_diff = e^K
		return (e - 1) / (e + m.q - 1)
	}
	n := m.n
	w := mat.NewSymDense(n, nil)
	shift := lw[0]
	for _, v := range lw {
		shift = math.Max(shift, v)
	}
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			w.SetSym(i, j, math.Exp(0.5*(lw[i*n+j]+lw[j*n+i])-shift))
		}
	}
	var es mat.EigenSym
	if !es.Factorize(w, false) {
		return math.NaN()
	}
	vals := es.Values(nil)
	// Sort by magnitude, largest first.
	best, second := 0.0, 0.0
	for _, v := range vals {
		a := math.Abs(v)
		if a > math.Abs(best) {
			second, best = best, v
		} else if a > math.Abs(second) {
			second = v
		}
	}
	if best == 0 {
		return math.NaN()
	}
	return second / best
}

// XiHat is the correlation length, in lattice spacings, of a chain whose
// bonds carry x: −1/ln|λ₂/λ₁| (exact for the chain, where it is used once
// the ratio is below 1/2; for bond moving the leading form, used once the
// ratio is below 1/100, near the disordered sink).
func (c *Chain) XiHat(x []float64) (float64, bool) { return xiHat(c.m.TransferRatio(x), 0.5) }

// XiHat, for bond moving, uses the bond in the site convention converted
// to the bond's coefficients.
func (bm *BondMove) XiHat(x []float64) (float64, bool) {
	xb := make([]float64, len(x))
	bm.toBond(xb, x)
	// Only once the flow is close to the disordered sink does the chain's
	// form describe the renormalized bond.
	return xiHat(bm.m.TransferRatio(xb), 0.01)
}

func xiHat(r, limit float64) (float64, bool) {
	if math.IsNaN(r) || math.Abs(r) >= limit {
		return math.NaN(), false
	}
	if r == 0 {
		return 0, true
	}
	return -1 / math.Log(math.Abs(r)), true
}
