package decimation

import (
	"errors"
	"math"
	"strings"
	"testing"

	"scalewalk/flow"
	"scalewalk/flow/flowtest"
)

func mustCluster(t testing.TB, m *Model, lat *Lattice, block int, rule Rule, keep []string, spec ClusterSpec) *Cluster {
	t.Helper()
	bl, err := NewBlocking(lat, block)
	if err != nil {
		t.Fatal(err)
	}
	c, err := NewCluster(m, bl, rule, keep, spec)
	if err != nil {
		t.Fatal(err)
	}
	return c
}

// The cluster engine with the decimation rule on a chain cluster of two
// block spins with the b − 1 decimated spins between them, free boundary
// and half fields at the ends, is exact decimation: it must reproduce the
// chain engine (itself checked against Nelson and Fisher, Ann. Phys. 91,
// 226 (1975)) to rounding, couplings and constant alike.
func TestClusterChainIsExactDecimation(t *testing.T) {
	for _, b := range []int{2, 3, 5} {
		for _, keep := range [][]string{{"K"}, {"K", "h"}} {
			c := mustCluster(t, NewIsing(), Linear, b, Rule{Kind: "decimation"}, keep, ClusterSpec{Blocks: 1})
			ch := mustChain(t, NewIsing(), b)
			for _, x := range [][]float64{{0.3, 0.2}, {1.1, -0.4}, {-0.7, 0.05}, {0.05, 1.5}} {
				xc := x[:len(keep)]
				xe := []float64{x[0], 0}
				if len(keep) == 2 {
					xe[1] = x[1]
				}
				got, want := make([]float64, len(keep)), make([]float64, 2)
				g := c.Step(got, xc)
				ge := ch.Step(want, xe)
				for i := range got {
					if math.Abs(got[i]-want[i]) > 1e-12*(1+math.Abs(want[i])) {
						t.Errorf("b=%d keep=%v x=%v: coupling %d = %.15g, chain %.15g", b, keep, xc, i, got[i], want[i])
					}
				}
				if math.Abs(g-ge) > 1e-12*(1+math.Abs(ge)) {
					t.Errorf("b=%d keep=%v x=%v: g = %.15g, chain %.15g", b, keep, xc, g, ge)
				}
				if cl := c.Closure(xc); cl > 1e-12 {
					t.Errorf("b=%d keep=%v: closure %g on an exact decimation", b, keep, cl)
				}
			}
		}
	}
	// Potts q = 3 without field, against the chain engine's K′ (its Kfav
	// and h stay 0 there).
	p, _ := NewPotts(3)
	c := mustCluster(t, p, Linear, 2, Rule{Kind: "decimation"}, []string{"K"}, ClusterSpec{Blocks: 1})
	ch := mustChain(t, p, 2)
	got, want := make([]float64, 1), make([]float64, 3)
	g := c.Step(got, []float64{0.8})
	ge := ch.Step(want, []float64{0.8, 0, 0})
	if !near(got[0], want[0], 1e-12) || !near(g, ge, 1e-12) {
		t.Errorf("potts: K' = %.15g g = %.15g; chain %.15g %.15g", got[0], g, want[0], ge)
	}
}

// bruteLogWeights enumerates the cluster directly (no table) for a check:
// ln W(μ) = ln Σ_s Π_B P(μ_B|s_B) exp(Σ couplings × sums).
func bruteLogWeights(c *Cluster, x []float64) []float64 {
	q, N := c.q, c.nsites
	out := make([]float64, c.nconf)
	total := 1
	for i := 0; i < N; i++ {
		total *= q
	}
	s := make([]int, N)
	w := make([]float64, q)
	for cf := 0; cf < total; cf++ {
		r := cf
		for i := range s {
			s[i] = r % q
			r /= q
		}
		e := 0.0
		for fi, f := range c.feat {
			v := 0.0
			if f.siteW != nil {
				for i := range s {
					v += float64(f.siteW[i]*f.pv[s[i]]) / f.scale
				}
			} else {
				for _, p := range f.pairs {
					v += float64(f.pv[s[p[0]]*q+s[p[1]]])
				}
			}
			e += x[fi] * v
		}
		// Block weights, block by block.
		probs := make([][]float64, c.nblocks)
		for B := range probs {
			var st []int
			for k := 0; ; k++ {
				found := false
				for i := 0; i < N; i++ {
					if c.owner[i] == B && c.ownerK[i] == k {
						st = append(st, s[i])
						found = true
					}
				}
				if !found {
					break
				}
			}
			c.rule.weights(w, st, q)
			probs[B] = append([]float64(nil), w[:q]...)
		}
		for mu := 0; mu < c.nconf; mu++ {
			p, r := math.Exp(e), mu
			for B := 0; B < c.nblocks; B++ {
				p *= probs[B][r%q]
				r /= q
			}
			out[mu] += p
		}
	}
	for mu := range out {
		out[mu] = math.Log(out[mu])
	}
	return out
}

// The count table reproduces direct enumeration (an invariant of the
// table's construction), for Ising with K, L, h and the three rules,
// and for Potts q = 3.
func TestClusterTableMatchesEnumeration(t *testing.T) {
	p3, _ := NewPotts(3)
	cases := []struct {
		m    *Model
		lat  *Lattice
		rule Rule
		keep []string
		n    int
		x    []float64
	}{
		{NewIsing(), Square, Rule{Kind: "majority"}, []string{"K", "L", "h"}, 4, []float64{0.4, -0.1, 0.2}},
		{NewIsing(), Square, Rule{Kind: "kadanoff", P: 0.7}, []string{"K", "L", "h"}, 4, []float64{0.3, 0.1, -0.3}},
		{NewIsing(), Triangular, Rule{Kind: "decimation"}, []string{"K", "L", "h"}, 4, []float64{0.25, 0.02, 0.1}},
		{p3, Square, Rule{Kind: "majority"}, []string{"K", "h"}, 2, []float64{0.9, 0.3}},
	}
	for _, tc := range cases {
		c := mustCluster(t, tc.m, tc.lat, 0, tc.rule, tc.keep, ClusterSpec{Blocks: tc.n})
		w := c.work()
		c.logWeights(w.lnW, w, tc.x)
		want := bruteLogWeights(c, tc.x)
		for mu := range want {
			if !near(w.lnW[mu], want[mu], 1e-11) { // sums of up to 2^16 terms in another order
				t.Errorf("%s %s %v: ln W(%d) = %.15g, enumeration %.15g", tc.m.Name(), tc.lat.Name, tc.rule, mu, w.lnW[mu], want[mu])
			}
		}
	}
}

// Symmetries: at h = 0 the field stays 0; flipping h flips h′ and keeps
// the even couplings and the constant (the Z2 spin flip, common practice);
// at zero couplings every block configuration weighs the same, so x′ = 0
// and g = (1 − 1/b^d) ln q.
func TestClusterSymmetries(t *testing.T) {
	c := mustCluster(t, NewIsing(), Square, 0, Rule{Kind: "majority"}, []string{"K", "L", "h"}, ClusterSpec{})
	a, b := make([]float64, 3), make([]float64, 3)
	c.Step(a, []float64{0.4, 0.05, 1e-9})
	if rel := a[2]/1e-9 - 1; math.Abs(a[2]) > 1e-8 || a[2] <= 0 {
		t.Errorf("h' = %g at h = 1e-9 (ratio %g): the field must stay small and keep its sign", a[2], rel)
	}
	ga := c.Step(a, []float64{0.4, 0.05, 0.13})
	gb := c.Step(b, []float64{0.4, 0.05, -0.13})
	if !near(a[0], b[0], 1e-13) || !near(a[1], b[1], 1e-13) || !near(a[2], -b[2], 1e-13) || !near(ga, gb, 1e-13) {
		t.Errorf("flip: %v %g vs %v %g", a, ga, b, gb)
	}
	for _, tc := range []struct {
		m    *Model
		lat  *Lattice
		n    int
		keep []string
	}{
		{NewIsing(), Square, 4, []string{"K", "L"}},
		{NewIsing(), Triangular, 7, []string{"K", "L"}},
		{mustPotts(t, 3), Square, 2, []string{"K"}},
		{mustPotts(t, 4), Triangular, 3, []string{"K"}},
	} {
		c := mustCluster(t, tc.m, tc.lat, 0, Rule{Kind: "majority"}, tc.keep, ClusterSpec{Blocks: tc.n})
		d := make([]float64, len(tc.keep))
		g := c.Step(d, make([]float64, len(tc.keep)))
		want := (1 - 1/(c.bl.b*c.bl.b)) * math.Log(tc.m.States())
		for i := range d {
			if math.Abs(d[i]) > 1e-13 {
				t.Errorf("%s %s: zero couplings give %v", tc.m.Name(), tc.lat.Name, d)
			}
		}
		if !near(g, want, 1e-13) {
			t.Errorf("%s %s: g = %.15g, want %.15g", tc.m.Name(), tc.lat.Name, g, want)
		}
	}
}

// The Kadanoff weight tends to the majority rule (ties shared) as p grows
// (Kadanoff's construction; common practice).
func TestClusterKadanoffTendsToMajority(t *testing.T) {
	maj := mustCluster(t, NewIsing(), Square, 0, Rule{Kind: "majority"}, []string{"K", "L"}, ClusterSpec{})
	kad := mustCluster(t, NewIsing(), Square, 0, Rule{Kind: "kadanoff", P: 40}, []string{"K", "L"}, ClusterSpec{})
	a, b := make([]float64, 2), make([]float64, 2)
	x := []float64{0.35, 0.08}
	maj.Step(a, x)
	kad.Step(b, x)
	if !near(a[0], b[0], 1e-9) || !near(a[1], b[1], 1e-9) {
		t.Errorf("kadanoff p=40 %v, majority %v", b, a)
	}
}

// Bad settings get one clear message naming what is accepted.
func TestClusterBadSettings(t *testing.T) {
	cases := []struct {
		model, want string
		set         map[string]string
	}{
		{"ising", "at least 3 blocks wide", map[string]string{"boundary": "periodic", "blocks": "4"}},
		{"ising", "no pair of blocks at that distance", map[string]string{"keep": "K,M", "blocks": "4"}},
		{"ising", "too large", map[string]string{"blocks": "9"}},
		{"ising", "coincide with those of K", map[string]string{"lattice": "triangular", "blocks": "9", "boundary": "periodic", "keep": "K,M"}},
		{"potts", "too large", map[string]string{"q": "4", "blocks": "6"}},
		{"ising", "does not tile the square lattice", map[string]string{"block": "3"}},
		{"ising", "does not tile the triangular lattice", map[string]string{"lattice": "triangular", "block": "4"}},
		{"ising", "must be kept", map[string]string{"keep": "L,h"}},
		{"spin1", "accepted: ising, potts", nil},
		{"clock", "accepted: ising, potts", nil},
	}
	for _, tc := range cases {
		_, err := Build(tc.model, "cluster", tc.set)
		if err == nil || !strings.Contains(err.Error(), tc.want) || !errors.Is(err, ErrParam) {
			t.Errorf("%s %v: error %v, want one containing %q", tc.model, tc.set, err, tc.want)
		}
	}
	if _, err := Build("potts", "cumulant", nil); err == nil || !strings.Contains(err.Error(), "Ising model only") {
		t.Errorf("potts cumulant: %v", err)
	}
}

// In the ordered phase the free 2 × 2-block cluster's least-squares fit
// drives a flow in a field into a strongly coupled region where its
// closure error is of the order of the couplings, and the free energy
// stops being convex in h there; the field responses must then be refused
// with a flag rather than printed (ln Z is convex: common knowledge). At
// h = 0 the free energy stays available.
func TestClusterOrderedFieldFlagged(t *testing.T) {
	c := mustCluster(t, NewIsing(), Square, 0, Rule{Kind: "majority"}, []string{"K", "L", "h"}, ClusterSpec{})
	if f := flow.FreeEnergy(c, []float64{0.6, 0, 0}); f.Flag != "" || math.IsNaN(f.Value) {
		t.Errorf("ordered, h = 0: %+v", f)
	}
	p := flow.Thermo(c, []float64{0.6, 0, 0}, nil)
	if !math.IsNaN(p.M0) || !math.IsNaN(p.Chi) || len(p.Flags) == 0 {
		t.Errorf("ordered: m0 = %g, chi = %g, flags %q; want both refused", p.M0, p.Chi, p.Flags)
	}
	if f := flow.FreeEnergy(c, []float64{0.3, 0, 1e-3}); f.Flag != "" {
		t.Errorf("disordered, h = 1e-3: %+v", f)
	}
}

// The map contract (flowtest.CheckMap) for both block-spin engines,
// including concurrent use by the fixed-point search (run under -race in
// CI when available).
func TestBlockSpinMapContract(t *testing.T) {
	bl, _ := NewBlocking(Triangular, 3)
	cu, err := NewCumulant(NewIsing(), bl, Rule{Kind: "majority"}, 2, []string{"K", "L", "M", "h"})
	if err != nil {
		t.Fatal(err)
	}
	if err := flowtest.CheckMap(cu, [][]float64{{0.3, 0.01, -0.02, 0.1}, {-1, 0, 0, 2}, {5, 1, 1, -3}}, 0); err != nil {
		t.Error("cumulant:", err)
	}
	cl := mustCluster(t, mustPotts(t, 3), Square, 0, Rule{Kind: "kadanoff", P: 2}, []string{"K", "h"}, ClusterSpec{Blocks: 2})
	if err := flowtest.CheckMap(cl, [][]float64{{0.9, 0.1}, {-2, 0}, {30, -40}}, 0); err != nil {
		t.Error("cluster:", err)
	}
	done := make(chan []float64, 8)
	for i := 0; i < 8; i++ {
		go func() {
			d := make([]float64, 2)
			cl.Step(d, []float64{0.9, 0.1})
			done <- d
		}()
	}
	first := <-done
	for i := 1; i < 8; i++ {
		if d := <-done; d[0] != first[0] || d[1] != first[1] {
			t.Errorf("concurrent steps differ: %v %v", d, first)
		}
	}
}

// A periodic chain cluster (a ring of three blocks of two sites) has no
// boundary: decimation on it is exact, so it must reproduce the chain
// engine (Nelson and Fisher 1975) with zero closure error, constant
// included.
func TestClusterPeriodicRingIsExact(t *testing.T) {
	c := mustCluster(t, NewIsing(), Linear, 2, Rule{Kind: "decimation"}, []string{"K", "h"}, ClusterSpec{Blocks: 3, Periodic: true})
	ch := mustChain(t, NewIsing(), 2)
	got, want := make([]float64, 2), make([]float64, 2)
	for _, x := range [][]float64{{0.4, 0.1}, {-0.8, 0.3}} {
		g := c.Step(got, x)
		ge := ch.Step(want, x)
		if !near(got[0], want[0], 1e-12) || !near(got[1], want[1], 1e-12) || !near(g, ge, 1e-12) {
			t.Errorf("x=%v: ring %v g=%.15g, chain %v g=%.15g", x, got, g, want, ge)
		}
		if cl := c.Closure(x); cl > 1e-12 {
			t.Errorf("x=%v: closure %g on a ring", x, cl)
		}
	}
}
