package flow_test

import (
	"context"
	"math"
	"math/cmplx"
	"testing"

	"gonum.org/v1/gonum/mat"

	"scalewalk/flow"
	"scalewalk/flow/flowtest"
)

// Named tolerances, each with its reason.
const (
	closeTol  = 1e-12 // closed forms evaluated in floating point
	newtonTol = 1e-10 // fixed points located by Newton at its default tolerance
	richTol   = 1e-7  // Richardson-extrapolated Jacobians and one-sided limits
)

func find(t *testing.T, m flow.Map) []flow.FixedPoint {
	t.Helper()
	r, err := flow.FindAll(context.Background(), m, nil)
	if err != nil {
		t.Fatal(err)
	}
	flow.SortPoints(r.Points)
	return r.Points
}

func absLambdas(p flow.FixedPoint) []float64 {
	var out []float64
	for _, d := range p.Directions {
		out = append(out, cmplx.Abs(d.Lambda))
	}
	return out
}

// The b = 2 Ising chain in a field, closed form of Nelson and Fisher
// (Ann. Phys. 91, 226, 1975). Expected: the line K = 0 is a family of
// fixed points along h, stable (K' ~ K^2); K = +inf, h = 0 is a
// zero-temperature critical point with y = 1 in e^{-2K} (tanh K' = tanh^2 K
// gives u' = 2u + O(u^2) for u = e^{-2K}: derivation in the comment of
// flowtest.IsingChain2) and y_h = d = 1 (B. Nienhuis, M. Nauenberg, PRL 35,
// 477, 1975, from memory), a discontinuity fixed point.
func TestFindIsingChain(t *testing.T) {
	ps := find(t, flowtest.IsingChain2{})
	if len(ps) != 2 {
		for _, p := range ps {
			t.Logf("found %v inf %v", p.X, p.Inf)
		}
		t.Fatalf("found %d fixed points, want 2 (the K = 0 family and K = +inf)", len(ps))
	}
	fam := ps[0]
	if fam.Family == nil || len(fam.Family.Free) != 1 || fam.Family.Free[0] != 1 {
		t.Fatalf("first point: family %+v, want a family free along h", fam.Family)
	}
	if r := fam.Family.Range[0]; !math.IsInf(r[0], -1) || !math.IsInf(r[1], 1) {
		t.Errorf("family range %v, want [-inf, +inf]", r)
	}
	if fam.X[0] != 0 || fam.Kind != flow.Sink {
		t.Errorf("family at K = %g kind %v, want K = 0, sink", fam.X[0], fam.Kind)
	}
	zt := ps[1]
	if zt.Inf[0] != 1 || zt.X[1] != 0 || zt.Coordinates[0] != "exp(-2K)" {
		t.Fatalf("second point inf %v x %v coords %v, want K = +inf, h = 0 in exp(-2K)", zt.Inf, zt.X, zt.Coordinates)
	}
	if zt.Kind != flow.Critical || !zt.Discontinuity || !zt.ZeroTemperature {
		t.Errorf("K = +inf: kind %v discontinuity %v, want critical and discontinuity", zt.Kind, zt.Discontinuity)
	}
	for _, l := range absLambdas(zt) {
		if math.Abs(l-2) > richTol {
			t.Errorf("K = +inf eigenvalue %g, want 2 (tol %g)", l, richTol)
		}
	}
	if yh, _ := flow.Lookup(zt.Exponents, "y_h"); math.Abs(yh-1) > richTol {
		t.Errorf("y_h = %g, want 1 = d", yh)
	}
	if d, ok := flow.Lookup(zt.Exponents, "delta"); !ok || !math.IsInf(d, 1) {
		t.Errorf("delta = %g, want +Inf (y_h = d)", d)
	}
}

// Bond-moving recursion of the square Ising model, x' = 2x^2/(1+x^4) with
// x = e^{-2K} (R. K. Pathria, P. D. Beale, Statistical Mechanics, ch. 14):
// x* = 0.5437, lambda = 1.6785, nu = 1.338 to the printed digits; beyond
// them, x* solves x^4 - 2x + 1 = 0 (from x' = x), found here by bisection,
// and lambda = dx'/dx at x*, independent of the coordinate. The book prints
// lambda to four decimals, truncated (1.67857...), hence the 1e-4 there.
func TestFindMigdalKadanoff(t *testing.T) {
	ps := find(t, flowtest.MigdalKadanoff2{})
	if len(ps) != 3 {
		t.Fatalf("found %d fixed points, want 3 (K = 0, K*, K = +inf)", len(ps))
	}
	lo, hi := 0.3, 0.9
	for k := 0; k < 200; k++ {
		mid := (lo + hi) / 2
		if mid*mid*mid*mid-2*mid+1 > 0 {
			lo = mid
		} else {
			hi = mid
		}
	}
	xs := (lo + hi) / 2
	lam := 4*xs/(1+xs*xs*xs*xs) - 8*math.Pow(xs, 5)/math.Pow(1+xs*xs*xs*xs, 2)
	crit := ps[1]
	if crit.Kind != flow.Critical {
		t.Fatalf("middle point kind %v, want critical", crit.Kind)
	}
	if got, want := math.Exp(-2*crit.X[0]), xs; math.Abs(got-want) > newtonTol {
		t.Errorf("x* = %.12f, want %.12f", got, want)
	}
	if math.Abs(math.Exp(-2*crit.X[0])-0.5437) > 5e-5 {
		t.Errorf("x* = %.5f, want 0.5437 (Pathria and Beale)", math.Exp(-2*crit.X[0]))
	}
	if got := cmplx.Abs(crit.Directions[0].Lambda); math.Abs(got-lam) > 1e-9 || math.Abs(got-1.6785) > 1e-4 {
		t.Errorf("lambda = %.10f, want %.10f (closed form) and 1.6785 (Pathria and Beale)", got, lam)
	}
	if nu, _ := flow.Lookup(crit.Exponents, "nu"); math.Abs(nu-1.338) > 5e-4 {
		t.Errorf("nu = %.4f, want 1.338 (Pathria and Beale)", nu)
	}
	if ps[0].Kind != flow.Sink || ps[0].X[0] != 0 {
		t.Errorf("first point %v kind %v, want K = 0 sink", ps[0].X, ps[0].Kind)
	}
	if ps[2].Kind != flow.Sink || ps[2].Inf[0] != 1 || ps[2].Discontinuity {
		t.Errorf("last point inf %v kind %v disc %v, want K = +inf sink (no field in this map)", ps[2].Inf, ps[2].Kind, ps[2].Discontinuity)
	}
}

// Linear maps x' = A x: the eigenvalues of A are known exactly; the
// classification rules of package flow are checked on them (a unit test of
// the mechanism, no outside value needed beyond linear algebra).
func TestLinearClassification(t *testing.T) {
	ln2 := math.Log(2)
	cases := []struct {
		name   string
		m      flow.Map
		a      [][]float64
		kind   flow.Kind
		lambda []complex128
		phi    float64 // NaN: no crossover exponent expected
	}{
		{"critical", flowtest.Linear{A: [][]float64{{2, 1}, {0, 0.5}}, B: 2}, nil, flow.Critical, []complex128{2, 0.5}, math.NaN()},
		{"multicritical", nil, [][]float64{{4, 0, 0}, {0, 2, 0}, {0, 0, 0.5}}, flow.Multicritical, []complex128{4, 2, 0.5}, 0.5},
		{"sink", flowtest.Linear{A: [][]float64{{0.5, 0.1}, {0, 0.25}}, B: 2}, nil, flow.Sink, []complex128{0.5, 0.25}, math.NaN()},
		// A rotation-dilation has the complex pair 1.2 (cos t ± i sin t):
		// every direction relevant and no declared symmetry, so a source.
		{"complex-source", flowtest.Linear{A: [][]float64{{1.2 * math.Cos(0.3), -1.2 * math.Sin(0.3)}, {1.2 * math.Sin(0.3), 1.2 * math.Cos(0.3)}}, B: 2},
			nil, flow.Source, []complex128{cmplx.Rect(1.2, 0.3), cmplx.Rect(1.2, -0.3)}, math.NaN()},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			m := c.m
			if m == nil {
				// With a declared symmetry, two relevant directions make a
				// multicritical point.
				m = symmetric{flowtest.Linear{A: c.a, B: 2}}
			}
			a := c.a
			if a == nil {
				a = c.m.(flowtest.Linear).A
			}
			p := flow.Analyse(m, make([]float64, len(a)), nil, nil)
			if p.Kind != c.kind {
				t.Errorf("kind %v, want %v", p.Kind, c.kind)
			}
			phi, ok := flow.Lookup(p.Exponents, "phi")
			if math.IsNaN(c.phi) && ok {
				t.Errorf("phi = %g reported, want none", phi)
			}
			if !math.IsNaN(c.phi) && (!ok || math.Abs(phi-c.phi) > closeTol) {
				t.Errorf("phi = %g (%v), want y_2/y_1 = %g", phi, ok, c.phi)
			}
			for _, want := range c.lambda {
				found := false
				for _, d := range p.Directions {
					if cmplx.Abs(d.Lambda-want) < closeTol {
						found = true
						if math.Abs(d.Y-math.Log(cmplx.Abs(want))/ln2) > closeTol {
							t.Errorf("y = %g for lambda %v", d.Y, want)
						}
					}
				}
				if !found {
					t.Errorf("eigenvalue %v not found", want)
				}
			}
			for _, d := range p.Directions {
				// Left and right eigenvectors are normalised, l·r = 1,
				// and l A = lambda l.
				var dot complex128
				for i := range d.Left {
					dot += d.Left[i] * d.Right[i]
				}
				if cmplx.Abs(dot-1) > closeTol {
					t.Errorf("l·r = %v, want 1", dot)
				}
				for j := range a {
					var s complex128
					for i := range a {
						s += d.Left[i] * complex(a[i][j], 0)
					}
					if cmplx.Abs(s-d.Lambda*d.Left[j]) > 1e-9 {
						t.Errorf("left eigenvector fails lA = lambda l at %d", j)
					}
				}
			}
		})
	}
}

// A map that declares no symmetry and whose every direction is relevant is
// a source; the same eigenvalues with a declared symmetry are a
// multicritical point with crossover exponent phi = y_2/y_1.
func TestSourceAndCrossover(t *testing.T) {
	m := flowtest.Linear{A: [][]float64{{8, 0}, {0, 2}}, B: 2}
	if p := flow.Analyse(m, []float64{0, 0}, nil, nil); p.Kind != flow.Source {
		t.Errorf("kind %v, want source", p.Kind)
	}
	p := flow.Analyse(symmetric{m}, []float64{0, 0}, nil, nil)
	if p.Kind != flow.Multicritical {
		t.Fatalf("kind %v, want multicritical", p.Kind)
	}
	if phi, _ := flow.Lookup(p.Exponents, "phi"); math.Abs(phi-1.0/3) > closeTol {
		t.Errorf("phi = %g, want y_2/y_1 = 1/3", phi)
	}
}

type symmetric struct{ flowtest.Linear }

func (symmetric) Symmetry() string { return "test symmetry" }

// The two families of x' = (x^2, y): x = 0 (stable) and x = 1 (lambda = 2).
func TestFamilies(t *testing.T) {
	ps := find(t, flowtest.Plane{})
	if len(ps) != 2 {
		t.Fatalf("found %d fixed points, want the two lines x = 0 and x = 1", len(ps))
	}
	for k, want := range []float64{0, 1} {
		p := ps[k]
		if p.Family == nil || p.Family.Free[0] != 1 || math.Abs(p.X[0]-want) > newtonTol {
			t.Errorf("point %d: x = %g family %+v, want the line x = %g along y", k, p.X[0], p.Family, want)
		}
		if p.X[1] != 0 {
			t.Errorf("representative y = %g, want 0", p.X[1])
		}
	}
	if ps[0].Kind != flow.Sink || ps[1].Kind != flow.Critical {
		t.Errorf("kinds %v, %v; want sink, critical", ps[0].Kind, ps[1].Kind)
	}
}

// 2D Ising: y_t = 1, y_h = 15/8 give nu = 1, eta = 1/4, alpha = 0,
// beta = 1/8, gamma = 7/4, delta = 15 (L. Onsager, Phys. Rev. 65, 117,
// 1944; C. N. Yang, Phys. Rev. 85, 808, 1952).
func TestScalingExponents(t *testing.T) {
	es := flow.ScalingExponents(1, 15.0/8, 2, 1e-9)
	want := map[string]float64{"nu": 1, "eta": 0.25, "alpha": 0, "beta": 0.125, "gamma": 1.75, "delta": 15}
	for name, w := range want {
		if got, ok := flow.Lookup(es, name); !ok || math.Abs(got-w) > closeTol {
			t.Errorf("%s = %g, want %g (Onsager 1944; Yang 1952)", name, got, w)
		}
	}
}

// Trajectories stop for the stated reasons (a check of the mechanism; the
// row convention is compared with the map's own step, no outside value).
func TestTraceStops(t *testing.T) {
	mk := flowtest.MigdalKadanoff2{}
	if tr := flow.Trace(mk, []float64{0.2}, 100, nil); tr.Stop != flow.Converged || math.Abs(tr.Points[len(tr.Points)-1].X[0]) > 1e-10 {
		t.Errorf("from K = 0.2 below K*: stop %v at %v, want converged to 0", tr.Stop, tr.Points[len(tr.Points)-1].X)
	}
	if tr := flow.Trace(mk, []float64{0.5}, 100, nil); tr.Stop != flow.Escaped {
		t.Errorf("from K = 0.5 above K*: stop %v, want escaped", tr.Stop)
	}
	if tr := flow.Trace(mk, []float64{0.2}, 3, nil); tr.Stop != flow.MaxSteps || len(tr.Points) != 4 {
		t.Errorf("3 steps: stop %v with %d rows, want steps done with 4 rows", tr.Stop, len(tr.Points))
	}
	if tr := flow.Trace(nanMap{}, []float64{1}, 10, nil); tr.Stop != flow.NotFinite {
		t.Errorf("NaN map: stop %v, want not finite", tr.Stop)
	}
	// Row n holds g(x_n) of the step out of x_n: check on the chain.
	ic := flowtest.IsingChain2{}
	tr := flow.Trace(ic, []float64{0.7, 0.2}, 2, nil)
	next := make([]float64, 2)
	g := ic.Step(next, tr.Points[1].X)
	if tr.Points[1].G != g {
		t.Errorf("row 1 g = %g, want g(x_1) = %g", tr.Points[1].G, g)
	}
}

type nanMap struct{}

func (nanMap) Couplings() []flow.Coupling { return []flow.Coupling{{Name: "K", Symmetric: true}} }
func (nanMap) Rescale() float64           { return 2 }
func (nanMap) Dimension() float64         { return 1 }
func (nanMap) Step(dst, x []float64) float64 {
	dst[0] = math.NaN()
	return 0
}

// The Richardson Jacobian agrees with gonum's central differences on the
// closed-form chain map, and its error estimate bounds the difference.
func TestNumericalJacobian(t *testing.T) {
	m := flowtest.IsingChain2{}
	for _, x := range [][]float64{{0.3, 0.1}, {1.2, -0.4}, {-0.8, 0.9}} {
		got := mat.NewDense(2, 2, nil)
		errs := mat.NewDense(2, 2, nil)
		flow.NumericalJacobian(got, errs, m, x)
		// Exact derivatives of the closed form (Nelson and Fisher 1975):
		// dK'/dK = (tanh(2K+h) + tanh(2K-h))/2, dK'/dh = (tanh(2K+h) - tanh(2K-h))/4 - tanh(h)/2,
		// dh'/dK = tanh(2K+h) - tanh(2K-h), dh'/dh = 1 + (tanh(2K+h) + tanh(2K-h))/2.
		a, b, c := math.Tanh(2*x[0]+x[1]), math.Tanh(2*x[0]-x[1]), math.Tanh(x[1])
		want := [][]float64{{(a + b) / 2, (a-b)/4 - c/2}, {a - b, 1 + (a+b)/2}}
		for i := 0; i < 2; i++ {
			for j := 0; j < 2; j++ {
				if d := math.Abs(got.At(i, j) - want[i][j]); d > 1e-10 {
					t.Errorf("J[%d][%d] at %v = %.14g, want %.14g", i, j, x, got.At(i, j), want[i][j])
				} else if d > errs.At(i, j)+1e-13 {
					t.Errorf("J[%d][%d] at %v: error %g exceeds the estimate %g", i, j, x, d, errs.At(i, j))
				}
			}
		}
	}
}

func TestCheckMapOnKnownMaps(t *testing.T) {
	pts := [][]float64{{0.1, 0.2}, {-1, 0.5}, {3, -2}}
	if err := flowtest.CheckMap(flowtest.IsingChain2{}, pts, 1e-6); err != nil {
		t.Error(err)
	}
}

// faceMap has K' = K^2 + 3/16 (fixed at K = 1/4 and 3/4, with
// dK'/dK = 2K = 1/2 and 3/2) and h' = 2h - 1, so that in u = exp(2h) the
// face h = -inf is kept, u' = e^{-2} u^2, and holds the two K fixed points
// outside the symmetric subspace (a constructed known-answer map).
type faceMap struct{}

func (faceMap) Couplings() []flow.Coupling {
	m := flow.ExpCompact("h", 2, -1)
	m.Residual = "(q-1)-state Potts"
	return []flow.Coupling{
		{Name: "K", Role: flow.Exchange, Symmetric: true},
		{Name: "h", Role: flow.Field, Symmetric: false, Minus: m},
	}
}
func (faceMap) Rescale() float64   { return 2 }
func (faceMap) Dimension() float64 { return 1 }
func (faceMap) Symmetry() string   { return "test" }
func (faceMap) Step(dst, x []float64) float64 {
	dst[0] = x[0]*x[0] + 3.0/16
	dst[1] = 2*x[1] - 1
	return 0
}

// Fixed points off the symmetric subspace are classified by all their
// relevant directions and name the residual symmetry of the face.
func TestResidualSymmetry(t *testing.T) {
	ps := find(t, faceMap{})
	var onFace []flow.FixedPoint
	for _, p := range ps {
		if p.Inf[1] == -1 {
			onFace = append(onFace, p)
		}
	}
	if len(onFace) != 2 {
		t.Fatalf("%d fixed points on the face h = -inf, want 2", len(onFace))
	}
	for _, p := range onFace {
		wantKind := flow.Sink
		if math.Abs(p.X[0]-0.75) < newtonTol {
			wantKind = flow.Critical
		} else if math.Abs(p.X[0]-0.25) > newtonTol {
			t.Errorf("face point at K = %g, want 1/4 or 3/4", p.X[0])
		}
		if p.Kind != wantKind || p.Symmetric {
			t.Errorf("K = %g: kind %v symmetric %v, want %v off the symmetric subspace", p.X[0], p.Kind, p.Symmetric, wantKind)
		}
		named := false
		for _, n := range p.Notes {
			named = named || n == "residual symmetry: (q-1)-state Potts"
		}
		if !named {
			t.Errorf("K = %g: notes %v do not name the residual symmetry", p.X[0], p.Notes)
		}
		if p.Coordinates[1] != "exp(2h)" {
			t.Errorf("coordinate %q, want exp(2h)", p.Coordinates[1])
		}
	}
}

// rayMap keeps the direction (1, 1) at infinity off the axes: a' = a - c
// with c = ln(2)/2, b' = a' + (b - a)/2, so in the chart (u = exp(-a),
// b - a) it is u' = sqrt(2) u, (b - a)' = (b - a)/2, with a fixed point at
// u = 0, b - a = 0 and eigenvalues sqrt(2) and 1/2 (a constructed
// known-answer map). No finite fixed point exists, and the face a = +inf
// with b finite is not kept (b' runs off).
type rayMap struct{}

func (rayMap) Couplings() []flow.Coupling {
	return []flow.Coupling{
		{Name: "a", Role: flow.Exchange, Symmetric: true, Plus: flow.ExpCompact("a", 1, 1)},
		{Name: "b", Role: flow.Exchange, Symmetric: true},
	}
}
func (rayMap) Rescale() float64   { return 2 }
func (rayMap) Dimension() float64 { return 1 }
func (rayMap) Symmetry() string   { return "test" }
func (rayMap) Step(dst, x []float64) float64 {
	ap := x[0] - math.Ln2/2
	dst[0] = ap
	dst[1] = ap + (x[1]-x[0])/2
	return 0
}

func TestRayFixedPoint(t *testing.T) {
	ps := find(t, rayMap{})
	if len(ps) != 1 {
		t.Fatalf("%d fixed points, want 1 (at infinity along (1, 1))", len(ps))
	}
	p := ps[0]
	if p.Inf[0] != 1 || p.Inf[1] != 1 || p.Coordinates[0] != "exp(-a)" || p.Coordinates[1] != "b-a" {
		t.Errorf("inf %v coordinates %v, want both +inf in (exp(-a), b-a)", p.Inf, p.Coordinates)
	}
	if math.Abs(p.U[1]) > newtonTol {
		t.Errorf("b - a = %g, want 0", p.U[1])
	}
	want := []float64{math.Sqrt2, 0.5}
	for k, d := range p.Directions {
		if math.Abs(cmplx.Abs(d.Lambda)-want[k]) > richTol {
			t.Errorf("eigenvalue %d = %v, want %g", k, d.Lambda, want[k])
		}
	}
}
