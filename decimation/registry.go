package decimation

import (
	"fmt"
	"math"
	"strings"

	"scalewalk/flow"
)

// ModelSpec describes a spin model as data: its name, a one-line help, its
// parameters and a constructor taking the resolved parameter values.
type ModelSpec struct {
	Name, Help string
	Params     []Param
	New        func(v Values) (*Model, error)
}

// SchemeSpec describes an RG scheme as data: its name, a one-line help,
// its parameters and a builder of the map for a model.
type SchemeSpec struct {
	Name, Help string
	Params     []Param
	Build      func(m *Model, v Values) (flow.Map, error)
}

// MaxB is the largest rescaling factor the schemes accept.
const MaxB = 10000

// Models returns the spin models, in a fixed order.
func Models() []ModelSpec {
	return []ModelSpec{
		{
			Name: "ising",
			Help: "Ising model, -H/kT = K Σ s_i s_j + h Σ s_i with s = ±1; couplings K, h",
			New:  func(Values) (*Model, error) { return NewIsing(), nil },
		},
		{
			Name: "potts",
			Help: "q-state Potts model, -H/kT = K Σ δ(σ_i,σ_j) + h Σ δ(σ_i,1) + Kfav Σ δ(σ_i,1)δ(σ_j,1); " +
				"integer q >= 3: K, h, Kfav; q = 2: K, h (Kfav is redundant with K and h there); " +
				"non-integer q or q < 2: K only (a field needs integer q >= 2)",
			Params: []Param{{
				Name: "q", Kind: Real, Min: 0, MinOpen: true, Max: math.Inf(1), Default: "3",
				Help: fmt.Sprintf("number of states; any real q > 0, integers at most %d", MaxStates),
			}},
			New: func(v Values) (*Model, error) { return NewPotts(v.Real("q")) },
		},
		{
			Name: "clock",
			Help: "q-state clock model, -H/kT = Σ_k K_k Σ cos(2πk(n_i-n_j)/q) + h Σ cos(2π n_i/q); " +
				"couplings K, K2 … K⌊q/2⌋ (harmonics), h (a field breaks Z_q and the basis no longer closes)",
			Params: []Param{{
				Name: "q", Kind: Int, Min: 2, Max: MaxStates, Default: "6",
				Help: "number of states",
			}},
			New: func(v Values) (*Model, error) { return NewClock(v.Int("q")) },
		},
		{
			Name: "spin1",
			Help: "spin-1 model, -H/kT = J Σ s_i s_j + K Σ s_i² s_j² - D Σ s_i² + h Σ s_i + Jodd Σ (s_i² s_j + s_i s_j²)/2, " +
				"s ∈ {1, 0, -1}; K is the biquadratic coupling here",
			New: func(Values) (*Model, error) { return NewSpin1(), nil },
		},
	}
}

// Schemes returns the RG schemes, in a fixed order.
func Schemes() []SchemeSpec {
	return []SchemeSpec{
		{
			Name: "chain",
			Help: "exact decimation of the one-dimensional chain, W' ∝ W^b",
			Params: []Param{{
				Name: "b", Kind: Int, Min: 2, Max: MaxB, Default: "2",
				Help: "rescaling factor: sites kept are every b-th",
			}},
			Build: func(m *Model, v Values) (flow.Map, error) { return NewChain(m, v.Int("b")) },
		},
		{
			Name: "bondmove",
			Help: "Migdal–Kadanoff bond moving on the d-dimensional hypercubic lattice: b^(d-1) bonds moved in parallel " +
				"(couplings add) and b in series decimated, in the chosen order; site terms split as h/(2d) onto each bond end. " +
				"move-first is exact on the necklace hierarchical lattice (parallel bundles in series), decimate-first on the diamond lattice. " +
				"The field is relevant at the K = 0 sink here (y_h = d - 1), so below the critical point responses to h diverge as h -> 0 by construction of the approximation. " +
				"ln Z/N per site = d x (per-bond sum) + the constant giving ln q at zero couplings",
			Params: []Param{
				{Name: "d", Kind: Real, Min: 1, Max: 20, Default: "2",
					Help: "lattice dimension, any real d >= 1 (non-integer d: common practice for this approximation)"},
				{Name: "b", Kind: Int, Min: 2, Max: 64, Default: "2",
					Help: "length rescaling factor (bonds in series)"},
				{Name: "order", Kind: Choice, Choices: []string{"move-first", "decimate-first"}, Default: "move-first",
					Help: "move-first: the traditional estimate for the hypercubic lattice; decimate-first: the conjugate map (same eigenvalues, K* larger by b^(d-1))"},
			},
			Build: func(m *Model, v Values) (flow.Map, error) {
				o := MoveFirst
				if v.Choice("order") == "decimate-first" {
					o = DecimateFirst
				}
				return NewBondMove(m, v.Real("d"), v.Int("b"), o)
			},
		},
		{
			Name: "hierarchical",
			Help: "exact RG of the diamond-family hierarchical lattice: b bonds in series on each of m parallel branches (series, then parallel); " +
				"dimension d = ln(b m)/ln b; (b, m = b^(d-1)) reproduces bondmove order=decimate-first exactly " +
				"(bondmove order=move-first is exact on the necklace lattice instead); g is per bond",
			Params: []Param{
				{Name: "b", Kind: Int, Min: 2, Max: 64, Default: "2", Help: "bonds in series on each branch"},
				{Name: "m", Kind: Int, Min: 1, Max: 4096, Default: "2", Help: "parallel branches"},
			},
			Build: func(m *Model, v Values) (flow.Map, error) { return NewHierarchical(m, v.Int("b"), v.Int("m")) },
		},
	}
}

// LookupModel returns the model called name; the error lists the accepted
// names.
func LookupModel(name string) (ModelSpec, error) {
	var names []string
	for _, s := range Models() {
		if s.Name == name {
			return s, nil
		}
		names = append(names, s.Name)
	}
	return ModelSpec{}, fmt.Errorf("unknown model %q; accepted: %s", name, strings.Join(names, ", "))
}

// LookupScheme returns the scheme called name; the error lists the
// accepted names.
func LookupScheme(name string) (SchemeSpec, error) {
	var names []string
	for _, s := range Schemes() {
		if s.Name == name {
			return s, nil
		}
		names = append(names, s.Name)
	}
	return SchemeSpec{}, fmt.Errorf("unknown scheme %q; accepted: %s", name, strings.Join(names, ", "))
}

// Built is a model and a scheme resolved from their names and parameter
// values.
type Built struct {
	Map                       flow.Map
	Model                     *Model
	ModelSpec                 ModelSpec
	SchemeSpec                SchemeSpec
	ModelValues, SchemeValues Values
}

// Params returns the resolved model and scheme parameters together.
func (b *Built) Params() map[string]any {
	out := map[string]any{}
	for k, v := range b.ModelValues {
		out[k] = v
	}
	for k, v := range b.SchemeValues {
		out[k] = v
	}
	return out
}

// Build resolves a model and a scheme by name with parameter values given
// as text (name → value); each value goes to the model or the scheme that
// has a parameter of that name. Errors name the problem and what is
// accepted.
func Build(model, scheme string, set map[string]string) (*Built, error) {
	ms, err := LookupModel(model)
	if err != nil {
		return nil, err
	}
	ss, err := LookupScheme(scheme)
	if err != nil {
		return nil, err
	}
	mset, sset := map[string]string{}, map[string]string{}
	for k, v := range set {
		switch {
		case hasParam(ms.Params, k):
			mset[k] = v
		case hasParam(ss.Params, k):
			sset[k] = v
		default:
			return nil, &ParamError{Name: k, Value: v, Reason: fmt.Sprintf("no such parameter for model %s with scheme %s; accepted: %s", ms.Name, ss.Name, acceptedParams(ms, ss))}
		}
	}
	mv, err := Resolve(ms.Params, mset)
	if err != nil {
		return nil, fmt.Errorf("model %s: %w", ms.Name, err)
	}
	sv, err := Resolve(ss.Params, sset)
	if err != nil {
		return nil, fmt.Errorf("scheme %s: %w", ss.Name, err)
	}
	mod, err := ms.New(mv)
	if err != nil {
		return nil, fmt.Errorf("model %s: %w", ms.Name, err)
	}
	m, err := ss.Build(mod, sv)
	if err != nil {
		return nil, fmt.Errorf("scheme %s: %w", ss.Name, err)
	}
	return &Built{Map: m, Model: mod, ModelSpec: ms, SchemeSpec: ss, ModelValues: mv, SchemeValues: sv}, nil
}

func hasParam(ps []Param, n string) bool {
	for _, p := range ps {
		if p.Name == n {
			return true
		}
	}
	return false
}

func acceptedParams(ms ModelSpec, ss SchemeSpec) string {
	var out []string
	for _, p := range append(append([]Param{}, ms.Params...), ss.Params...) {
		out = append(out, p.Name+" ("+p.Range()+")")
	}
	if len(out) == 0 {
		return "none"
	}
	return strings.Join(out, ", ")
}
