package flow

import (
	"math"

	"gonum.org/v1/gonum/mat"
)

// Role says what physical part a coupling plays.
type Role int

const (
	// Exchange is a two-site coupling between nearest neighbours.
	Exchange Role = iota
	// Biquadratic is a two-site coupling of the squared spins.
	Biquadratic
	// FurtherNeighbour is a two-site coupling beyond nearest neighbours.
	FurtherNeighbour
	// PairField is a symmetry-breaking two-site term (e.g. the Potts pair
	// term on the favoured state, the odd spin-1 pair term).
	PairField
	// CrystalField is a one-body symmetric term (spin-1 D).
	CrystalField
	// Field is a one-body symmetry-breaking term (magnetic field).
	Field
	// Multi is a many-site coupling (three- or four-spin terms).
	Multi
)

var roleNames = [...]string{"exchange", "biquadratic", "further-neighbour", "pair-field", "crystal-field", "field", "multi-site"}

// String returns the role's name as used in listings and scenario files.
func (r Role) String() string {
	if r < 0 || int(r) >= len(roleNames) {
		return "unknown"
	}
	return roleNames[r]
}

// ParseRole returns the role with the given name.
func ParseRole(s string) (Role, bool) {
	for i, n := range roleNames {
		if n == s {
			return Role(i), true
		}
	}
	return 0, false
}

// RoleNames lists the accepted role names.
func RoleNames() []string { return append([]string(nil), roleNames[:]...) }

// OneBody reports whether the role is a single-site term.
func (r Role) OneBody() bool { return r == CrystalField || r == Field }

// Compact is a compactified coordinate u(x) for one sign of infinity of a
// coupling: u → 0⁺ as x → ±∞ and u > 0 for finite x on that side.
type Compact struct {
	Name string                  // e.g. "exp(-2K)"
	U    func(x float64) float64 // x → u
	X    func(u float64) float64 // u → x, the inverse of U
	// Residual names the symmetry left when this coupling sits at this
	// infinity, e.g. "(q-1)-state Potts". Empty when nothing is to be said.
	Residual string
}

// ExpCompact returns the coordinate u = e^{-a|x|} for the sign s (+1 or −1)
// of infinity of the coupling called name, so that a = 2 gives e^{-2K}.
func ExpCompact(name string, a float64, s int) *Compact {
	c := &Compact{}
	if s > 0 {
		c.Name = "exp(-" + fmtCoef(a) + name + ")"
		c.U = func(x float64) float64 { return math.Exp(-a * x) }
		c.X = func(u float64) float64 { return -math.Log(u) / a }
	} else {
		c.Name = "exp(" + fmtCoef(a) + name + ")"
		c.U = func(x float64) float64 { return math.Exp(a * x) }
		c.X = func(u float64) float64 { return math.Log(u) / a }
	}
	return c
}

func fmtCoef(a float64) string {
	if a == 1 {
		return ""
	}
	if a == math.Trunc(a) && math.Abs(a) < 100 {
		return string(rune('0' + int(a)))
	}
	return trimFloat(a) + "*"
}

// Coupling describes one coordinate of a map.
type Coupling struct {
	Name      string
	Role      Role
	Symmetric bool // even under the model's symmetry; false: symmetry-breaking
	Help      string
	// Plus and Minus are the compactified coordinates at +∞ and −∞; nil
	// when the coupling is not analysed at that infinity.
	Plus, Minus *Compact
}

// TwoSite reports whether the coupling couples two or more sites.
func (c Coupling) TwoSite() bool { return !c.Role.OneBody() }

// Coupled is anything with a coupling vector: a Map, or an engine without
// a low-dimensional flow (tensor renormalization) whose starting points
// are still couplings.
type Coupled interface {
	Couplings() []Coupling
}

// Map is one RG step of a real-space scheme.
//
// Step writes x′ = R(x) into dst and returns the constant g(x) per site of the
// lattice before the step (see the package conventions). It must not modify
// x, and must fill every element of dst. Outside the map's domain (or where
// the step overflows) it writes NaN. len(dst) == len(x) == len(Couplings()).
// Step must be safe for concurrent use: the fixed-point search calls it from
// several goroutines.
type Map interface {
	Couplings() []Coupling
	Rescale() float64   // b > 1
	Dimension() float64 // d > 0
	Step(dst, x []float64) (g float64)
}

// Jacobianer is a map that supplies its own Jacobian ∂x′ᵢ/∂xⱼ.
type Jacobianer interface {
	JacobianTo(dst *mat.Dense, x []float64)
}

// Domainer is a map that can say why a point is outside its physical
// domain. Domain returns nil inside it.
type Domainer interface {
	Domain(x []float64) error
}

// Closer is a map that projects onto a finite basis and can report the
// closure error of a step: the part of the renormalized interaction the
// basis cannot hold (zero when the scheme closes).
type Closer interface {
	Closure(x []float64) float64
}

// Symmetrist is a map that names its symmetry group (e.g. "Z2 spin flip").
// A map that does not implement it, or returns "", declares no symmetry.
type Symmetrist interface {
	Symmetry() string
}

// PerBonder is a map that can say whether its constant g is per bond
// rather than per site (PerBond), and how many sites its lattice has per
// bond. Only a map whose PerBond returns true reports g per bond.
type PerBonder interface {
	PerBond() bool
	SitesPerBond() float64
}

// Remainderer is a map whose Hamiltonian keeps a part of the free energy
// that the constants g never collect: a one-body term carried whole to the
// block spins, which grows like b^{d n} along the flow into an ordered
// sink (block-spin schemes with the field in the renormalized
// Hamiltonian). Remainder(x) is the free energy per site of that part at x
// in its ground-state limit (|h| for an Ising field); FreeEnergy adds
// b^{-d n} Remainder(x_n) where its sum stops, which is what carries the
// spontaneous magnetization.
type Remainderer interface {
	Remainder(x []float64) float64
}

// FieldBounder is a map that knows the largest magnitude, per site, of the
// one-body term of coupling i (1 for an Ising or Potts field): no
// magnetization can exceed it, which Thermo checks.
type FieldBounder interface {
	FieldBound(i int) float64
}

// Names returns the couplings' names in order.
func Names(m Coupled) []string {
	cs := m.Couplings()
	out := make([]string, len(cs))
	for i, c := range cs {
		out[i] = c.Name
	}
	return out
}

// Index returns the index of the coupling called name, or −1.
func Index(m Coupled, name string) int {
	for i, c := range m.Couplings() {
		if c.Name == name {
			return i
		}
	}
	return -1
}

func symmetryOf(m Map) string {
	if s, ok := m.(Symmetrist); ok {
		return s.Symmetry()
	}
	return ""
}
