package decimation

import (
	"context"
	"math"
	"testing"

	"scalewalk/flow"
)

// nvlPhi returns φ = ⟨s_i⟩ and ψ = ⟨s_i s_k⟩ (i ≠ k) inside a three-spin
// triangular block at block spin +1 under the majority rule, by hand: the
// block's allowed configurations are +++ (weight e^{3K}) and the three of
// ++− (weight e^{−K} each). φ is the closed form of Niemeijer and van
// Leeuwen, PRL 31, 1411 (1973) and Physica 71, 17 (1974) (from memory,
// confirmed by the enumeration written out here).
func nvlPhi(K float64) (phi, psi float64) {
	a, b := math.Exp(3*K), math.Exp(-K)
	return (a + b) / (a + 3*b), (a - b) / (a + 3*b)
}

func newTriCumulant(t *testing.T, order int, keep ...string) *Cumulant {
	t.Helper()
	bl, err := NewBlocking(Triangular, 3)
	if err != nil {
		t.Fatal(err)
	}
	c, err := NewCumulant(NewIsing(), bl, Rule{Kind: "majority"}, order, keep)
	if err != nil {
		t.Fatal(err)
	}
	return c
}

// First order: K′ = 2Kφ², h′ = 3φh, and the constant per site ln Z0 / 3
// (Niemeijer and van Leeuwen 1973; the two bonds joining neighbouring
// triangles and the three sites of a block are the only inputs).
func TestCumulantFirstOrderClosedForm(t *testing.T) {
	c := newTriCumulant(t, 1, "K", "h")
	dst := make([]float64, 2)
	for _, K := range []float64{-0.4, 0.05, 0.2, 0.3356, 0.6, 2} {
		for _, h := range []float64{0, 0.01, -0.3} {
			g := c.Step(dst, []float64{K, h})
			phi, _ := nvlPhi(K)
			wantG := math.Log(math.Exp(3*K)+3*math.Exp(-K)) / 3
			if !near(dst[0], 2*K*phi*phi, 1e-12) || !near(dst[1], 3*phi*h, 1e-12) || !near(g, wantG, 1e-12) {
				t.Errorf("K=%g h=%g: got K'=%.15g h'=%.15g g=%.15g, want %.15g %.15g %.15g", K, h, dst[0], dst[1], g, 2*K*phi*phi, 3*phi*h, wantG)
			}
		}
	}
}

// The first-order fixed point K* = ln(1 + 2√2)/4 = 0.3356 (φ* = 1/√2) and
// its field eigenvalue λ_h = 3φ(K*) = 3/√2 (Niemeijer and van Leeuwen
// 1973; 1974, from memory; the closed forms follow from 2φ² = 1). The
// thermal eigenvalue is λ_t = d(2Kφ²)/dK at K*, derived here.
func TestCumulantFirstOrderFixedPoint(t *testing.T) {
	c := newTriCumulant(t, 1, "K", "h")
	res, err := flow.FindAll(context.Background(), c, nil)
	if err != nil {
		t.Fatal(err)
	}
	wantK := math.Log(1+2*math.Sqrt2) / 4
	if math.Abs(wantK-0.3356) > 5e-5 {
		t.Fatalf("closed form %.6f does not round to the published 0.3356", wantK)
	}
	var found bool
	for _, fp := range res.Points {
		if fp.Kind != flow.Critical || !finitePoint(fp) {
			continue
		}
		found = true
		if !near(fp.X[0], wantK, 1e-10) || math.Abs(fp.X[1]) > 1e-12 {
			t.Errorf("K* = %.12g, h* = %g; want %.12g, 0", fp.X[0], fp.X[1], wantK)
		}
		phi, _ := nvlPhi(wantK)
		// dφ/dK from φ = (a + b)/(a + 3b), a = e^{3K}, b = e^{−K}.
		a, b := math.Exp(3*wantK), math.Exp(-wantK)
		dphi := ((3*a-b)*(a+3*b) - (a+b)*(3*a-3*b)) / ((a + 3*b) * (a + 3*b))
		lt := 2*phi*phi + 4*wantK*phi*dphi
		lh := 3 / math.Sqrt2
		got := map[bool]float64{}
		for _, e := range fp.Directions {
			got[e.Block == flow.SymmetricBlock] = real(e.Lambda)
		}
		if !near(got[true], lt, 1e-7) || !near(got[false], lh, 1e-9) {
			t.Errorf("eigenvalues thermal %.10g field %.10g; want %.10g, %.10g", got[true], got[false], lt, lh)
		}
		// y_t about 0.88, nu about 1.13 (Niemeijer and van Leeuwen 1973,
		// from memory; two digits).
		if yt := math.Log(lt) / math.Log(math.Sqrt(3)); math.Abs(yt-0.88) > 0.005 {
			t.Errorf("y_t = %.4f, want 0.88 to two digits", yt)
		}
		t.Logf("first order: K* = %.6f, y_t = %.5f, nu = %.5f, y_h = %.5f", fp.X[0], math.Log(lt)/math.Log(math.Sqrt(3)), math.Log(math.Sqrt(3))/math.Log(lt), math.Log(lh)/math.Log(math.Sqrt(3)))
	}
	if !found {
		t.Fatal("no finite critical fixed point")
	}
}

// triBlocks assigns each site of a triangular patch to its up-triangle
// block by explicit construction, independent of the engine: blocks sit on
// the √3 superlattice a(1, 1) + b(2, −1), each holding (i, j), (i+1, j),
// (i, j+1).
func triBlocks(r int) map[[2]int][2]int {
	blk := map[[2]int][2]int{}
	for a := -r; a <= r; a++ {
		for b := -r; b <= r; b++ {
			base := [2]int{a + 2*b, a - b}
			for _, o := range [][2]int{{0, 0}, {1, 0}, {0, 1}} {
				blk[[2]int{base[0] + o[0], base[1] + o[1]}] = base
			}
		}
	}
	return blk
}

// triShell returns the neighbour shell of a vector on the triangular
// lattice by its squared length i² + ij + j²: 1, 3 and 4 for shells 1–3.
func triShell(d [2]int) int {
	switch d[0]*d[0] + d[0]*d[1] + d[1]*d[1] {
	case 1:
		return 1
	case 3:
		return 2
	case 4:
		return 3
	}
	return 0
}

// Second order with K, L, M, h: the recursion against a closed form
// derived here by counting bonds between block pairs. With φ and ψ the
// block moments, a bond between blocks I and J contributes x φ² μ_I μ_J at
// first order; at second order two nearest-neighbour bonds (k∈I, l∈J) and
// (k′∈I, l′∈J′) sharing block I give K² φ² μ_J μ_J′ (1 − φ²) when k = k′
// and K² φ² μ_J μ_J′ (ψ − φ²) otherwise; a field term h s_i with i in the
// block of k gives h K φ μ_J times the same factors. (Niemeijer and van
// Leeuwen 1973; the counting is ours.)
func TestCumulantSecondOrderClosedForm(t *testing.T) {
	c := newTriCumulant(t, 2, "K", "L", "M", "h")
	blk := triBlocks(12)
	origin := [2]int{0, 0}
	// Block shells by the separation of the blocks' base sites, which are
	// superlattice points at distances √3 × (1, √3, 2).
	bshell := func(B [2]int) int {
		d2 := B[0]*B[0] + B[0]*B[1] + B[1]*B[1]
		switch d2 {
		case 3:
			return 1
		case 9:
			return 2
		case 12:
			return 3
		}
		return 0
	}
	nbr := [][2]int{}
	for i := -2; i <= 2; i++ {
		for j := -2; j <= 2; j++ {
			if s := triShell([2]int{i, j}); s > 0 {
				nbr = append(nbr, [2]int{i, j})
			}
		}
	}
	sites := [][2]int{{0, 0}, {1, 0}, {0, 1}}
	// n[t][s]: bonds of site shell t from the origin block to one block of
	// block shell s; counted over all blocks of the shell, then divided.
	var n [4][4]float64
	for _, s := range sites {
		for _, v := range nbr {
			e := [2]int{s[0] + v[0], s[1] + v[1]}
			B := blk[e]
			if B == origin {
				continue
			}
			n[triShell(v)][bshell(B)]++
		}
	}
	// Second order: for target block J′ at shell s from J = origin, sum
	// over common neighbour blocks I of nearest-neighbour bonds from J and
	// from J′ into I, split by whether they land on the same site of I.
	var same, diff [4]float64
	var targets [4]float64
	cand := map[[2]int]bool{}
	for _, B := range blk {
		if s := bshell(B); s > 0 {
			cand[B] = true
		}
	}
	bondsInto := func(J, I [2]int) []([2]int) { // sites of I hit by nn bonds from J
		var out [][2]int
		for _, s := range sites {
			x := [2]int{J[0] + s[0], J[1] + s[1]}
			for _, v := range nbr {
				if triShell(v) != 1 {
					continue
				}
				e := [2]int{x[0] + v[0], x[1] + v[1]}
				if blk[e] == I {
					out = append(out, e)
				}
			}
		}
		return out
	}
	for Jp := range cand {
		s := bshell(Jp)
		targets[s]++
		for I := range cand {
			if I == Jp {
				continue
			}
			a, b := bondsInto(origin, I), bondsInto(Jp, I)
			for _, x := range a {
				for _, y := range b {
					if x == y {
						same[s]++
					} else {
						diff[s]++
					}
				}
			}
		}
	}
	// The field's second-order term: nn bonds from the origin block out,
	// times the three sites of the block at the other end.
	var outBonds float64
	for s := 1; s <= 3; s++ {
		outBonds += n[1][s]
	}
	dst := make([]float64, 4)
	for _, x := range [][]float64{{0.2789, -0.0143, -0.0152, 0}, {0.1, 0.05, -0.02, 0.03}, {0.5, -0.1, 0.2, -0.2}} {
		K, L, M, h := x[0], x[1], x[2], x[3]
		phi, psi := nvlPhi(K)
		c.Step(dst, x)
		for s := 1; s <= 3; s++ {
			first := phi * phi * (n[1][s]*K + n[2][s]*L + n[3][s]*M) / targets[s]
			second := K * K * phi * phi * (same[s]*(1-phi*phi) + diff[s]*(psi-phi*phi)) / targets[s]
			if !near(dst[s-1], first+second, 1e-12) {
				t.Errorf("x=%v shell %d: got %.15g, want %.15g", x, s, dst[s-1], first+second)
			}
		}
		wantH := 3*phi*h + h*K*phi*outBonds*((1-phi*phi)+2*(psi-phi*phi))
		if !near(dst[3], wantH, 1e-12) {
			t.Errorf("x=%v: h' = %.15g, want %.15g", x, dst[3], wantH)
		}
	}
	if n[1][1] != 6*2 || n[1][2] != 0 {
		t.Errorf("counting: %v nn bonds by block shell; want 2 per nearest block (12) and none further", n[1])
	}
}

// The second-order fixed point with K, L, M: (0.2789, −0.0143, −0.0152)
// (Niemeijer and van Leeuwen 1973, from memory; four decimals, so within
// 1e-4). Ours is (0.27887, −0.01425, −0.01523): K* and M* round to the
// published digits, L* to −0.0142, one unit off in the last digit, which
// the tolerance admits; the figure from memory may be the one that is off,
// and the recursion itself is checked to 1e-12 against the bond counting
// above. y_t and nu are reported only.
func TestCumulantSecondOrderFixedPoint(t *testing.T) {
	c := newTriCumulant(t, 2, "K", "L", "M")
	res, err := flow.FindAll(context.Background(), c, nil)
	if err != nil {
		t.Fatal(err)
	}
	want := []float64{0.2789, -0.0143, -0.0152}
	found := false
	for _, fp := range res.Points {
		if fp.Kind != flow.Critical || !finitePoint(fp) {
			continue
		}
		found = true
		for i := range want {
			if math.Abs(fp.X[i]-want[i]) > 1e-4 {
				t.Errorf("%s* = %.6f, want %.4f", c.cs[i].Name, fp.X[i], want[i])
			}
		}
		lt := real(fp.Directions[0].Lambda)
		t.Logf("second order: (K*, L*, M*) = (%.6f, %.6f, %.6f); lambda_t = %.6f, y_t = %.5f, nu = %.5f", fp.X[0], fp.X[1], fp.X[2], lt, math.Log(lt)/math.Log(math.Sqrt(3)), math.Log(math.Sqrt(3))/math.Log(lt))
	}
	if !found {
		t.Fatal("no finite critical fixed point")
	}
}

// Invariants: at zero couplings ln Z/N per step is (1 − 1/3) ln 2 (every
// block configuration weighs the same); the map is even in the field for
// K, L, M and odd for h (the Z2 spin flip).
func TestCumulantInvariants(t *testing.T) {
	c := newTriCumulant(t, 2, "K", "L", "M", "h")
	dst := make([]float64, 4)
	if g := c.Step(dst, make([]float64, 4)); !near(g, 2*math.Ln2/3, 1e-14) {
		t.Errorf("g(0) = %.16g, want 2 ln2 / 3", g)
	}
	a, b := make([]float64, 4), make([]float64, 4)
	x := []float64{0.31, -0.02, 0.015, 0.07}
	ga := c.Step(a, x)
	x[3] = -x[3]
	gb := c.Step(b, x)
	for i := 0; i < 3; i++ {
		if !near(a[i], b[i], 1e-15) {
			t.Errorf("coupling %d not even in h: %g vs %g", i, a[i], b[i])
		}
	}
	if !near(a[3], -b[3], 1e-15) || !near(ga, gb, 1e-15) {
		t.Errorf("h' not odd or g not even: %g %g, %g %g", a[3], b[3], ga, gb)
	}
}

func finitePoint(fp flow.FixedPoint) bool {
	for _, v := range fp.Inf {
		if v != 0 {
			return false
		}
	}
	return true
}

// The field is carried whole into the block Hamiltonian, so at first order
// the spontaneous magnetization is the product Π_n φ(K_n) along the flow
// (h_n = 3^n Π φ(K_j) h, weighed by 3^{-n}; Niemeijer and van Leeuwen
// 1974 obtain thermodynamics from the same recursion). The free energy's
// slope in h at h → 0+ must reproduce it through the remainder
// (flow.Remainderer); in the disordered phase it must vanish.
func TestCumulantMagnetizationIsProductOfPhi(t *testing.T) {
	c := newTriCumulant(t, 1, "K", "h")
	for _, K := range []float64{0.4, 0.6, 1.0} {
		want, k := 1.0, K
		for n := 0; n < 200; n++ {
			phi, _ := nvlPhi(k)
			want *= phi
			k = 2 * k * phi * phi
		}
		const h = 1e-7
		fp := flow.FreeEnergy(c, []float64{K, h})
		f0 := flow.FreeEnergy(c, []float64{K, 0})
		m := (fp.Value - f0.Value) / h
		if math.Abs(m-want) > 1e-6 {
			t.Errorf("K=%g: m = %.9f, product of phi %.9f", K, m, want)
		}
	}
	fp := flow.FreeEnergy(c, []float64{0.2, 1e-7})
	f0 := flow.FreeEnergy(c, []float64{0.2, 0})
	if m := (fp.Value - f0.Value) / 1e-7; math.Abs(m) > 1e-6 {
		t.Errorf("disordered K=0.2: m = %g", m)
	}
}
