package decimation

import (
	"context"
	"math"
	"math/cmplx"
	"testing"

	"scalewalk/flow"
	"scalewalk/flow/flowtest"
)

// Every chain map satisfies the flow.Map contract, and its analytic
// Jacobian agrees with gonum's central differences (tolFD: finite
// differences).
func TestChainConformance(t *testing.T) {
	cases := []struct {
		m  *Model
		xs [][]float64
	}{
		{NewIsing(), [][]float64{{0.3, 0.1}, {-1.2, 0.7}, {2.5, -1}}},
		{mustPotts(t, 3), [][]float64{{0.4, 0.2, -0.1}, {-0.3, 1, 0.5}}},
		{mustPotts(t, 2.5), [][]float64{{0.4}, {1.7}}},
		{mustPotts(t, 2), [][]float64{{0.4, -0.3}, {-1.7, 0.8}}},
		{mustClock(t, 5), [][]float64{{0.5, 0.2, 0.1}, {-0.4, 0.3, -0.2}}},
		{NewSpin1(), [][]float64{{0.5, 0.2, 0.3, 0.1, -0.2}, {-0.7, -0.4, -1, 0.3, 0.2}}},
	}
	for _, c := range cases {
		for _, b := range []int{2, 3} {
			if err := flowtest.CheckMap(mustChain(t, c.m, b), c.xs, tolFD); err != nil {
				t.Errorf("%s b=%d: %v", c.m.Name(), b, err)
			}
		}
	}
}

func findChain(t *testing.T, m *Model, b int) []flow.FixedPoint {
	t.Helper()
	r, err := flow.FindAll(context.Background(), mustChain(t, m, b), nil)
	if err != nil {
		t.Fatal(err)
	}
	flow.SortPoints(r.Points)
	return r.Points
}

// The Ising chain engine's fixed points, b = 2, 3, 5: the K = 0 line (a
// family along h, stable: tanh K' = tanh^b K, Nelson and Fisher, Ann. Phys.
// 91, 226, 1975) and K = +inf with lambda = b in exp(-2K) (from the same
// recursion: u' = b u + O(u^2)) and lambda_h = b^d, y_h = d = 1 (Nienhuis and
// Nauenberg, PRL 35, 477, 1975, from memory): critical, discontinuity. For
// odd b the antiferromagnetic K = -inf is fixed too (tanh^b keeps the sign),
// with lambda = b in exp(2K).
func TestIsingChainFixedPoints(t *testing.T) {
	for _, b := range []int{2, 3, 5} {
		ps := findChain(t, NewIsing(), b)
		want := 2
		if b%2 == 1 {
			want = 3
		}
		if len(ps) != want {
			t.Fatalf("b=%d: %d fixed points, want %d", b, len(ps), want)
		}
		if ps[0].Family == nil || ps[0].Kind != flow.Sink || ps[0].X[0] != 0 {
			t.Errorf("b=%d: first point %v kind %v family %v, want the K = 0 sink family", b, ps[0].X, ps[0].Kind, ps[0].Family)
		}
		zt := ps[1]
		if zt.Inf[0] != 1 || zt.Kind != flow.Critical || !zt.Discontinuity {
			t.Errorf("b=%d: K=+inf point inf %v kind %v disc %v", b, zt.Inf, zt.Kind, zt.Discontinuity)
		}
		for _, d := range zt.Directions {
			if math.Abs(cmplx.Abs(d.Lambda)-float64(b)) > 1e-6 {
				t.Errorf("b=%d: eigenvalue %v at K=+inf, want %d", b, d.Lambda, b)
			}
		}
		if b%2 == 1 {
			af := ps[2]
			if af.Inf[0] != -1 || af.Coordinates[0] != "exp(2K)" || math.Abs(cmplx.Abs(af.Directions[0].Lambda)-float64(b)) > 1e-6 {
				t.Errorf("b=%d: K=-inf point inf %v coords %v", b, af.Inf, af.Coordinates)
			}
		}
	}
}

// Potts chain at any q: (e^K' - 1)/(e^K' + q - 1) = r^b with
// r = (e^K - 1)/(e^K + q - 1) (transfer-matrix eigenvalues e^K + q - 1 and
// e^K - 1; F. Y. Wu, Rev. Mod. Phys. 54, 235, 1982). So K = 0 (r = 0) is
// stable with lambda = 0, and at K = +inf, 1 - r ~ q e^{-K} gives
// u' = b u in u = exp(-K): y = 1, a zero-temperature critical point.
func TestPottsChainFixedPoints(t *testing.T) {
	for _, q := range []float64{0.5, 2.5, 3, 7} {
		ps := findChain(t, mustPotts(t, q), 2)
		var zt *flow.FixedPoint
		for k := range ps {
			rest := true
			for _, v := range ps[k].X[1:] {
				rest = rest && v == 0
			}
			if ps[k].Inf[0] == 1 && rest {
				zt = &ps[k]
			}
		}
		if ps[0].Kind != flow.Sink || ps[0].X[0] != 0 {
			t.Errorf("q=%g: first point %v kind %v, want K = 0 sink", q, ps[0].X, ps[0].Kind)
		}
		if zt == nil {
			t.Fatalf("q=%g: no fixed point at K = +inf", q)
		}
		if zt.Kind != flow.Critical || zt.Coordinates[0] != "exp(-K)" {
			t.Errorf("q=%g: K=+inf kind %v coordinate %s", q, zt.Kind, zt.Coordinates[0])
		}
		if yt, _ := flow.Lookup(zt.Exponents, "y_t"); math.Abs(yt-1) > 1e-6 {
			t.Errorf("q=%g: y_t = %g at K=+inf, want 1", q, yt)
		}
	}
}

// Spin-1 chain: at zero two-site couplings the bond matrix is the rank-one
// u(s)u(s') and W^b = (sum_s u(s)^2)^{b-1} W, so every (D, h) is fixed: a
// two-parameter family (exact by inspection), a sink since its only counted
// directions are two-site ones, which decimation makes irrelevant.
func TestSpin1Family(t *testing.T) {
	ps := findChain(t, NewSpin1(), 2)
	p := ps[0]
	if p.Family == nil || len(p.Family.Free) != 2 || p.Kind != flow.Sink {
		t.Fatalf("first point family %+v kind %v, want a two-parameter sink family", p.Family, p.Kind)
	}
	cs := NewSpin1().Couplings()
	if cs[p.Family.Free[0]].Name != "D" || cs[p.Family.Free[1]].Name != "h" {
		t.Errorf("free couplings %v, want D and h", p.Family.Free)
	}
	for k := range p.Family.Free {
		if r := p.Family.Range[k]; !math.IsInf(r[0], -1) || !math.IsInf(r[1], 1) {
			t.Errorf("range %v, want unbounded", r)
		}
	}
}

func BenchmarkFindAllChain(b *testing.B) {
	for _, tc := range []struct {
		name string
		m    *Model
	}{{"ising/b=2", NewIsing()}, {"potts2.5/b=2", mustPotts(b, 2.5)}, {"potts3/b=2", mustPotts(b, 3)}} {
		c := mustChain(b, tc.m, 2)
		b.Run(tc.name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				r, _ := flow.FindAll(context.Background(), c, nil)
				sinkG = float64(len(r.Points))
			}
		})
	}
}

// The spin-1 chain's zero-temperature point lies at infinity off the
// coupling axes (J -> +inf with K + J and D + 2J finite or running off):
// deep in the s = ±1 sector the chain is the Ising chain with exchange J,
// whose T = 0 fixed point has lambda = b in exp(-2J) (tanh J' = tanh^b J,
// Nelson and Fisher, Ann. Phys. 91, 226, 1975) and lambda_h = b^d = b
// (Nienhuis and Nauenberg, PRL 35, 477, 1975, from memory): a critical,
// discontinuity fixed point.
func TestSpin1ZeroTemperature(t *testing.T) {
	for _, b := range []int{2, 3} {
		var zt *flow.FixedPoint
		ps := findChain(t, NewSpin1(), b)
		for k := range ps {
			if ps[k].Inf[0] == 1 && ps[k].Kind == flow.Critical {
				zt = &ps[k]
			}
		}
		if zt == nil {
			t.Fatalf("b=%d: no critical fixed point at J = +inf", b)
		}
		if !zt.Discontinuity || !zt.ZeroTemperature || zt.Coordinates[0] != "exp(-2J)" {
			t.Errorf("b=%d: J=+inf point disc %v zeroT %v coords %v", b, zt.Discontinuity, zt.ZeroTemperature, zt.Coordinates)
		}
		yt, _ := flow.Lookup(zt.Exponents, "y_t")
		yh, _ := flow.Lookup(zt.Exponents, "y_h")
		if math.Abs(yt-1) > 1e-6 || math.Abs(yh-1) > 1e-6 {
			t.Errorf("b=%d: y_t = %g, y_h = %g, want 1 and 1", b, yt, yh)
		}
	}
}

// BenchmarkCritical is a full `critical` run on the d = 2 bond-moving Ising
// map: the fixed points, 64 samples of a temperature path and bisection to
// 1e-10 with the refinement by the scaling field.
func BenchmarkCritical(b *testing.B) {
	bm, err := NewBondMove(NewIsing(), 2, 2, MoveFirst)
	if err != nil {
		b.Fatal(err)
	}
	path := flow.Path{Name: "T", From: 1, To: 5, Samples: 64, Point: func(dst []float64, t float64) {
		dst[0], dst[1] = 1/t, 0
	}}
	b.ReportAllocs()
	for b.Loop() {
		r, _ := flow.FindAll(context.Background(), bm, &flow.FindSettings{Concurrent: 1})
		sp := flow.NewSinkPhases(bm, r.Points)
		xs, _ := flow.Crossings(context.Background(), sp, path, &flow.CrossingSettings{Tol: 1e-10})
		sinkG = float64(len(xs))
	}
}

// BenchmarkFindAllSpin1BondMove is the search for every fixed point of the
// spin-1 bond-moving map (five couplings), with eigen-analysis, on one core.
func BenchmarkFindAllSpin1BondMove(b *testing.B) {
	bm, err := NewBondMove(NewSpin1(), 2, 2, MoveFirst)
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	for b.Loop() {
		r, _ := flow.FindAll(context.Background(), bm, &flow.FindSettings{Concurrent: 1})
		sinkG = float64(len(r.Points))
	}
}
