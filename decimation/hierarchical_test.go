package decimation

import (
	"fmt"
	"math"
	"testing"
)

// TestHierarchicalSiteCount checks the lattices the exactness tests
// enumerate, counted from the definition: a diamond generation adds
// m(b−1) sites per bond and multiplies the bonds by bm, so (b, m) = (2, 2)
// has 2 + 1·2·1 = 4 sites at generation 1 and 4 + 4·2·1 = 12 at
// generation 2, with 16 bonds; a necklace generation adds b−1 sites per
// bond and multiplies the bonds by bp. In the limit the sites per bond tend to m(b−1)/(bm−1), which the engine's
// SitesPerBond must return; for bond moving it is 1/d (d bonds per site of
// the hypercubic lattice).
func TestHierarchicalSiteCount(t *testing.T) {
	for _, tc := range []struct{ b, m, gen, sites, bonds int }{
		{2, 2, 1, 4, 4}, {2, 2, 2, 12, 16}, {3, 2, 1, 6, 6}, {2, 3, 1, 5, 6}, {2, 3, 2, 23, 36}, {3, 3, 1, 8, 9},
	} {
		g := diamondGraph(tc.b, tc.m, tc.gen)
		if g.n != tc.sites || len(g.bonds) != tc.bonds {
			t.Errorf("diamond b=%d m=%d gen %d: %d sites, %d bonds; want %d, %d", tc.b, tc.m, tc.gen, g.n, len(g.bonds), tc.sites, tc.bonds)
		}
	}
	for _, tc := range []struct{ b, p, gen, sites, bonds int }{
		{2, 2, 1, 3, 4}, {2, 2, 2, 7, 16}, {2, 4, 2, 11, 64}, {3, 3, 1, 4, 9},
	} {
		g := necklaceGraph(tc.b, tc.p, tc.gen)
		if g.n != tc.sites || len(g.bonds) != tc.bonds {
			t.Errorf("necklace b=%d p=%d gen %d: %d sites, %d bonds; want %d, %d", tc.b, tc.p, tc.gen, g.n, len(g.bonds), tc.sites, tc.bonds)
		}
	}
	for _, bm := range [][2]int{{2, 2}, {3, 2}, {2, 3}, {4, 1}, {3, 5}} {
		b, m := bm[0], bm[1]
		// N_{k+1} = N_k + m(b−1) B_k, B_{k+1} = bm B_k, from generation 0
		// (2 sites, 1 bond); the ratio converges like 2/(bm)^k.
		sites, bonds := 2.0, 1.0
		for k := 0; k < 80; k++ {
			sites += float64(m*(b-1)) * bonds
			bonds *= float64(b * m)
		}
		want := float64(m*(b-1)) / float64(b*m-1)
		if math.Abs(sites/bonds-want) > tolExact {
			t.Fatalf("b=%d m=%d: count %.15g disagrees with the limit %.15g", b, m, sites/bonds, want)
		}
		h := mustHier(t, NewIsing(), b, m)
		if !h.PerBond() || !near(h.SitesPerBond(), want, tolExact) {
			t.Errorf("hierarchical b=%d m=%d: PerBond %v, SitesPerBond %.15g; want true, %.15g", b, m, h.PerBond(), h.SitesPerBond(), want)
		}
		if d := math.Log(float64(b*m)) / math.Log(float64(b)); !near(h.Dimension(), d, tolExact) {
			t.Errorf("hierarchical b=%d m=%d: d = %.15g, want ln(bm)/ln b = %.15g", b, m, h.Dimension(), d)
		}
	}
	for _, d := range []float64{1.5, 2, 3} {
		bm := mustBond(t, NewIsing(), d, 2, MoveFirst)
		if bm.PerBond() || !near(bm.SitesPerBond(), 1/d, tolExact) {
			t.Errorf("bondmove d=%g: PerBond %v, SitesPerBond %g; want false, 1/d", d, bm.PerBond(), bm.SitesPerBond())
		}
	}
}

// hierCase is one exactness check: a model, its bond weight written from
// the Hamiltonian, its number of states and coupling points.
type hierCase struct {
	m  *Model
	w  bondWeight
	q  int
	xs [][]float64
}

func hierCases(t *testing.T) (ising, potts3, spin1 hierCase) {
	ising = hierCase{NewIsing(), hIsingWeight, 2, [][]float64{{0.4, 0.3}, {-0.7, 0.5}, {1.1, -0.9}}}
	potts3 = hierCase{mustPotts(t, 3), hPottsWeight(3), 3, [][]float64{{0.6, 0.4, -0.3}, {-0.5, -0.8, 0.7}}}
	spin1 = hierCase{NewSpin1(), hSpin1Weight, 3, [][]float64{{0.5, -0.3, 0.4, 0.2, -0.6}, {-0.6, 0.7, -0.5, -0.3, 0.4}}}
	return
}

// rgLnZ returns ln Z of generation gen of a hierarchical lattice from the
// RG: one step turns generation k+1 into generation k, each of its B
// bonds (bm or bp per bond of the coarser lattice, so B = (bm)^{gen−k}
// before step k) contributing g per bond, and generation 0 is one bond
// whose two root spins are summed:
//
//	ln Z = Σ_{k<gen} (bm)^{gen−k} g_bond(x_k) + ln Σ_{s,t} w(x_gen)(s, t).
func rgLnZ(step func(x []float64) ([]float64, float64), perStep float64, w bondWeight, d float64, x []float64, gen int) float64 {
	sum := 0.0
	for k := 0; k < gen; k++ {
		xn, g := step(x)
		sum += math.Pow(perStep, float64(gen-k)) * g
		x = xn
	}
	return sum + lnSumW(w(x, d))
}

// TestHierarchicalExactness: the decimate-first RG (series, then parallel)
// is exact on the diamond lattice and the move-first RG (parallel, then
// series) on the necklace lattice (M. Kaufman, R. B. Griffiths, Phys. Rev.
// B 24, 496, 1981; A. N. Berker, S. Ostlund, J. Phys. C 12, 4961, 1979;
// from memory; the exactness is elementary and checked here). ln Z is
// enumerated over every configuration of the lattice built from its
// definition, both roots included, every bond carrying the bond weight of
// the site convention with d = ln(bm)/ln b (diamond) or b^{d−1} = p
// (necklace). Bond moving reports g per site, d × (per bond) + κ; the
// per-bond value is (g − κ)/d. Bond moving decimating first must be exact
// on the diamond lattice with m = b^{d−1} as well.
func TestHierarchicalExactness(t *testing.T) {
	ising, potts3, spin1 := hierCases(t)
	type lattice struct {
		name    string
		g       hGraph
		gen     int
		cases   []hierCase
		d       float64
		perStep float64
		step    func(m *Model) func(x []float64) ([]float64, float64)
		slow    bool
	}
	diamond := func(b, m, gen int, cases ...hierCase) lattice {
		return lattice{
			name: fmt.Sprintf("diamond b=%d m=%d gen %d", b, m, gen), g: diamondGraph(b, m, gen), gen: gen, cases: cases,
			d: math.Log(float64(b*m)) / math.Log(float64(b)), perStep: float64(b * m),
			step: func(mod *Model) func(x []float64) ([]float64, float64) {
				h := mustHier(t, mod, b, m)
				return func(x []float64) ([]float64, float64) { return bmStep(h, x) }
			},
		}
	}
	necklace := func(b, p, gen int, cases ...hierCase) lattice {
		d := 1 + math.Log(float64(p))/math.Log(float64(b)) // b^{d−1} = p
		return lattice{
			name: fmt.Sprintf("necklace b=%d p=%d gen %d", b, p, gen), g: necklaceGraph(b, p, gen), gen: gen, cases: cases,
			d: d, perStep: float64(b * p),
			step: func(mod *Model) func(x []float64) ([]float64, float64) {
				bm := mustBond(t, mod, d, b, MoveFirst)
				return func(x []float64) ([]float64, float64) {
					xn, g := bmStep(bm, x)
					return xn, (g - bm.kappa) / bm.d
				}
			},
		}
	}
	// The bond-moving engine decimating first, with p = m = b^{d−1}, is the
	// diamond lattice's RG too (its g converted to per bond).
	diamondBM := func(b, m, gen int, cases ...hierCase) lattice {
		lat := diamond(b, m, gen, cases...)
		lat.name = "bondmove decimate-first on " + lat.name
		lat.step = func(mod *Model) func(x []float64) ([]float64, float64) {
			bm := mustBond(t, mod, lat.d, b, DecimateFirst)
			return func(x []float64) ([]float64, float64) {
				xn, g := bmStep(bm, x)
				return xn, (g - bm.kappa) / bm.d
			}
		}
		return lat
	}
	lats := []lattice{
		diamond(2, 2, 2, ising, potts3, spin1),
		diamondBM(2, 2, 2, ising, potts3, spin1),
		diamondBM(3, 3, 1, ising, potts3, spin1),
		diamond(3, 2, 1, ising, potts3, spin1),
		diamond(2, 3, 1, ising, potts3, spin1),
		necklace(2, 2, 2, ising, potts3, spin1),
		necklace(2, 4, 2, ising, potts3, spin1),
		necklace(3, 3, 1, ising, potts3, spin1),
	}
	big := diamond(2, 3, 2, ising) // 23 sites: 2^23 configurations
	big.slow = true
	lats = append(lats, big)
	for _, lat := range lats {
		if lat.slow && testing.Short() {
			t.Logf("%s: skipped in -short mode (%d sites)", lat.name, lat.g.n)
			continue
		}
		hists := map[int]map[uint64]float64{}
		for _, tc := range lat.cases {
			hist, ok := hists[tc.q]
			if !ok {
				hist = bondHistogram(lat.g, tc.q)
				hists[tc.q] = hist
			}
			step := lat.step(tc.m)
			for _, x := range tc.xs {
				want := histLnZ(hist, len(lat.g.bonds), tc.w(x, lat.d))
				got := rgLnZ(step, lat.perStep, tc.w, lat.d, x, lat.gen)
				if !near(got, want, tolExact) {
					t.Errorf("%s %s x=%v: ln Z by the RG %.15g, by enumeration %.15g", lat.name, tc.m.Name(), x, got, want)
				}
			}
		}
	}
}
