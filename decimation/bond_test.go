package decimation

import (
	"errors"
	"fmt"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/diff/fd"
	"gonum.org/v1/gonum/mat"

	"scalewalk/flow"
)

// Named tolerances of the bond-moving tests (besides tolExact, tolFD and
// tolAsym of helpers_test.go).
const (
	// tolPrinted4 compares with a value printed to four decimals.
	tolPrinted4 = 5e-5
	// tolTruncated4 compares with a value printed truncated (not rounded) to
	// four decimals: the true value lies within one unit of the last digit.
	tolTruncated4 = 1e-4
	// tolPrinted3 compares with a value printed to three decimals.
	tolPrinted3 = 5e-4
	// tolFixed: the finder's Newton stops at a relative residual of 1e-11
	// (flow.FindSettings.Tol) and the map's slope differs from 1 by O(1),
	// so its fixed point is good to about 1e-11.
	tolFixed = 1e-10
	// tolEigen: an eigenvalue from the analytic Jacobian at the found point
	// inherits the fixed point's error times dλ/dK = O(1–10).
	tolEigen = 1e-9
	// tolEigenB2: at b = 2 decimating first, dλ/dK = 2p sech²2K* ≤ 2p ≤ 8
	// times the fixed point's error of about 1e-11.
	tolEigenB2 = 1e-10
)

// TestIsingBondMoveClosedForm: Ising, d = 2, b = 2, bonds moved first.
// The recursion is x′ = 2x²/(1 + x⁴) with x = e^{−2K} (R. K. Pathria,
// P. D. Beale, Statistical Mechanics, ch. 14; L. P. Kadanoff, Ann. Phys.
// 100, 359, 1976): the engine's K′ must match it at every K, and its
// critical point must be the book's x* = 0.5437, λ = 1.6785 (printed
// truncated), ν = 1.338.
func TestIsingBondMoveClosedForm(t *testing.T) {
	bm := mustBond(t, NewIsing(), 2, 2, MoveFirst)
	for _, K := range []float64{0.05, 0.2, 0.3047, 0.5, 0.9, 1.6, -0.4} {
		x := math.Exp(-2 * K)
		xp := 2 * x * x / (1 + x*x*x*x) // Pathria and Beale, ch. 14
		want := -math.Log(xp) / 2
		got, _ := bmStep(bm, []float64{K, 0})
		if !near(got[0], want, tolExact) {
			t.Errorf("K=%g: K′ = %.16g, closed form %.16g", K, got[0], want)
		}
		if math.Abs(got[1]) > tolExact { // h = 0 stays 0: spin-flip symmetry (exact)
			t.Errorf("K=%g: h′ = %g at h = 0, want 0", K, got[1])
		}
	}
	crit := zeroFieldCritical(findPoints(t, bm))
	if crit == nil {
		t.Fatal("no zero-field critical point found")
	}
	if xs := math.Exp(-2 * crit.X[0]); math.Abs(xs-0.5437) > tolPrinted4 {
		t.Errorf("x* = %.6f, want 0.5437 (Pathria and Beale)", xs)
	}
	lt := blockLambdas(crit, flow.SymmetricBlock)
	if len(lt) != 1 || math.Abs(real(lt[0])-1.6785) > tolTruncated4 || imag(lt[0]) != 0 {
		t.Errorf("lambda_t = %v, want 1.6785 (Pathria and Beale, printed truncated)", lt)
	}
	if nu, ok := flow.Lookup(crit.Exponents, "nu"); !ok || math.Abs(nu-1.338) > tolPrinted3 {
		t.Errorf("nu = %.5f (found %v), want 1.338 (Pathria and Beale)", nu, ok)
	}
}

// TestIsingBondMoveFixedPointDigits goes beyond the printed digits: the
// zero-field Ising recursion in closed form (isingMK: tanh K′ = tanh^b K in
// series, Nelson and Fisher 1975; couplings add in parallel) is solved here
// by bisection, and its slope at K* taken analytically. The finder's K*
// and thermal eigenvalue must match, for d = 2, 3, b = 2, 3, both orders.
func TestIsingBondMoveFixedPointDigits(t *testing.T) {
	for _, d := range []float64{2, 3} {
		for _, b := range []int{2, 3} {
			for _, o := range bothOrders {
				name := fmt.Sprintf("d=%g b=%d %v", d, b, o)
				next := func(K float64) float64 { kp, _ := isingMK(K, d, b, o); return kp }
				ks := bisectFixed(next, 1e-3, 5)
				_, lam := isingMK(ks, d, b, o)
				crit := zeroFieldCritical(findPoints(t, mustBond(t, NewIsing(), d, b, o)))
				if crit == nil {
					t.Errorf("%s: no zero-field critical point found", name)
					continue
				}
				if !near(crit.X[0], ks, tolFixed) {
					t.Errorf("%s: K* = %.15g, closed form %.15g", name, crit.X[0], ks)
				}
				lt := blockLambdas(crit, flow.SymmetricBlock)
				if len(lt) != 1 || !nearComplex(lt[0], complex(lam, 0), tolEigen) {
					t.Errorf("%s: lambda_t = %v, closed form %.15g", name, lt, lam)
				}
			}
		}
	}
}

// TestIsingDecimateFirstFieldEigenvalues: b = 2, decimating first, Ising in
// a field. Derivation, in bond variables (bond weight e^{K st + (h_b/2)(s+t)},
// h_b = h/d the field the engine puts on a bond): summing the middle spin of
// two bonds in series gives K′ = ½ ln cosh 2K and
// h_b′ = h_b + ½ ln[cosh(2K + h_b)/cosh(2K − h_b)] (D. R. Nelson,
// M. E. Fisher, Ann. Phys. 91, 226, 1975, with the site field of the chain
// equal to h_b), so at h = 0: dK′/dK = tanh 2K and dh_b′/dh_b = 1 + tanh 2K.
// Moving p = b^{d−1} such bonds in parallel multiplies both couplings by p.
// The site field h = d h_b is a fixed multiple of h_b, so d cancels in
// dh′/dh. At h = 0 the spin-flip symmetry splits the Jacobian, hence
//
//	K* = p · ½ ln cosh 2K*,  λ_t = p tanh 2K*,  λ_h = p (1 + tanh 2K*) = b^{d−1} + λ_t.
func TestIsingDecimateFirstFieldEigenvalues(t *testing.T) {
	for _, d := range []float64{2, 3} {
		p := math.Pow(2, d-1)
		ks := bisectFixed(func(K float64) float64 { return p * math.Log(math.Cosh(2*K)) / 2 }, 1e-3, 5)
		lt := p * math.Tanh(2*ks)
		lh := p + lt
		crit := zeroFieldCritical(findPoints(t, mustBond(t, NewIsing(), d, 2, DecimateFirst)))
		if crit == nil {
			t.Errorf("d=%g: no zero-field critical point found", d)
			continue
		}
		if !near(crit.X[0], ks, tolFixed) {
			t.Errorf("d=%g: K* = %.15g, want %.15g", d, crit.X[0], ks)
		}
		gt := blockLambdas(crit, flow.SymmetricBlock)
		gh := blockLambdas(crit, flow.BreakingBlock)
		if len(gt) != 1 || !nearComplex(gt[0], complex(lt, 0), tolEigenB2) {
			t.Errorf("d=%g: lambda_t = %v, want p tanh 2K* = %.15g", d, gt, lt)
		}
		if len(gh) != 1 || !nearComplex(gh[0], complex(lh, 0), tolEigenB2) {
			t.Errorf("d=%g: lambda_h = %v, want b^(d-1) + lambda_t = %.15g", d, gh, lh)
		}
	}
}

// TestBondMoveConjugacy: with S the scaling of every (bond) coupling by
// p = b^{d−1} and D the decimation of b bonds in series followed by the
// projection (linear in ln W, and ln W linear in the couplings), moving
// first is D∘S and decimating first is S∘D, so (S∘D)∘S = S∘(D∘S): the
// decimate-first map is S (move-first) S^{−1}. Hence, exactly:
// Dec(p x) = p Move(x) at every x (one-body couplings included, since the
// site convention is linear), K*_dec = p K*_move, and the linearizations
// are similar, with the same eigenvalues. (Common practice; elementary.)
func TestBondMoveConjugacy(t *testing.T) {
	models := []struct {
		m  *Model
		xs [][]float64
	}{
		{NewIsing(), [][]float64{{0.3, 0.2}, {-0.5, 0.7}}},
		{mustPotts(t, 2.5), [][]float64{{0.4}, {1.1}}},
		{mustPotts(t, 3), [][]float64{{0.4, 0.3, -0.2}, {-0.3, -0.6, 0.5}}},
	}
	for _, tc := range models {
		for _, d := range []float64{1.5, 2, 2.58, 3} {
			for _, b := range []int{2, 3} {
				name := fmt.Sprintf("%s d=%g b=%d", tc.m.Name(), d, b)
				p := math.Pow(float64(b), d-1)
				mv := mustBond(t, tc.m, d, b, MoveFirst)
				dc := mustBond(t, tc.m, d, b, DecimateFirst)
				for _, x := range tc.xs {
					px := make([]float64, len(x))
					for i, v := range x {
						px[i] = p * v
					}
					xm, _ := bmStep(mv, x)
					xd, _ := bmStep(dc, px)
					for i := range x {
						if !near(xd[i], p*xm[i], tolExact) {
							t.Errorf("%s x=%v: Dec(p x)[%d] = %.15g, p Move(x)[%d] = %.15g", name, x, i, xd[i], i, p*xm[i])
						}
					}
				}
				cm := zeroFieldCritical(findPoints(t, mv))
				cd := zeroFieldCritical(findPoints(t, dc))
				if cm == nil || cd == nil {
					t.Errorf("%s: zero-field critical point missing (move-first %v, decimate-first %v)", name, cm != nil, cd != nil)
					continue
				}
				if !near(cd.X[0], p*cm.X[0], tolFixed) {
					t.Errorf("%s: K*_dec = %.15g, b^(d-1) K*_move = %.15g", name, cd.X[0], p*cm.X[0])
				}
				lm, ld := allLambdas(cm), allLambdas(cd)
				if len(lm) != len(ld) {
					t.Errorf("%s: %d eigenvalues moving first, %d decimating first", name, len(lm), len(ld))
					continue
				}
				for k := range lm {
					if !nearComplex(ld[k], lm[k], tolEigen) {
						t.Errorf("%s: eigenvalues %v (decimate-first) and %v (move-first) differ", name, ld, lm)
						break
					}
				}
			}
		}
	}
}

// TestPotts2IsIsingBondMove: at q = 2, K δ(σ, τ) = (K/2) s t + K/2 and
// h δ(σ, 1) = (h/2) s + h/2 with s = ±1 (F. Y. Wu, Rev. Mod. Phys. 54, 235,
// 1982), so Potts(K, h) is Ising(K/2, h/2) plus a constant K/2 per bond and
// h/2 per site. Every step therefore maps x_P = 2 x_I to x′_P = 2 x′_I, the
// critical K*_Potts = 2 K*_Ising, and ln Z/N differs by exactly d K/2 + h/2
// (d bonds per site): a constant e(x) per bond of the Potts weight makes the
// per-bond constant of a step differ by e(x) − e(x′)/b^d, which telescopes
// through Σ_n b^{−dn} g(x_n); κ is the same for both at q = 2.
func TestPotts2IsIsingBondMove(t *testing.T) {
	p2 := mustPotts(t, 2)
	for _, d := range []float64{2, 2.5} {
		for _, o := range bothOrders {
			name := fmt.Sprintf("d=%g b=2 %v", d, o)
			bp := mustBond(t, p2, d, 2, o)
			bi := mustBond(t, NewIsing(), d, 2, o)
			for _, x := range [][]float64{{0.5, 0.2}, {0.9, -0.4}, {-0.6, 0.3}} {
				xi := []float64{x[0] / 2, x[1] / 2}
				yp, _ := bmStep(bp, x)
				yi, _ := bmStep(bi, xi)
				for i := range yp {
					if !near(yp[i], 2*yi[i], tolExact) {
						t.Errorf("%s x=%v: Potts x′[%d] = %.15g, 2 × Ising = %.15g", name, x, i, yp[i], 2*yi[i])
					}
				}
				psiP, psiI := bondPsi(bp, x), bondPsi(bi, xi)
				if want := psiI + d*x[0]/2 + x[1]/2; !near(psiP, want, tolExact) {
					t.Errorf("%s x=%v: Potts ln Z/N = %.15g, Ising + dK/2 + h/2 = %.15g", name, x, psiP, want)
				}
			}
		}
	}
	for _, o := range bothOrders {
		cp := zeroFieldCritical(findPoints(t, mustBond(t, p2, 2, 2, o)))
		ci := zeroFieldCritical(findPoints(t, mustBond(t, NewIsing(), 2, 2, o)))
		if cp == nil || ci == nil {
			t.Fatalf("%v: zero-field critical point missing (potts %v, ising %v)", o, cp != nil, ci != nil)
		}
		if !near(cp.X[0], 2*ci.X[0], tolFixed) {
			t.Errorf("%v: K*_Potts(q=2) = %.15g, 2 K*_Ising = %.15g", o, cp.X[0], 2*ci.X[0])
		}
	}
}

// TestBondMoveD1IsChain: in d = 1 no bond is moved (p = b^0 = 1) and a site
// has two bond ends, so the site convention is the chain's: bond moving
// must reproduce the exact chain decimation, x′ and g, in both orders, for
// every model. A hierarchical lattice with one branch (m = 1) is the chain
// too (its g per bond is the chain's per site: one bond per site).
func TestBondMoveD1IsChain(t *testing.T) {
	cases := []struct {
		m  *Model
		xs [][]float64
	}{
		{NewIsing(), [][]float64{{0.7, 0.3}, {-1.1, 0.8}}},
		{mustPotts(t, 3), [][]float64{{0.9, 0.4, -0.3}, {-0.8, -0.6, 1.2}}},
		{mustPotts(t, 2.5), [][]float64{{0.6}, {1.9}}},
		{mustPotts(t, 2), [][]float64{{0.6, -0.4}}},
		{mustClock(t, 5), [][]float64{{0.5, 0.2, 0.3}, {-0.4, 0.3, -0.2}}},
		{NewSpin1(), [][]float64{{0.6, -0.4, 0.3, 0.2, -0.5}, {-0.9, 0.8, -0.7, -0.4, 0.6}}},
	}
	for _, tc := range cases {
		for _, b := range []int{2, 3} {
			ch := mustChain(t, tc.m, b)
			maps := map[string]*BondMove{
				"move-first":     mustBond(t, tc.m, 1, b, MoveFirst),
				"decimate-first": mustBond(t, tc.m, 1, b, DecimateFirst),
				"hierarchical":   mustHier(t, tc.m, b, 1),
			}
			for name, bm := range maps {
				for _, x := range tc.xs {
					want, wg := step(ch, x)
					got, gg := bmStep(bm, x)
					for i := range want {
						if !near(got[i], want[i], tolExact) {
							t.Errorf("%s b=%d %s x=%v: x′[%d] = %.15g, chain %.15g", tc.m.Name(), b, name, x, i, got[i], want[i])
						}
					}
					if !near(gg, wg, tolExact) {
						t.Errorf("%s b=%d %s x=%v: g = %.15g, chain %.15g", tc.m.Name(), b, name, x, gg, wg)
					}
				}
			}
		}
	}
}

// TestSpin1DeepCrystalFieldIsIsing: with D → −∞ the spin-1 states s = ±1
// dominate and the model is the Ising model with exchange J (Blume–Capel
// limit; common practice). With the ends s, t = ±1, J′ = [ln W′(1,1)
// + ln W′(−1,−1) − 2 ln W′(1,−1)]/4 exactly as the Ising K′, and a summed
// site takes s = 0 with relative weight e^{−p|D|/d} (moving first) or
// e^{−|D|/d} (decimating first, the crystal field of the 2 bond ends of an
// unmoved bond pair). D = −30 d (−60 in d = 2) makes that at most e^{−30}
// ≈ 1e-13, times p ≤ 4. Tolerance tolAsym: the neglected weight is below
// 1e-12, and the log entries, of order |D|, carry a rounding of about
// |D| ε ≈ 1e-14.
func TestSpin1DeepCrystalFieldIsIsing(t *testing.T) {
	for _, d := range []float64{2, 3} {
		D := -30 * d
		for _, o := range bothOrders {
			s1 := mustBond(t, NewSpin1(), d, 2, o)
			is := mustBond(t, NewIsing(), d, 2, o)
			for _, J := range []float64{0.1, 0.3, 0.6, 1.2} {
				ys, _ := bmStep(s1, []float64{J, 0, D, 0, 0})
				yi, _ := bmStep(is, []float64{J, 0})
				if !near(ys[0], yi[0], tolAsym) {
					t.Errorf("d=%g %v J=%g D=%g: spin-1 J′ = %.15g, Ising K′ = %.15g", d, o, J, D, ys[0], yi[0])
				}
			}
		}
	}
}

// TestBondMoveFreeEnergyLimits: at zero couplings every configuration has
// weight 1, so Z = q^N and ln Z/N = ln q exactly (counting); the engine's
// per-site g summed over the flow, Σ_n b^{−dn} g(x_n), must give it for
// every d, b and both orders, as the type's documentation promises. In d = 1
// the sum must be the exact chain free energy
// ψ = K + ln[cosh h + √(sinh²h + e^{−4K})], ln(2 cosh K) at h = 0
// (R. J. Baxter, Exactly Solved Models in Statistical Mechanics, 1982, ch. 2).
// On a hierarchical lattice g is per bond and Σ_n (bm)^{−n} g(0) must be
// ln q times the sites per bond, m(b−1)/(bm−1) (counted in
// TestHierarchicalSiteCount).
func TestBondMoveFreeEnergyLimits(t *testing.T) {
	type qModel struct {
		m *Model
		q float64
	}
	models := []qModel{{NewIsing(), 2}, {mustPotts(t, 3), 3}, {mustPotts(t, 2.5), 2.5}}
	for _, o := range bothOrders {
		t.Run("zero-couplings/"+o.String(), func(t *testing.T) {
			for _, tc := range models {
				zero := make([]float64, len(tc.m.Couplings()))
				for _, d := range []float64{1, 1.5, 2, 3} {
					for _, b := range []int{2, 3} {
						if got := bondPsi(mustBond(t, tc.m, d, b, o), zero); !near(got, math.Log(tc.q), tolExact) {
							t.Errorf("%s d=%g b=%d %v: ln Z/N at zero couplings = %.15g, want ln q = %.15g", tc.m.Name(), d, b, o, got, math.Log(tc.q))
						}
					}
				}
			}
		})
	}
	t.Run("zero-couplings/hierarchical", func(t *testing.T) {
		for _, tc := range models {
			zero := make([]float64, len(tc.m.Couplings()))
			for _, hb := range [][2]int{{2, 2}, {3, 2}, {2, 3}} {
				b, mm := hb[0], hb[1]
				_, g := bmStep(mustHier(t, tc.m, b, mm), zero)
				bmf := float64(b * mm)
				got := g * bmf / (bmf - 1) // Σ_n (bm)^{−n} g(0), the flow staying at 0
				want := math.Log(tc.q) * float64(mm*(b-1)) / (bmf - 1)
				if !near(got, want, tolExact) {
					t.Errorf("%s hierarchical b=%d m=%d: ln Z per bond at zero couplings = %.15g, want ln q × sites/bond = %.15g", tc.m.Name(), b, mm, got, want)
				}
			}
		}
	})
	t.Run("chain-d1", func(t *testing.T) {
		for _, b := range []int{2, 3} {
			for _, o := range bothOrders {
				bm := mustBond(t, NewIsing(), 1, b, o)
				for _, x := range [][]float64{{0.4, 0}, {1.3, 0}, {-0.7, 0}, {0.5, 0.3}, {0.9, -1.1}} {
					K, h := x[0], x[1]
					want := K + math.Log(math.Cosh(h)+math.Sqrt(math.Sinh(h)*math.Sinh(h)+math.Exp(-4*K))) // Baxter 1982
					if h == 0 {
						want = math.Log(2 * math.Cosh(K)) // Baxter 1982
					}
					if got := bondPsi(bm, x); !near(got, want, tolExact) {
						t.Errorf("d=1 b=%d %v x=%v: ln Z/N = %.15g, Baxter %.15g", b, o, x, got, want)
					}
				}
			}
		}
	})
}

// TestBondMoveJacobianFD: the analytic Jacobian of bond moving (both
// orders, d = 2 and 2.5) and of hierarchical lattices agrees with gonum's
// central differences, for every model (tolFD: finite differences).
func TestBondMoveJacobianFD(t *testing.T) {
	cases := []struct {
		m *Model
		x []float64
	}{
		{NewIsing(), []float64{0.4, 0.3}},
		{mustPotts(t, 3), []float64{0.5, 0.2, -0.3}},
		{mustPotts(t, 2.5), []float64{0.6}},
		{mustPotts(t, 2), []float64{0.5, -0.3}},
		{mustClock(t, 5), []float64{0.4, 0.1, 0.2}},
		{NewSpin1(), []float64{0.4, -0.2, 0.3, 0.2, -0.3}},
	}
	for _, tc := range cases {
		maps := map[string]*BondMove{}
		for _, d := range []float64{2, 2.5} {
			for _, b := range []int{2, 3} {
				for _, o := range bothOrders {
					maps[fmt.Sprintf("bondmove d=%g b=%d %v", d, b, o)] = mustBond(t, tc.m, d, b, o)
				}
			}
		}
		for _, hb := range [][2]int{{2, 2}, {3, 2}, {2, 3}} {
			maps[fmt.Sprintf("hierarchical b=%d m=%d", hb[0], hb[1])] = mustHier(t, tc.m, hb[0], hb[1])
		}
		for name, bm := range maps {
			n := len(tc.x)
			var an mat.Dense
			bm.JacobianTo(&an, tc.x)
			num := mat.NewDense(n, n, nil)
			fd.Jacobian(num, func(y, x []float64) { bm.Step(y, x) }, tc.x, &fd.JacobianSettings{Formula: fd.Central})
			for i := 0; i < n; i++ {
				for j := 0; j < n; j++ {
					if a, f := an.At(i, j), num.At(i, j); !near(a, f, tolFD) {
						t.Errorf("%s %s: J[%d][%d] analytic %.10g, central differences %.10g", tc.m.Name(), name, i, j, a, f)
					}
				}
			}
		}
	}
}

// TestBondMoveBadParams: bad dimensions, lengths and branch counts are
// errors of the ErrParam class, never panics; the registry's bondmove order
// names its choices.
func TestBondMoveBadParams(t *testing.T) {
	noPanic := func(what string, f func() error) error {
		var err error
		func() {
			defer func() {
				if r := recover(); r != nil {
					t.Errorf("%s panicked: %v", what, r)
				}
			}()
			err = f()
		}()
		return err
	}
	for _, d := range []float64{0.5, 0, -2, math.NaN(), math.Inf(1), math.Inf(-1)} {
		err := noPanic(fmt.Sprintf("NewBondMove(d=%g)", d), func() error { _, err := NewBondMove(NewIsing(), d, 2, MoveFirst); return err })
		if !errors.Is(err, ErrParam) {
			t.Errorf("NewBondMove(ising, d=%g) = %v, want an ErrParam", d, err)
		}
	}
	for _, b := range []int{1, 0, -3} {
		for _, o := range bothOrders {
			err := noPanic(fmt.Sprintf("NewBondMove(b=%d)", b), func() error { _, err := NewBondMove(NewIsing(), 2, b, o); return err })
			if !errors.Is(err, ErrParam) {
				t.Errorf("NewBondMove(ising, b=%d, %v) = %v, want an ErrParam", b, o, err)
			}
		}
	}
	for _, bm := range [][2]int{{2, 0}, {2, -1}, {1, 2}, {0, 0}} {
		err := noPanic(fmt.Sprintf("NewHierarchical(b=%d, m=%d)", bm[0], bm[1]), func() error { _, err := NewHierarchical(NewIsing(), bm[0], bm[1]); return err })
		if !errors.Is(err, ErrParam) {
			t.Errorf("NewHierarchical(ising, b=%d, m=%d) = %v, want an ErrParam", bm[0], bm[1], err)
		}
	}

	spec, err := LookupScheme("bondmove")
	if err != nil {
		t.Fatalf(`LookupScheme("bondmove"): %v`, err)
	}
	_, err = Resolve(spec.Params, map[string]string{"order": "sideways"})
	if !errors.Is(err, ErrParam) || !strings.Contains(err.Error(), "move-first") || !strings.Contains(err.Error(), "decimate-first") {
		t.Errorf("Resolve(bondmove, order=sideways) = %v, want an ErrParam naming move-first and decimate-first", err)
	}
	for _, set := range []map[string]string{{"d": "0.5"}, {"b": "1"}, {"d": "nan"}} {
		if _, err := Resolve(spec.Params, set); !errors.Is(err, ErrParam) {
			t.Errorf("Resolve(bondmove, %v) = %v, want an ErrParam", set, err)
		}
	}
	for _, tc := range []struct {
		order string
		want  Order
	}{{"", MoveFirst}, {"decimate-first", DecimateFirst}} {
		set := map[string]string{"d": "3", "b": "3"}
		if tc.order != "" {
			set["order"] = tc.order
		}
		v, err := Resolve(spec.Params, set)
		if err != nil {
			t.Fatalf("Resolve(bondmove, %v): %v", set, err)
		}
		m, err := spec.Build(NewIsing(), v)
		if err != nil {
			t.Fatalf("Build(bondmove, %v): %v", set, err)
		}
		bm, ok := m.(*BondMove)
		if !ok {
			t.Fatalf("Build(bondmove, %v) = %T, want *BondMove", set, m)
		}
		if bm.Order() != tc.want || bm.Dimension() != 3 || bm.Rescale() != 3 || bm.Parallel() != 9 || bm.Hierarchical() {
			t.Errorf("Build(bondmove, %v): order %v d %g b %g p %g hierarchical %v, want %v d=3 b=3 p=9 (b^(d-1)) not hierarchical", set, bm.Order(), bm.Dimension(), bm.Rescale(), bm.Parallel(), bm.Hierarchical(), tc.want)
		}
	}
	hs, err := LookupScheme("hierarchical")
	if err != nil {
		t.Fatalf(`LookupScheme("hierarchical"): %v`, err)
	}
	if _, err := Resolve(hs.Params, map[string]string{"m": "0"}); !errors.Is(err, ErrParam) {
		t.Errorf("Resolve(hierarchical, m=0) = %v, want an ErrParam", err)
	}
}

// TestBondMovePottsCaution: bond moving predicts a continuous transition for
// every q, but the two-dimensional Potts model is first order for q > 4 and
// continuous for q ≤ 4 (R. J. Baxter, J. Phys. C 6, L445, 1973), so in d = 2
// q = 5 (and real q = 4.5) must carry a caution, q = 3 and q = 4 none.
func TestBondMovePottsCaution(t *testing.T) {
	for _, tc := range []struct {
		q    float64
		want bool
	}{{5, true}, {4.5, true}, {3, false}, {4, false}} {
		for _, o := range bothOrders {
			c := mustBond(t, mustPotts(t, tc.q), 2, 2, o).Cautions()
			if got := len(c) > 0; got != tc.want {
				t.Errorf("potts q=%g d=2 %v: cautions %q, want some: %v", tc.q, o, c, tc.want)
			}
			for _, s := range c {
				if !strings.Contains(s, "first-order") {
					t.Errorf("potts q=%g: caution %q does not say first-order", tc.q, s)
				}
			}
		}
	}
}
