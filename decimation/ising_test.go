package decimation

import (
	"math"
	"testing"
)

// TestIsingChainZeroField checks tanh K′ = (tanh K)^b and h′ = 0.
// Source: D. R. Nelson, M. E. Fisher, Ann. Phys. 91, 226 (1975); also any
// textbook treatment of decimation of the Ising chain.
func TestIsingChainZeroField(t *testing.T) {
	m := NewIsing()
	for _, b := range []int{2, 3, 5} {
		c := mustChain(t, m, b)
		for _, K := range []float64{0.05, 0.3, 0.8, 1.7, -0.4, -1.3} {
			xp, _ := step(c, []float64{K, 0})
			want := math.Atanh(math.Pow(math.Tanh(K), float64(b)))
			if !near(xp[0], want, tolExact) || math.Abs(xp[1]) > tolExact {
				t.Errorf("b=%d K=%g: got (K′, h′) = (%.15g, %.3g), want (%.15g, 0) [Nelson–Fisher 1975]", b, K, xp[0], xp[1], want)
			}
		}
	}
}

// nelsonFisher2 is the b = 2 decimation of the Ising chain in a field:
// K′ = ¼ ln[cosh(2K+h) cosh(2K−h)/cosh² h], h′ = h + ½ ln[cosh(2K+h)/cosh(2K−h)].
// Source: D. R. Nelson, M. E. Fisher, Ann. Phys. 91, 226 (1975).
func nelsonFisher2(K, h float64) (float64, float64) {
	cp, cm, ch := math.Cosh(2*K+h), math.Cosh(2*K-h), math.Cosh(h)
	return 0.25 * math.Log(cp*cm/(ch*ch)), h + 0.5*math.Log(cp/cm)
}

// TestIsingChainField checks b = 2 against the closed form of Nelson and
// Fisher (1975), and b = 4 against that closed form applied twice (the
// decimations by 2 and 2 compose to the decimation by 4: W^4 = (W²)²).
func TestIsingChainField(t *testing.T) {
	m := NewIsing()
	c2, c4 := mustChain(t, m, 2), mustChain(t, m, 4)
	for _, K := range []float64{0.3, 1.2, -0.7} {
		for _, h := range []float64{0.1, -0.5, 2} {
			wk, wh := nelsonFisher2(K, h)
			xp, _ := step(c2, []float64{K, h})
			if !near(xp[0], wk, tolExact) || !near(xp[1], wh, tolExact) {
				t.Errorf("b=2 K=%g h=%g: got (%.15g, %.15g), want (%.15g, %.15g) [Nelson–Fisher 1975]", K, h, xp[0], xp[1], wk, wh)
			}
			wk, wh = nelsonFisher2(wk, wh)
			xp, _ = step(c4, []float64{K, h})
			if !near(xp[0], wk, tolExact) || !near(xp[1], wh, tolExact) {
				t.Errorf("b=4 K=%g h=%g: got (%.15g, %.15g), want (%.15g, %.15g) [Nelson–Fisher 1975, twice]", K, h, xp[0], xp[1], wk, wh)
			}
		}
	}
}

// TestIsingFreeEnergy checks Σ_n b^{-n} g(x_n) against the largest
// transfer-matrix eigenvalue, ln λ₊ = K + ln[cosh h + sqrt(sinh² h + e^{-4K})].
// Source: R. J. Baxter, Exactly Solved Models in Statistical Mechanics
// (1982), ch. 2.
func TestIsingFreeEnergy(t *testing.T) {
	m := NewIsing()
	for _, b := range []int{2, 3} {
		c := mustChain(t, m, b)
		for _, K := range []float64{0.2, 1.1, -0.6, -1.5} {
			for _, h := range []float64{0, 0.3, -1.2} {
				sh := math.Sinh(h)
				want := K + math.Log(math.Cosh(h)+math.Sqrt(sh*sh+math.Exp(-4*K)))
				got := freeEnergy(c, []float64{K, h})
				if math.Abs(got-want) > tolExact*math.Abs(want) {
					t.Errorf("b=%d K=%g h=%g: ln Z/N = %.15g, want %.15g [Baxter 1982, ch. 2]", b, K, h, got, want)
				}
			}
		}
	}
}

// TestLargeCouplings checks that couplings of order 10³ give finite
// results, and compares them with the asymptotics of the closed forms.
//
// h = 0: K′ = ½ ln cosh 2K (tanh K′ = tanh² K, Nelson–Fisher 1975)
// = ½[2K + ln((1 + e^{-4K})/2)] = K − ½ ln 2 + O(e^{-4K}).
// In a field, ln cosh y = |y| − ln 2 + O(e^{-2|y|}) in the b = 2 formula
// gives, for K = h = 1000: K′ = ¼[(3000 − ln 2) + (1000 − ln 2) − 2(1000 − ln 2)]
// = 500 and h′ = 1000 + ½[(3000 − ln 2) − (1000 − ln 2)] = 2000.
func TestLargeCouplings(t *testing.T) {
	c := mustChain(t, NewIsing(), 2)
	for _, K := range []float64{1e3, -1e3} {
		xp, g := step(c, []float64{K, 0})
		want := math.Abs(K) - math.Ln2/2 // K′ > 0 for either sign: (tanh K)² > 0
		if !finite(g) || math.Abs(xp[0]-want) > tolAsym || math.Abs(xp[1]) > tolAsym {
			t.Errorf("K=%g: got K′=%.15g h′=%g g=%g, want K′=%.15g [asymptotics of Nelson–Fisher 1975]", K, xp[0], xp[1], g, want)
		}
	}
	xp, g := step(c, []float64{1e3, 1e3})
	if !finite(g) || math.Abs(xp[0]-500) > tolAsym || math.Abs(xp[1]-2000) > tolAsym {
		t.Errorf("K=h=1000: got (%.15g, %.15g) g=%g, want (500, 2000) [asymptotics of Nelson–Fisher 1975]", xp[0], xp[1], g)
	}
	// Other models: only finiteness (no closed form is claimed here).
	big := []struct {
		m *Model
		x []float64
	}{
		{mustPotts(t, 3), []float64{1e3, -1e3, 1e3}},
		{mustPotts(t, 2.5), []float64{1e3}},
		{mustClock(t, 6), []float64{1e3, -1e3, 1e3, 1e3}},
		{NewSpin1(), []float64{1e3, -1e3, 1e3, 1e3, -1e3}},
		{NewSpin1(), []float64{-1e3, 1e3, -1e3, -1e3, 1e3}},
	}
	for _, tc := range big {
		for _, b := range []int{2, 3} {
			xp, g := step(mustChain(t, tc.m, b), tc.x)
			ok := finite(g)
			for _, v := range xp {
				ok = ok && finite(v)
			}
			if !ok {
				t.Errorf("%s b=%d x=%v: not finite: x′=%v g=%g", tc.m.Name(), b, tc.x, xp, g)
			}
		}
	}
}
