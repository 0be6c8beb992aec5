package flow

import (
	"math"
	"testing"
)

// The Taylor series of ln(1 + t) and e^t (textbook series, e.g. Abramowitz
// and Stegun, Handbook of Mathematical Functions, 1964, 4.1.24 and 4.2.1):
// coefficients 1, −1/2, 1/3 and 1, 1, 1/2, 1/6.
func TestJetSeries(t *testing.T) {
	s := JetSpaceOf(1, 3)
	x := []float64{1, 1, 0, 0} // 1 + t
	l := make([]float64, 4)
	s.Log(l, x)
	for k, want := range []float64{0, 1, -0.5, 1.0 / 3} {
		if math.Abs(l[k]-want) > 1e-15 {
			t.Errorf("ln(1+t) coefficient %d = %g, want %g (A&S 4.1.24)", k, l[k], want)
		}
	}
	e := make([]float64, 4)
	s.Exp(e, []float64{0, 1, 0, 0})
	for k, want := range []float64{1, 1, 0.5, 1.0 / 6} {
		if math.Abs(e[k]-want) > 1e-15 {
			t.Errorf("e^t coefficient %d = %g, want %g (A&S 4.2.1)", k, e[k], want)
		}
	}
}

// Invariants in three variables to third order: ln(e^a) = a, e^a e^b =
// e^{a+b}, and the product is commutative; and the derivatives of
// f = e^{t1 t2 + t3} read from the jet equal the hand-computed ones.
func TestJetIdentities(t *testing.T) {
	s := JetSpaceOf(3, 3)
	n := s.Len()
	if n != 20 {
		t.Fatalf("Len = %d, want 20 (1 + 3 + 6 + 10 monomials)", n)
	}
	a := make([]float64, n)
	b := make([]float64, n)
	for k := range a {
		a[k] = 0.3 * math.Sin(float64(k)+1)
		b[k] = 0.2 * math.Cos(float64(3*k)+0.5)
	}
	ea, eb, sum, esum, prod, prod2, back := make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)
	s.Exp(ea, a)
	s.Exp(eb, b)
	for k := range sum {
		sum[k] = a[k] + b[k]
	}
	s.Exp(esum, sum)
	s.Mul(prod, ea, eb)
	s.Mul(prod2, eb, ea)
	s.Log(back, ea)
	for k := 0; k < n; k++ {
		if math.Abs(prod[k]-esum[k]) > 1e-14 || math.Abs(prod[k]-prod2[k]) > 1e-15 {
			t.Errorf("coefficient %d: e^a e^b = %g, e^b e^a = %g, e^(a+b) = %g", k, prod[k], prod2[k], esum[k])
		}
		if math.Abs(back[k]-a[k]) > 1e-14 {
			t.Errorf("coefficient %d: ln e^a = %g, want %g", k, back[k], a[k])
		}
	}
	// f = e^{t1 t2 + t3}: ∂1∂2 f = 1, ∂3 f = 1, ∂1∂2∂3 f = 1, ∂1² f = 0.
	u := make([]float64, n)
	u[s.Index(1, 1, 0)] = 1
	u[s.Index(0, 0, 1)] = 1
	f := make([]float64, n)
	s.Exp(f, u)
	for _, c := range []struct {
		alpha [3]int
		want  float64
	}{{[3]int{1, 1, 0}, 1}, {[3]int{0, 0, 1}, 1}, {[3]int{1, 1, 1}, 1}, {[3]int{2, 0, 0}, 0}, {[3]int{0, 0, 3}, 1}, {[3]int{0, 0, 2}, 1}} {
		if got := s.Derivative(f, c.alpha[:]...); math.Abs(got-c.want) > 1e-15 {
			t.Errorf("∂^%v f = %g, want %g", c.alpha, got, c.want)
		}
	}
	if s.Index(2, 2, 0) != -1 || s.Index(1, 1) != -1 {
		t.Error("Index accepts a degree above the order or the wrong number of variables")
	}
	if _, err := NewJetSpace(4, 2); err == nil {
		t.Error("four variables accepted")
	}
}

// ln Z is convex in the couplings (common knowledge: its Hessian is a
// covariance matrix), so negative responses are refused with a flag.
func TestDropUnphysical(t *testing.T) {
	p := ThermoValues{F: 1, C: -0.2, Chi: -1, M: 0.3, M0: -0.1, Metric: [][]float64{{-1, 0}, {0, 1}}, Det: -1, R: 2}
	p.dropUnphysical(math.Inf(1))
	if !math.IsNaN(p.C) || !math.IsNaN(p.Chi) || !math.IsNaN(p.M) || !math.IsNaN(p.M0) || p.Metric != nil || !math.IsNaN(p.R) || len(p.Flags) != 4 {
		t.Errorf("%+v", p)
	}
	q := ThermoValues{F: 1, C: 0.2, Chi: 1, M0: 0.5, Metric: [][]float64{{1, 0}, {0, 1}}}
	q.dropUnphysical(math.Inf(1))
	if q.C != 0.2 || q.Chi != 1 || q.M0 != 0.5 || q.Metric == nil || len(q.Flags) != 0 {
		t.Errorf("%+v", q)
	}
	r := ThermoValues{F: 1, M0: 1.3, M: 0.4, Chi: 2}
	r.dropUnphysical(1)
	if !math.IsNaN(r.M0) || r.M != 0.4 || len(r.Flags) != 1 {
		t.Errorf("|m0| > 1 kept: %+v", r)
	}
}
