package scenarios

import (
	"fmt"
	"math"
	"sync"

	"github.com/expr-lang/expr/vm"

	"scalewalk/flow"
)

// UserCoupling is one coupling of a user-written recursion.
type UserCoupling struct {
	Name      string
	Role      flow.Role
	Symmetric bool
	Next      *Formula // x′ in terms of the couplings and parameters
	// Plus and Minus, if set, are the compactified coordinate at ±∞: U in
	// terms of the coupling, X in terms of u.
	PlusU, PlusX, MinusU, MinusX *Formula
}

// UserMap is an RG map whose recursion relations are formulas written by
// the user. It implements flow.Map (Jacobians come from flow's numerical
// differentiation, with their error estimates) and flow.Symmetrist when a
// symmetry is named. Step is safe for concurrent use.
type UserMap struct {
	couplings []UserCoupling
	cs        []flow.Coupling
	b, d      float64
	constant  *Formula // g per site before the step; nil when not given
	params    map[string]float64
	symmetry  string
	pool      sync.Pool // *evalState
}

type evalState struct {
	vm  vm.VM
	env map[string]any
}

// NewUserMap builds the map. params are the file's named parameters.
func NewUserMap(cs []UserCoupling, b, d float64, constant *Formula, params map[string]float64, symmetry string) *UserMap {
	m := &UserMap{couplings: cs, b: b, d: d, constant: constant, params: params, symmetry: symmetry}
	for _, c := range cs {
		fc := flow.Coupling{Name: c.Name, Role: c.Role, Symmetric: c.Symmetric, Help: "user formula: " + c.Next.Source}
		if c.PlusU != nil {
			fc.Plus = m.compact(c.PlusU, c.PlusX, c.Name)
		}
		if c.MinusU != nil {
			fc.Minus = m.compact(c.MinusU, c.MinusX, c.Name)
		}
		m.cs = append(m.cs, fc)
	}
	m.pool.New = func() any {
		st := &evalState{env: map[string]any{"pi": math.Pi, "u": 0.0}}
		for k, v := range m.params {
			st.env[k] = v
		}
		for _, c := range m.couplings {
			st.env[c.Name] = 0.0
		}
		return st
	}
	return m
}

func (m *UserMap) compact(u, x *Formula, name string) *flow.Compact {
	return &flow.Compact{
		Name: u.Source,
		U: func(v float64) float64 {
			st := m.pool.Get().(*evalState)
			defer m.pool.Put(st)
			st.env[name] = v
			r, err := u.Eval(&st.vm, st.env)
			if err != nil {
				return math.NaN()
			}
			return r
		},
		X: func(v float64) float64 {
			st := m.pool.Get().(*evalState)
			defer m.pool.Put(st)
			st.env["u"] = v
			r, err := x.Eval(&st.vm, st.env)
			if err != nil {
				return math.NaN()
			}
			return r
		},
	}
}

// Couplings returns the couplings.
func (m *UserMap) Couplings() []flow.Coupling { return append([]flow.Coupling(nil), m.cs...) }

// Rescale returns b.
func (m *UserMap) Rescale() float64 { return m.b }

// Dimension returns d.
func (m *UserMap) Dimension() float64 { return m.d }

// Symmetry returns the declared symmetry ("" for none).
func (m *UserMap) Symmetry() string { return m.symmetry }

// HasConstant reports whether the file gives the constant g; without it
// thermodynamics is not available.
func (m *UserMap) HasConstant() bool { return m.constant != nil }

// Step evaluates the formulas. A formula that fails or returns NaN or Inf
// makes every element of dst NaN. Without a constant formula g is NaN.
func (m *UserMap) Step(dst, x []float64) float64 {
	if len(dst) != len(m.couplings) || len(x) != len(m.couplings) {
		panic("scenarios: UserMap.Step length mismatch")
	}
	st := m.pool.Get().(*evalState)
	defer m.pool.Put(st)
	for i, c := range m.couplings {
		st.env[c.Name] = x[i]
	}
	for i, c := range m.couplings {
		v, err := c.Next.Eval(&st.vm, st.env)
		if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
			for k := range dst {
				dst[k] = math.NaN()
			}
			return math.NaN()
		}
		dst[i] = v
	}
	if m.constant == nil {
		return math.NaN()
	}
	g, err := m.constant.Eval(&st.vm, st.env)
	if err != nil {
		return math.NaN()
	}
	return g
}

// Domain reports a point where a formula fails.
func (m *UserMap) Domain(x []float64) error {
	dst := make([]float64, len(x))
	m.Step(dst, x)
	for i, v := range dst {
		if math.IsNaN(v) {
			return fmt.Errorf("the formula for %s' is not finite here", m.couplings[i].Name)
		}
	}
	return nil
}

var (
	_ flow.Map        = (*UserMap)(nil)
	_ flow.Symmetrist = (*UserMap)(nil)
	_ flow.Domainer   = (*UserMap)(nil)
)

// failing returns the index of the first coupling whose formula is not
// finite at x, or −1.
func (m *UserMap) failing(x []float64) int {
	st := m.pool.Get().(*evalState)
	defer m.pool.Put(st)
	for i, c := range m.couplings {
		st.env[c.Name] = x[i]
	}
	for i, c := range m.couplings {
		v, err := c.Next.Eval(&st.vm, st.env)
		if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
			return i
		}
	}
	return -1
}
