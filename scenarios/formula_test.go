package scenarios_test

import (
	"errors"
	"math"
	"math/cmplx"
	"strings"
	"testing"

	"github.com/expr-lang/expr/vm"

	"scalewalk/decimation"
	"scalewalk/flow"
	"scalewalk/scenarios"
)

// critical returns the one finite critical fixed point of ps, with all
// symmetry-breaking couplings zero.
func critical(t *testing.T, m flow.Map, ps []flow.FixedPoint) flow.FixedPoint {
	t.Helper()
	var out []flow.FixedPoint
	for _, p := range ps {
		finite := true
		for _, v := range p.Inf {
			finite = finite && v == 0
		}
		if p.Kind == flow.Critical && finite {
			out = append(out, p)
		}
	}
	if len(out) != 1 {
		for _, p := range ps {
			t.Logf("fixed point %s: %v", p.Place(m), p.Kind)
		}
		t.Fatalf("%d finite critical fixed points, want 1", len(out))
	}
	return out[0]
}

// leadingSymmetric returns the largest |lambda| of the symmetric directions.
func leadingSymmetric(t *testing.T, p flow.FixedPoint) float64 {
	t.Helper()
	best := math.NaN()
	for _, d := range p.Directions {
		if d.Block != flow.SymmetricBlock {
			continue
		}
		if a := cmplx.Abs(d.Lambda); math.IsNaN(best) || a > best {
			best = a
		}
	}
	if math.IsNaN(best) {
		t.Fatalf("no symmetric direction at %v", p.X)
	}
	return best
}

// bisect finds a root of f in [lo, hi] (f(lo), f(hi) of opposite signs) to
// machine precision.
func bisect(f func(float64) float64, lo, hi float64) float64 {
	flo := f(lo)
	for i := 0; i < 200; i++ {
		mid := (lo + hi) / 2
		if mid == lo || mid == hi {
			break
		}
		fm := f(mid)
		if (fm < 0) == (flo < 0) {
			lo, flo = mid, fm
		} else {
			hi = mid
		}
	}
	return (lo + hi) / 2
}

// The mk-formula scenario writes the Migdal-Kadanoff recursion of the square
// Ising model (b = 2, bonds moved first) as a user formula.
//
// Source: R. K. Pathria, P. D. Beale, Statistical Mechanics, ch. 14 (the
// Migdal-Kadanoff problem): x' = 2x^2/(1 + x^4) with x = exp(-2K), fixed
// point x* = 0.5437, eigenvalue lambda = 1.6785, nu = ln 2/ln lambda = 1.338.
//
// Closed forms derived by hand from that recursion (the digits below come
// from them, not from the code): the fixed point solves x^4 - 2x + 1 = 0 =
// (x - 1)(x^3 + x^2 + x - 1), so x* is the real root of x^3 + x^2 + x - 1 in
// (0, 1). dx'/dx = 4x(1 - x^4)/(1 + x^4)^2, and with 1 + x^4 = 2x at the
// fixed point, lambda = (1 - x^4)/x = (2 - 2x)/x = 2/x* - 2. (An eigenvalue
// at a fixed point does not depend on the coordinate, so lambda in K is the
// same.)
//
// The built-in engine decimation.NewBondMove(ising, d = 2, b = 2,
// move-first) is the same scheme; both maps' critical points must agree.
func TestMKFormulaAgainstPathriaAndEngine(t *testing.T) {
	s := mustLoad(t, "mk-formula")
	b := mustBuild(t, s, nil)
	if got := flow.Names(b.Map); len(got) != 1 || got[0] != "K" {
		t.Fatalf("couplings %v, want [K]", got)
	}
	if b.Map.Rescale() != 2 || b.Map.Dimension() != 2 {
		t.Errorf("b = %g, d = %g; want 2, 2", b.Map.Rescale(), b.Map.Dimension())
	}
	p := critical(t, b.Map, findAll(t, b.Map))
	K := p.X[0]
	x := math.Exp(-2 * K)
	lambda := leadingSymmetric(t, p)

	// The book's four decimals.
	if math.Abs(x-0.5437) > bookTol {
		t.Errorf("x* = exp(-2K*) = %.6f, want 0.5437 (Pathria and Beale)", x)
	}
	if math.Abs(lambda-1.6785) > bookTol {
		t.Errorf("lambda = %.6f, want 1.6785 (Pathria and Beale)", lambda)
	}
	// nu = 1.338 (Pathria and Beale; three decimals, so 1e-3).
	const nuTol = 1e-3
	if nu := math.Ln2 / math.Log(lambda); math.Abs(nu-1.338) > nuTol {
		t.Errorf("nu = %.5f, want 1.338", nu)
	}
	// The closed forms derived above, to the finder's accuracy.
	xStar := bisect(func(x float64) float64 { return x*x*x + x*x + x - 1 }, 0, 1)
	if math.Abs(x-xStar) > newtonTol {
		t.Errorf("x* = %.15f, want the root of x^3 + x^2 + x - 1 = %.15f", x, xStar)
	}
	if want := 2/xStar - 2; math.Abs(lambda-want) > jacTol {
		t.Errorf("lambda = %.12f, want 2/x* - 2 = %.12f", lambda, want)
	}
	if yt, ok := flow.Lookup(p.Exponents, "y_t"); !ok || math.Abs(yt-math.Log(2/xStar-2)/math.Ln2) > jacTol {
		t.Errorf("y_t = %v (%v), want ln(2/x* - 2)/ln 2", yt, ok)
	}

	// Against the built-in engine.
	bm, err := decimation.NewBondMove(decimation.NewIsing(), 2, 2, decimation.MoveFirst)
	if err != nil {
		t.Fatal(err)
	}
	ep := critical(t, bm, findAll(t, bm))
	hi := flow.Index(bm, "h")
	ki := flow.Index(bm, "K")
	if ki < 0 || hi < 0 || ep.X[hi] != 0 {
		t.Fatalf("engine critical point %s", ep.Place(bm))
	}
	if math.Abs(ep.X[ki]-K) > jacTol {
		t.Errorf("engine K* = %.12f, user formula K* = %.12f", ep.X[ki], K)
	}
	if el := leadingSymmetric(t, ep); math.Abs(el-lambda) > jacTol {
		t.Errorf("engine lambda = %.12f, user formula lambda = %.12f", el, lambda)
	}
	// The two maps agree pointwise too, on the line h = 0 (closeTol: both
	// evaluate tanh K' = tanh^2 2K by different routes; relative).
	for _, k := range []float64{0.05, 0.3, 0.9, 2.5, -0.7} {
		u := []float64{0}
		b.Map.Step(u, []float64{k})
		e := make([]float64, 2)
		in := make([]float64, 2)
		in[ki] = k
		bm.Step(e, in)
		if math.Abs(u[0]-e[ki]) > 1e-9*(1+math.Abs(e[ki])) {
			t.Errorf("K = %g: user K' = %.15g, engine K' = %.15g", k, u[0], e[ki])
		}
	}
}

// phiNvL is phi(K) = (e^{3K} + e^{-K}) / (e^{3K} + 3 e^{-K}) of the
// first-order cumulant recursion (Niemeijer and van Leeuwen, Physica 71, 17,
// 1974; from memory).
func phiNvL(K float64) float64 {
	return (math.Exp(3*K) + math.Exp(-K)) / (math.Exp(3*K) + 3*math.Exp(-K))
}

// The cumulant-formula scenario: K' = 2 w K phi(K)^2 on the triangular
// lattice, b = sqrt 3 (Th. Niemeijer, J. M. J. van Leeuwen, Physica 71, 17,
// 1974; from memory).
//
// Fixed point by hand: K' = K needs phi = 1/sqrt(2w). Multiplying numerator
// and denominator by e^K, phi = (e^{4K} + 1)/(e^{4K} + 3), so phi = p gives
// e^{4K} = (3p - 1)/(1 - p); at w = 1, p = 1/sqrt 2 this is
// (3 - sqrt 2)/(sqrt 2 - 1) = 1 + 2 sqrt 2: K* = ln(1 + 2 sqrt 2)/4
// (= 0.3356, the published value, from memory).
//
// Eigenvalue by hand: dK'/dK = 2w phi^2 + 4wK phi phi', with phi = N/D,
// N = e^{3K} + e^{-K}, D = e^{3K} + 3e^{-K}, N' = 3e^{3K} - e^{-K},
// D' = 3e^{3K} - 3e^{-K}, phi' = (N'D - ND')/D^2. y_t = ln lambda/ln sqrt 3
// ("about 0.88", from memory).
func TestCumulantFormulaAgainstNiemeijerVanLeeuwen(t *testing.T) {
	s := mustLoad(t, "cumulant-formula")
	b := mustBuild(t, s, nil)
	if math.Abs(b.Map.Rescale()-math.Sqrt(3)) > closeTol {
		t.Errorf("b = %.16g, want sqrt 3", b.Map.Rescale())
	}
	p := critical(t, b.Map, findAll(t, b.Map))
	K := p.X[0]
	KStar := math.Log(1+2*math.Sqrt2) / 4
	if math.Abs(K-KStar) > newtonTol {
		t.Errorf("K* = %.15f, want ln(1 + 2 sqrt 2)/4 = %.15f", K, KStar)
	}
	// The published 0.3356 (four decimals, from memory).
	if math.Abs(K-0.3356) > bookTol {
		t.Errorf("K* = %.6f, want 0.3356", K)
	}
	if math.Abs(phiNvL(KStar)-1/math.Sqrt2) > closeTol {
		t.Errorf("phi(K*) = %.16f, want 1/sqrt 2", phiNvL(KStar))
	}
	dK := func(K, w float64) float64 {
		e3, em := math.Exp(3*K), math.Exp(-K)
		N, D := e3+em, e3+3*em
		Np, Dp := 3*e3-em, 3*e3-3*em
		phi := N / D
		phip := (Np*D - N*Dp) / (D * D)
		return 2*w*phi*phi + 4*w*K*phi*phip
	}
	lambdaHand := dK(KStar, 1)
	lambda := leadingSymmetric(t, p)
	if math.Abs(lambda-lambdaHand) > jacTol {
		t.Errorf("lambda = %.12f, want dK'/dK at K* = %.12f", lambda, lambdaHand)
	}
	ytHand := math.Log(lambdaHand) / math.Log(math.Sqrt(3))
	yt, ok := flow.Lookup(p.Exponents, "y_t")
	if !ok || math.Abs(yt-ytHand) > jacTol {
		t.Errorf("y_t = %v (%v), want ln(lambda)/ln(sqrt 3) = %.12f", yt, ok, ytHand)
	}
	// "y_t about 0.88" (two decimals, from memory): 0.01.
	const roughTol = 0.01
	if math.Abs(yt-0.88) > roughTol {
		t.Errorf("y_t = %.4f, want about 0.88", yt)
	}
	// The formula itself against the closed form at a few K (closeTol,
	// relative: the interpreter against Go's math).
	for _, k := range []float64{0.05, 0.3, 1.2, -0.4} {
		dst := []float64{0}
		b.Map.Step(dst, []float64{k})
		want := 2 * k * phiNvL(k) * phiNvL(k)
		if math.Abs(dst[0]-want) > closeTol*(1+math.Abs(want)) {
			t.Errorf("K = %g: K' = %.16g, want 2K phi^2 = %.16g", k, dst[0], want)
		}
	}
}

// --set w=1.1 on cumulant-formula changes the map: K' = 2 (1.1) K phi(K)^2
// (by hand from the file's formula), and the fixed point moves to
// phi = 1/sqrt(2.2), K* = ln((3p - 1)/(1 - p))/4 (derived in the comment of
// the test above).
func TestCumulantSetOverride(t *testing.T) {
	s := mustLoad(t, "cumulant-formula")
	b1 := mustBuild(t, s, nil)
	b2 := mustBuild(t, s, map[string]string{"w": "1.1"})
	if w, ok := b2.Params["w"].(float64); !ok || w != 1.1 {
		t.Errorf("Params[w] = %v, want 1.1", b2.Params["w"])
	}
	const K = 0.3
	d1, d2 := []float64{0}, []float64{0}
	b1.Map.Step(d1, []float64{K})
	b2.Map.Step(d2, []float64{K})
	want := 2 * 1.1 * K * phiNvL(K) * phiNvL(K)
	if math.Abs(d2[0]-want) > closeTol {
		t.Errorf("w = 1.1: K'(0.3) = %.16g, want %.16g", d2[0], want)
	}
	if math.Abs(d2[0]-d1[0]) < 0.05*want {
		t.Errorf("--set w=1.1 did not change the map: %g and %g", d1[0], d2[0])
	}
	// The override must not leak into the scenario: a second plain build is
	// the w = 1 map.
	d3 := []float64{0}
	mustBuild(t, s, nil).Map.Step(d3, []float64{K})
	if d3[0] != d1[0] {
		t.Errorf("after --set, a plain Build gives K' = %g, want %g", d3[0], d1[0])
	}
	pw := 1 / math.Sqrt(2.2)
	KStar := math.Log((3*pw-1)/(1-pw)) / 4
	p := critical(t, b2.Map, findAll(t, b2.Map))
	if math.Abs(p.X[0]-KStar) > newtonTol {
		t.Errorf("w = 1.1: K* = %.15f, want %.15f", p.X[0], KStar)
	}
}

// Decimation of the Ising chain in a field, b = 2 (D. R. Nelson, M. E.
// Fisher, Ann. Phys. 91, 226, 1975): two couplings K and h, written with
// logcosh to stay finite.
const nelsonFisherTOML = `[scenario]
name = "chain-field"

[recursion]
b = 2
d = 1
symmetry = "Z2 spin flip"

[[recursion.coupling]]
name = "K"
role = "exchange"
next = "(logcosh(2*K + h) + logcosh(2*K - h) - 2*logcosh(h))/4"

[[recursion.coupling]]
name = "h"
role = "field"
next = "h + (logcosh(2*K + h) - logcosh(2*K - h))/2"
`

// A two-coupling user recursion (the Nelson-Fisher chain map above) checked
// against outside facts: at h = 0, tanh K' = tanh^2 K and h' = 0 (Nelson and
// Fisher 1975); in a field, the ratio r = lambda_-/lambda_+ of the
// transfer-matrix eigenvalues lambda_+- = e^K cosh h +- sqrt(e^{2K} sinh^2 h +
// e^{-2K}) (R. J. Baxter, Exactly Solved Models, 1982, ch. 2; the reference
// list gives psi = ln lambda_+ per site) squares under the step, because
// the decimated transfer matrix is T(K', h') = c T(K, h)^2.
func TestUserTwoCouplingsChain(t *testing.T) {
	s, err := scenarios.Parse("chain-field.toml", []byte(nelsonFisherTOML))
	if err != nil {
		t.Fatal(err)
	}
	b := mustBuild(t, s, nil)
	cs := b.Map.Couplings()
	if len(cs) != 2 || cs[0].Role != flow.Exchange || cs[1].Role != flow.Field || !cs[0].Symmetric || cs[1].Symmetric {
		t.Fatalf("couplings %+v: want K exchange (symmetric), h field (breaking, by default)", cs)
	}
	dst := make([]float64, 2)
	for _, K := range []float64{0.1, 0.5, 1.3, 4} {
		b.Map.Step(dst, []float64{K, 0})
		if th := math.Tanh(K); math.Abs(math.Tanh(dst[0])-th*th) > closeTol || dst[1] != 0 {
			t.Errorf("K = %g, h = 0: tanh K' = %.16g, h' = %g; want tanh^2 K = %.16g, 0", K, math.Tanh(dst[0]), dst[1], th*th)
		}
	}
	ratio := func(K, h float64) float64 {
		root := math.Sqrt(math.Exp(2*K)*math.Sinh(h)*math.Sinh(h) + math.Exp(-2*K))
		a := math.Exp(K) * math.Cosh(h)
		return (a - root) / (a + root)
	}
	for _, x := range [][2]float64{{0.3, 0.2}, {0.8, -0.5}, {1.1, 1.4}, {-0.6, 0.3}} {
		b.Map.Step(dst, x[:])
		r := ratio(x[0], x[1])
		if got := ratio(dst[0], dst[1]); math.Abs(got-r*r) > 1e-12 {
			t.Errorf("K, h = %v: r(K', h') = %.15g, want r(K, h)^2 = %.15g", x, got, r*r)
		}
	}
}

// Arithmetic of the formula language against elementary mathematics (common
// practice for the notation: powers bind tighter than unary minus and group
// to the right; division is real).
func TestFormulaArithmetic(t *testing.T) {
	env := map[string]any{"K": 0.5, "pi": math.Pi}
	for _, tc := range []struct {
		src  string
		want float64
	}{
		{"-2^2", -4},
		{"2^3^2", 512},
		{"2**3**2", 512},
		{"7/2", 3.5},
		{"2*-K", -1},
		{"2^-1", 0.5},
		{"pi", math.Pi},
		{"exp(1)", math.E},
		{"atan2(1, 1)", math.Pi / 4},
		{"pow(2, 10)", 1024},
		{"sqrt(2)^2", 2},
		{"logcosh(0.5)", math.Log(math.Cosh(0.5))},
		// ln cosh x = x - ln 2 + ln(1 + e^{-2x}): at x = 400, x - ln 2.
		{"logcosh(-400)", 400 - math.Ln2},
		// ln(1 + e^x) = x + ln(1 + e^{-x}): at x = 800, 800.
		{"log1pexp(800)", 800},
		{"log1pexp(-3)", math.Log1p(math.Exp(-3))},
		{"(K + 1)*(K - 1)", -0.75},
	} {
		f, err := scenarios.CompileFormula(tc.src, []string{"K"})
		if err != nil {
			t.Errorf("%q: %v", tc.src, err)
			continue
		}
		var v vm.VM
		got, err := f.Eval(&v, env)
		if err != nil || math.Abs(got-tc.want) > closeTol*(1+math.Abs(tc.want)) {
			t.Errorf("%q = %.16g (%v), want %.16g", tc.src, got, err, tc.want)
		}
	}
}

// Every function that FunctionNames() lists can be called in a formula
// (with one or two arguments). Regression: abs, min and max were listed but
// the expression parser read them as its own builtins, which the checker
// rejected; abs must work, and no listed name may be unusable.
func TestFormulaListedFunctionsCallable(t *testing.T) {
	for _, name := range scenarios.FunctionNames() {
		_, e1 := scenarios.CompileFormula(name+"(K)", []string{"K"})
		_, e2 := scenarios.CompileFormula(name+"(K, 0.5)", []string{"K"})
		if e1 != nil && e2 != nil {
			t.Errorf("listed function %s cannot be called: %v / %v", name, e1, e2)
		}
	}
	// |x| for a negative argument (elementary).
	f, err := scenarios.CompileFormula("abs(K - 1)", []string{"K"})
	if err != nil {
		t.Fatalf("abs(K - 1): %v", err)
	}
	var v vm.VM
	if got, err := f.Eval(&v, map[string]any{"K": 0.25, "pi": math.Pi}); err != nil || got != 0.75 {
		t.Errorf("abs(0.25 - 1) = %g (%v), want 0.75", got, err)
	}
}

// A listed function called with the wrong number of arguments is reported
// as that, not as an unknown function.
func TestFormulaArityMessage(t *testing.T) {
	for _, src := range []string{"exp(K, K)", "abs(K, K)", "pow(K)", "atan2(K)"} {
		_, err := scenarios.CompileFormula(src, []string{"K"})
		var fe *scenarios.FormulaError
		if !errors.As(err, &fe) {
			t.Errorf("%s: %v, want a *FormulaError", src, err)
			continue
		}
		if strings.Contains(fe.Msg, "unknown function") || !strings.Contains(fe.Msg, "argument") {
			t.Errorf("%s: message %q, want one about the number of arguments", src, fe.Msg)
		}
	}
}

// Integer literals in a formula must follow real arithmetic: 10^5 four times
// over is 1e20, and 2^63 - 1 plus 1 is 2^63. (Regression: the expression
// library evaluated integer-only subexpressions in int64, which wraps.)
func TestFormulaIntegerLiteralsAreReal(t *testing.T) {
	for _, tc := range []struct {
		src  string
		want float64
	}{
		{"100000*100000*100000*100000", 1e20},
		{"9223372036854775807 + 1", 9223372036854775808},
		{"3037000500*3037000500", 3037000500.0 * 3037000500.0},
	} {
		f, err := scenarios.CompileFormula(tc.src, nil)
		if err != nil {
			t.Errorf("%q: %v", tc.src, err)
			continue
		}
		var v vm.VM
		got, err := f.Eval(&v, map[string]any{"pi": math.Pi})
		if err != nil || math.Abs(got-tc.want) > closeTol*tc.want {
			t.Errorf("%q = %g (%v), want %g", tc.src, got, err, tc.want)
		}
	}
}

// Formulas outside the language are rejected with a *FormulaError that
// quotes the formula (never a panic).
func TestFormulaRejects(t *testing.T) {
	for _, src := range []string{
		"", "   ", "2*K +", "2*Q", "len(K)", "K > 1 ? 1 : 0", "K > 1", "K == 1", "!K", "not K",
		"K % 2", "K in [1]", "\"s\"", "'s'", "K.x", "K[0]", "[1, 2]", "{a: 1}", "true", "nil",
		"let x = 1; x", "K |> exp", "exp(K, K)", "pow(K)", "foo(K)", "now()", "$env", "env",
		"1e400", "exp", "exp + 1", "K ?? 1", "1..3", "u", "#", strings.Repeat("K+", 3000) + "K",
	} {
		var err error
		if perr := noPanic(src, func() error { _, err = scenarios.CompileFormula(src, []string{"K"}); return nil }); perr != nil {
			t.Errorf("%v", perr)
			continue
		}
		var fe *scenarios.FormulaError
		if !errors.As(err, &fe) || !errors.Is(err, scenarios.ErrFormula) {
			t.Errorf("CompileFormula(%.40q) = %v (%T), want a *FormulaError", src, err, err)
			continue
		}
		if fe.Msg == "" || !strings.Contains(fe.Error(), "formula ") {
			t.Errorf("CompileFormula(%.40q): empty or unquoted message %q", src, fe.Error())
		}
	}
}

// An unknown function is reported as one, with the accepted functions
// listed. (Regression: the checker met the callee as a plain identifier
// first and reported an unknown symbol, listing the couplings instead.)
func TestFormulaUnknownFunctionMessage(t *testing.T) {
	_, err := scenarios.CompileFormula("foo(K)", []string{"K"})
	var fe *scenarios.FormulaError
	if !errors.As(err, &fe) {
		t.Fatalf("foo(K): %v, want a *FormulaError", err)
	}
	for _, w := range []string{"unknown function", "exp", "logcosh"} {
		if !strings.Contains(fe.Msg, w) {
			t.Errorf("foo(K): message %q does not contain %q", fe.Msg, w)
		}
	}
}
