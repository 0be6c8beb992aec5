// Package flowtest holds known-answer maps, each with its source, and a
// conformance checker for [flow.Map] implementations.
package flowtest

import (
	"math"

	"scalewalk/flow"
)

func logCosh(x float64) float64 {
	a := math.Abs(x)
	return a + math.Log1p(math.Exp(-2*a)) - math.Ln2
}

// IsingChain2 is the exact b = 2 decimation of the Ising chain in a field,
// in closed form (D. R. Nelson, M. E. Fisher, Ann. Phys. 91, 226 (1975)):
//
//	K′ = ¼ ln[cosh(2K+h) cosh(2K−h) / cosh² h]
//	h′ = h + ½ ln[cosh(2K+h) / cosh(2K−h)]
//
// with the constant per site g = ⅛ ln[16 cosh(2K+h) cosh(2K−h) cosh² h]
// derived from the same partial trace (site field split half onto each
// bond). Known answers: the line K = 0 is a family of fixed points along
// h; K = +∞, h = 0 is fixed with λ = 2 in e^{−2K} and in h.
type IsingChain2 struct{}

func (IsingChain2) Couplings() []flow.Coupling {
	return []flow.Coupling{
		{Name: "K", Role: flow.Exchange, Symmetric: true,
			Plus: flow.ExpCompact("K", 2, 1), Minus: flow.ExpCompact("K", 2, -1)},
		{Name: "h", Role: flow.Field, Symmetric: false,
			Plus: flow.ExpCompact("h", 2, 1), Minus: flow.ExpCompact("h", 2, -1)},
	}
}
func (IsingChain2) Rescale() float64   { return 2 }
func (IsingChain2) Dimension() float64 { return 1 }
func (IsingChain2) Symmetry() string   { return "Z2 spin flip" }
func (IsingChain2) Step(dst, x []float64) float64 {
	K, h := x[0], x[1]
	a, b, c := logCosh(2*K+h), logCosh(2*K-h), logCosh(h)
	dst[0] = (a + b - 2*c) / 4
	dst[1] = h + (a-b)/2
	return (4*math.Ln2 + a + b + 2*c) / 8
}

// MigdalKadanoff2 is the bond-moving recursion of the square-lattice Ising
// model with b = 2, bonds moved first: tanh K′ = tanh²(2K), i.e.
// x′ = 2x²/(1 + x⁴) with x = e^{−2K} (R. K. Pathria, P. D. Beale,
// Statistical Mechanics, ch. 14). Known answers: x* = 0.5437 (K* = 0.3047),
// λ = 1.6785, ν = 1.338 (Pathria and Beale); K = 0 and K = +∞ are sinks.
// Its constant g is not modelled (Step returns 0).
type MigdalKadanoff2 struct{}

func (MigdalKadanoff2) Couplings() []flow.Coupling {
	return []flow.Coupling{{Name: "K", Role: flow.Exchange, Symmetric: true,
		Plus: flow.ExpCompact("K", 2, 1)}}
}
func (MigdalKadanoff2) Rescale() float64   { return 2 }
func (MigdalKadanoff2) Dimension() float64 { return 2 }
func (MigdalKadanoff2) Symmetry() string   { return "Z2 spin flip" }
func (MigdalKadanoff2) Step(dst, x []float64) float64 {
	K := x[0]
	// K′ = atanh(tanh²(2K)) = ½ ln[(1+t²)/(1−t²)], computed stably:
	// 1 − t² = sech²(2K).
	t := math.Tanh(2 * K)
	dst[0] = 0.5*math.Log1p(t*t) + logCosh(2*K)
	return 0 // the constant is not modelled in this known-answer map

}

// Linear is the map x′ = A x with rescaling factor B; its only fixed point
// is the origin with the eigenvalues of A (an exact known answer).
type Linear struct {
	A    [][]float64
	B    float64
	Syms []bool // per coupling: symmetric?
}

func (l Linear) Couplings() []flow.Coupling {
	cs := make([]flow.Coupling, len(l.A))
	for i := range cs {
		cs[i] = flow.Coupling{Name: string(rune('a' + i)), Role: flow.Exchange, Symmetric: l.Syms == nil || l.Syms[i]}
	}
	return cs
}
func (l Linear) Rescale() float64   { return l.B }
func (l Linear) Dimension() float64 { return 1 }
func (l Linear) Step(dst, x []float64) float64 {
	for i := range l.A {
		var s float64
		for j := range x {
			s += l.A[i][j] * x[j]
		}
		dst[i] = s
	}
	return 0
}

// Plane is x′ = (x², y) with b = 2: the lines x = 0 and x = 1 are families
// of fixed points along y (x = 0 stable, x = 1 with λ = 2), an exact known
// answer by inspection.
type Plane struct{}

func (Plane) Couplings() []flow.Coupling {
	return []flow.Coupling{
		{Name: "x", Role: flow.Exchange, Symmetric: true},
		{Name: "y", Role: flow.Exchange, Symmetric: true},
	}
}
func (Plane) Rescale() float64   { return 2 }
func (Plane) Dimension() float64 { return 1 }
func (Plane) Step(dst, x []float64) float64 {
	dst[0] = x[0] * x[0]
	dst[1] = x[1]
	return 0
}
