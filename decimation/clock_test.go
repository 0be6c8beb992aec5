package decimation

import "testing"

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
