package decimation

import (
	"math"
	"testing"
)

// TestClock2IsIsing: at q = 2, cos(π(n − n′)) = s s′ and cos(π n) = s with
// s = ±1 (exact identity), so the 2-state clock chain in a field follows the
// Ising b = 2 recursion of D. R. Nelson, M. E. Fisher, Ann. Phys. 91, 226
// (1975).
func TestClock2IsIsing(t *testing.T) {
	c := mustChain(t, mustClock(t, 2), 2)
	for _, x := range [][]float64{{0.4, 0.9}, {-1.3, 0.2}, {2, -0.7}} {
		xp, _ := step(c, x)
		wk, wh := nelsonFisher2(x[0], x[1])
		if !near(xp[0], wk, tolExact) || !near(xp[1], wh, tolExact) {
			t.Errorf("x=%v: got %v, want (%.15g, %.15g) [Nelson–Fisher 1975]", x, xp, wk, wh)
		}
	}
}

// TestClock4IsTwoIsing: for q = 4, with σ = cos θ + sin θ and
// τ = cos θ − sin θ (θ = πn/2), cos(θ_i − θ_j) = (σ_iσ_j + τ_iτ_j)/2 and
// cos θ = (σ + τ)/2 (exact identities), so the 4-state clock model with
// K2 = 0 is two independent Ising models with K/2 and h/2. Its chain
// decimation in a field therefore closes (K2′ = 0, closure 0) with
// K′ = 2 K′_I(K/2, h/2) and h′ = 2 h′_I(K/2, h/2), the b = 2 recursion of
// D. R. Nelson, M. E. Fisher, Ann. Phys. 91, 226 (1975).
func TestClock4IsTwoIsing(t *testing.T) {
	c := mustChain(t, mustClock(t, 4), 2)
	for _, x := range [][]float64{{0.8, 0, 0.6}, {-1.1, 0, 0.3}, {2.2, 0, -1.4}} {
		xp, _ := step(c, x)
		wk, wh := nelsonFisher2(x[0]/2, x[2]/2)
		if !near(xp[0], 2*wk, tolExact) || !near(xp[1], 0, tolExact) || !near(xp[2], 2*wh, tolExact) {
			t.Errorf("x=%v: got %v, want (%.15g, 0, %.15g) [two Ising chains, Nelson–Fisher 1975]", x, xp, 2*wk, 2*wh)
		}
		if r := c.Closure(x); r > tolExact {
			t.Errorf("x=%v: closure error %g, want 0 (the two Ising chains close)", x, r)
		}
	}
}

// TestClock3IsPotts3: for q = 3, cos(2π(n − n′)/3) is 1 for n = n′ and −1/2
// otherwise, so K cos(...) = (3K/2) δ(n, n′) − K/2 (exact identity): the
// 3-state clock chain is the 3-state Potts chain with K_P = 3K/2, whose
// exact recursion is (e^{K_P′} − 1)/(e^{K_P′} + 2) = r^b,
// r = (e^{K_P} − 1)/(e^{K_P} + 2) (transfer-matrix eigenvalues; F. Y. Wu,
// Rev. Mod. Phys. 54, 235, 1982).
func TestClock3IsPotts3(t *testing.T) {
	for _, b := range []int{2, 3} {
		c := mustChain(t, mustClock(t, 3), b)
		for _, k := range []float64{0.3, 1.1, -0.6, 2.5} {
			xp, _ := step(c, []float64{k, 0})
			kp := 1.5 * k
			r := math.Pow((math.Exp(kp)-1)/(math.Exp(kp)+2), float64(b))
			kpNew := math.Log((1 + 2*r) / (1 - r)) // solves (e^K − 1)/(e^K + 2) = r
			if !near(xp[0], kpNew/1.5, tolExact) || !near(xp[1], 0, tolExact) {
				t.Errorf("b=%d K=%g: got %v, want (%.15g, 0) [Potts q=3 closed form, Wu 1982]", b, k, xp, kpNew/1.5)
			}
		}
	}
}
