package scenarios_test

import (
	"math"
	"strings"
	"testing"

	"scalewalk/scenarios"
)

// unitTol: a conversion is one multiplication and one division; relative
// rounding error is a few ulp.
const unitTol = 1e-13

// handTol: a hand-worked number written to 6 significant digits.
const handTol = 5e-6

// k_B = 8.617333262e-5 eV/K: CODATA recommended value, exact since the 2019
// SI redefinition (k = 1.380649e-23 J/K, e = 1.602176634e-19 C, both exact;
// 1.380649e-23/1.602176634e-19 = 8.617333262...e-5).
func TestBoltzmannCODATA(t *testing.T) {
	if scenarios.BoltzmannEV != 8.617333262e-5 {
		t.Errorf("BoltzmannEV = %.12g, want 8.617333262e-5 (CODATA)", scenarios.BoltzmannEV)
	}
	// The exact SI constants give the same eV/K value to its 10 digits.
	if r := 1.380649e-23 / 1.602176634e-19; math.Abs(r-scenarios.BoltzmannEV) > 5e-15 {
		t.Errorf("k/e = %.15g, want %.15g", r, scenarios.BoltzmannEV)
	}
}

// Hand-worked conversions (1/k_B = 11604.518 K/eV):
//
//	10 meV, spin-half:   J_model = 10/4 = 2.5 meV; 2.5e-3/8.617333262e-5 = 29.0113 K
//	10 meV, minus-two-j: J_model = 10/2 = 5 meV;   5e-3/8.617333262e-5   = 58.0226 K
//	10 meV, ising:       J_model = 10 meV;         1e-2/8.617333262e-5   = 116.045 K
//	12 K, spin-half:     the unit K passes through: 12/4 = 3 K
//	kT_c/J = 3.282 with J_model/k_B = 29.0113 K: T_c = 3.282 x 29.0113 = 95.2151 K
func TestMaterialConversions(t *testing.T) {
	for _, tc := range []struct {
		m    scenarios.MaterialFile
		want float64 // J_model/k_B in K, worked by hand above
	}{
		{scenarios.MaterialFile{Exchange: 10, Unit: "meV", Convention: "spin-half"}, 29.0113},
		{scenarios.MaterialFile{Exchange: 10, Unit: "meV", Convention: "minus-two-j"}, 58.0226},
		{scenarios.MaterialFile{Exchange: 10, Unit: "meV", Convention: "ising"}, 116.045},
		{scenarios.MaterialFile{Exchange: 10, Unit: "meV"}, 116.045}, // default ising
		{scenarios.MaterialFile{Exchange: 12, Unit: "K", Convention: "spin-half"}, 3},
		{scenarios.MaterialFile{Exchange: 12, Unit: "K", Convention: "minus-two-j"}, 6},
	} {
		m, err := scenarios.MaterialFrom(&tc.m)
		if err != nil {
			t.Errorf("%+v: %v", tc.m, err)
			continue
		}
		if math.Abs(m.JModelK-tc.want) > handTol*math.Abs(tc.want) {
			t.Errorf("%+v: J_model/k_B = %.6f K, want %.6g", tc.m, m.JModelK, tc.want)
		}
		if tc.m.Convention == "" && m.Convention != "ising" {
			t.Errorf("default convention %q, want ising", m.Convention)
		}
	}
	// Exactly: spin-half is 1/4 and minus-two-j 1/2 of the ising value.
	ising, _ := scenarios.MaterialFrom(&scenarios.MaterialFile{Exchange: 7, Unit: "meV", Convention: "ising"})
	half, _ := scenarios.MaterialFrom(&scenarios.MaterialFile{Exchange: 7, Unit: "meV", Convention: "spin-half"})
	m2j, _ := scenarios.MaterialFrom(&scenarios.MaterialFile{Exchange: 7, Unit: "meV", Convention: "minus-two-j"})
	if math.Abs(half.JModelK-ising.JModelK/4) > unitTol*ising.JModelK || math.Abs(m2j.JModelK-ising.JModelK/2) > unitTol*ising.JModelK {
		t.Errorf("factors: ising %g, spin-half %g, minus-two-j %g; want 1, 1/4, 1/2", ising.JModelK, half.JModelK, m2j.JModelK)
	}
	if want := 7e-3 / 8.617333262e-5; math.Abs(ising.JModelK-want) > unitTol*want {
		t.Errorf("7 meV = %.15g K, want %.15g", ising.JModelK, want)
	}
	// T_c in kelvin.
	m, _ := scenarios.MaterialFrom(&scenarios.MaterialFile{Exchange: 10, Unit: "meV", Convention: "spin-half"})
	if tc := m.TcKelvin(3.282); math.Abs(tc-95.2151) > handTol*95.2151 {
		t.Errorf("T_c = %.6f K, want 3.282 x 29.0113 = 95.2151 K", tc)
	}
	if tc := m.TcKelvin(3.282); math.Abs(tc-3.282*m.JModelK) > unitTol*tc {
		t.Errorf("T_c = %.15g, want 3.282 x JModelK = %.15g", tc, 3.282*m.JModelK)
	}
}

// A bad unit, convention or exchange is an error that names what was given
// and lists what is accepted.
func TestMaterialErrors(t *testing.T) {
	for _, tc := range []struct {
		m    scenarios.MaterialFile
		want []string
	}{
		{scenarios.MaterialFile{Exchange: 1, Unit: "eV"}, []string{`"eV"`, "meV", "K"}},
		{scenarios.MaterialFile{Exchange: 1, Unit: ""}, []string{"unit", "meV, K"}},
		{scenarios.MaterialFile{Exchange: 1, Unit: "mev"}, []string{`"mev"`, "meV, K"}},
		{scenarios.MaterialFile{Exchange: 1, Unit: "meV", Convention: "heisenberg"}, []string{`"heisenberg"`, "ising", "spin-half", "minus-two-j"}},
		{scenarios.MaterialFile{Exchange: 0, Unit: "meV"}, []string{"exchange = 0", "> 0"}},
		{scenarios.MaterialFile{Exchange: math.NaN(), Unit: "meV"}, []string{"exchange", "finite"}},
		// A negative exchange would print a negative temperature: its
		// sign belongs to the model's couplings, the material gives |J|.
		{scenarios.MaterialFile{Exchange: -10, Unit: "meV"}, []string{"exchange", "> 0"}},
		{scenarios.MaterialFile{Exchange: math.Inf(1), Unit: "K"}, []string{"exchange", "finite"}},
	} {
		m, err := scenarios.MaterialFrom(&tc.m)
		if err == nil {
			t.Errorf("%+v: accepted (%+v)", tc.m, m)
			continue
		}
		for _, w := range tc.want {
			if !strings.Contains(err.Error(), w) {
				t.Errorf("%+v: error %q does not contain %q", tc.m, err, w)
			}
		}
	}
	names := scenarios.ConventionNames()
	if strings.Join(names, ",") != "ising,minus-two-j,spin-half" {
		t.Errorf("ConventionNames() = %v", names)
	}
	for _, n := range names {
		if scenarios.ConventionHelp(n) == "" {
			t.Errorf("convention %s has no help", n)
		}
	}
}

// Lattice gas to Ising (K. Huang, Statistical Mechanics, 2nd ed., Wiley
// 1987, sect. 14.4; from memory). Re-derived: with H_LG = -eps sum_<ij> n_i
// n_j - mu sum_i n_i and n = (1 + s)/2, n_i n_j = (1 + s_i + s_j + s_i s_j)/4.
// On N sites of coordination z there are Nz/2 bonds and sum over bonds of
// (s_i + s_j) = z sum_i s_i, so
//
//	H_LG = -(eps/4) sum s_i s_j - (mu/2 + z eps/4) sum s_i - N (mu/2 + z eps/8).
//
// Hence J = eps/4, H = mu/2 + z eps/4, and a constant E0 = -N(mu/2 + z eps/8).
// eps = 20 meV, z = 4: J = 5; mu = -40 gives H = -20 + 20 = 0 (half
// coverage, mu = -z eps/2); mu = -30 gives H = -15 + 20 = 5.
func TestLatticeGasMapping(t *testing.T) {
	for _, tc := range []struct {
		eps, mu float64
		z       int
		J, H    float64
	}{
		{20, -40, 4, 5, 0},
		{20, -30, 4, 5, 5},
		{12, -36, 6, 3, 0},   // simple cubic / triangular z = 6: -18 + 18 = 0
		{-8, 1, 4, -2, -7.5}, // repulsion: J = -2, H = 0.5 - 8
	} {
		J, H := scenarios.LatticeGasToIsing(tc.eps, tc.mu, tc.z)
		if math.Abs(J-tc.J) > unitTol || math.Abs(H-tc.H) > unitTol {
			t.Errorf("eps %g mu %g z %d: J, H = %g, %g; want %g, %g", tc.eps, tc.mu, tc.z, J, H, tc.J, tc.H)
		}
	}
}

// Brute force on an L x L periodic square lattice (z = 4): for every one of
// the 2^N configurations the lattice-gas Boltzmann weight exp(-H_LG/kT)
// equals the Ising weight exp(K sum s s + h sum s) with K = J/kT, h = H/kT
// (J, H from LatticeGasToIsing) times exp(N (mu/2 + z eps/8)/kT), the
// constant derived above; hence ln Xi_LG - ln Z_Ising is that constant, for
// two values of mu.
func TestLatticeGasBruteForce(t *testing.T) {
	// bruteTol: sums of at most 2N + N terms of size <= ~10, and logs of
	// sums of 2^16 positive terms; relative rounding well below 1e-12.
	const bruteTol = 1e-11
	const eps, kT, z = 20.0, 7.0, 4
	for _, L := range []int{3, 4} {
		N := L * L
		type bond struct{ i, j int }
		var bonds []bond
		for r := 0; r < L; r++ {
			for c := 0; c < L; c++ {
				i := r*L + c
				bonds = append(bonds, bond{i, r*L + (c+1)%L}, bond{i, ((r+1)%L)*L + c})
			}
		}
		if len(bonds) != N*z/2 {
			t.Fatalf("L = %d: %d bonds, want Nz/2 = %d", L, len(bonds), N*z/2)
		}
		for _, mu := range []float64{-40, -30, -52.5} {
			J, H := scenarios.LatticeGasToIsing(eps, mu, z)
			K, h := J/kT, H/kT
			c := float64(N) * (mu/2 + z*eps/8) / kT
			var xi, zi float64
			worst := 0.0
			for conf := 0; conf < 1<<N; conf++ {
				var eLG, ss, s1 float64
				for _, b := range bonds {
					ni, nj := float64(conf>>b.i&1), float64(conf>>b.j&1)
					eLG -= eps * ni * nj
					si, sj := 2*ni-1, 2*nj-1
					ss += si * sj
				}
				for i := 0; i < N; i++ {
					n := float64(conf >> i & 1)
					eLG -= mu * n
					s1 += 2*n - 1
				}
				lgLog := -eLG / kT
				isLog := K*ss + h*s1
				worst = math.Max(worst, math.Abs(lgLog-(isLog+c))/(1+math.Abs(lgLog)))
				xi += math.Exp(lgLog)
				zi += math.Exp(isLog)
			}
			if worst > bruteTol {
				t.Errorf("L = %d, mu = %g: weights differ from Ising x exp(const) by %g (relative)", L, mu, worst)
			}
			if d := math.Log(xi) - math.Log(zi); math.Abs(d-c) > bruteTol*(1+math.Abs(c)) {
				t.Errorf("L = %d, mu = %g: ln Xi - ln Z = %.14g, want N(mu/2 + z eps/8)/kT = %.14g", L, mu, d, c)
			}
		}
	}
}
