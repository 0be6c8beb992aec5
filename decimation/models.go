package decimation

import (
	"fmt"
	"math"
	"strconv"

	"scalewalk/flow"
)

// MaxStates is the largest number of states of a full q × q
// representation (integer-q Potts, clock). The cost of a step grows as q³.
const MaxStates = 64

// both returns the compact coordinate e^{-a|x|} at +∞ and −∞.
func both(name string, a float64) (plus, minus *flow.Compact) {
	return flow.ExpCompact(name, a, 1), flow.ExpCompact(name, a, -1)
}

func withResidual(c *flow.Compact, r string) *flow.Compact {
	c.Residual = r
	return c
}

func delta(s, t int) float64 {
	if s == t {
		return 1
	}
	return 0
}

// NewIsing returns the Ising model, −H/kT = K Σ s_i s_j + h Σ s_i with
// s = ±1, couplings (K, h).
func NewIsing() *Model {
	spin := [2]float64{1, -1}
	kp, km := flow.ExpCompact("K", 2, 1), flow.ExpCompact("K", 2, -1)
	hp, hm := both("h", 2)
	cs := []flow.Coupling{
		{Name: "K", Role: flow.Exchange, Symmetric: true, Plus: kp, Minus: km,
			Help: "nearest-neighbour exchange, K s_i s_j (K > 0 ferromagnet)"},
		{Name: "h", Role: flow.Field, Symmetric: false, Plus: hp, Minus: hm,
			Help: "magnetic field, h s_i"},
	}
	return newFull("ising", "Z2 spin flip", 2, cs, []func(s, t int) float64{
		func(s, t int) float64 { return spin[s] * spin[t] },
		func(s, t int) float64 { return (spin[s] + spin[t]) / 2 },
	})
}

// NewPotts returns the q-state Potts model, −H/kT = K Σ δ(σ_i, σ_j)
// + h Σ δ(σ_i, 1) + Kfav Σ δ(σ_i, 1) δ(σ_j, 1).
//
// Integer q ≥ 3 has the couplings (K, h, Kfav); q = 2 has (K, h), Kfav being
// a combination of K, h and a constant there. Non-integer q, and q < 2, have
// K alone and use the two-entry algebra W = a I + c E. q must be positive
// and, when an integer, at most MaxStates.
func NewPotts(q float64) (*Model, error) {
	if math.IsNaN(q) || math.IsInf(q, 0) || q <= 0 {
		return nil, &ParamError{Name: "q", Value: strconv.FormatFloat(q, 'g', -1, 64), Reason: "need a finite q > 0"}
	}
	kp, km := flow.ExpCompact("K", 1, 1), flow.ExpCompact("K", 1, -1)
	kc := flow.Coupling{Name: "K", Role: flow.Exchange, Symmetric: true, Plus: kp, Minus: km,
		Help: "nearest-neighbour exchange, K δ(σ_i, σ_j) (K > 0 ferromagnet; K = 2 K_Ising at q = 2)"}
	name := "potts q=" + strconv.FormatFloat(q, 'g', -1, 64)
	sym := "S_q state permutations"
	if q != math.Trunc(q) || q < 2 {
		m := &Model{name: name, symmetry: sym, q: q, algebra: true, size: 2,
			couplings: []flow.Coupling{kc}, basis: []float64{1, 0}}
		m.lnQ1, m.sgQ1 = lnAbsSign(q - 1)
		m.lnQ2, m.sgQ2 = lnAbsSign(q - 2)
		m.potts = true
		why := "a field needs integer q >= 2 (this model has q=" + strconv.FormatFloat(q, 'g', -1, 64) + ")"
		m.absent = map[string]string{"h": why, "Kfav": "the favoured-state pair term needs integer q >= 3"}
		return m, nil
	}
	if q > MaxStates {
		return nil, &ParamError{Name: "q", Value: strconv.FormatFloat(q, 'g', -1, 64),
			Reason: fmt.Sprintf("integer q above %d is too large for the full q x q representation (a non-integer q uses the field-free algebra)", MaxStates)}
	}
	n := int(q)
	res := fmt.Sprintf("%d-state Potts (state 1 excluded)", n-1)
	if n == 2 {
		res = "none: every site in state 2"
	}
	hp, hm := both("h", 2)
	withResidual(hp, "none: every site in state 1")
	withResidual(hm, res)
	cs := []flow.Coupling{kc,
		{Name: "h", Role: flow.Field, Symmetric: false, Plus: hp, Minus: hm,
			Help: "field on state 1, h δ(σ_i, 1)"},
	}
	phi := []func(s, t int) float64{
		delta,
		func(s, t int) float64 { return (delta(s, 0) + delta(t, 0)) / 2 },
	}
	var absent map[string]string
	if n == 2 {
		absent = map[string]string{"Kfav": "at q = 2 the favoured-state pair term is a combination of K, h and a constant; it exists from q = 3"}
	}
	if n >= 3 {
		fp, fm := both("Kfav", 1)
		cs = append(cs, flow.Coupling{Name: "Kfav", Role: flow.PairField, Symmetric: false, Plus: fp, Minus: fm,
			Help: "pair term on the favoured state, Kfav δ(σ_i, 1) δ(σ_j, 1)"})
		phi = append(phi, func(s, t int) float64 { return delta(s, 0) * delta(t, 0) })
	}
	m := newFull(name, sym, n, cs, phi)
	m.absent = absent
	m.potts = true
	return m, nil
}

func lnAbsSign(v float64) (lnAbs, sign float64) {
	switch {
	case v > 0:
		return math.Log(v), 1
	case v < 0:
		return math.Log(-v), -1
	}
	return 0, 0
}

// NewClock returns the q-state clock model with one exchange per harmonic,
// −H/kT = Σ_k K_k Σ cos(2πk(n_i − n_j)/q) + h Σ cos(2π n_i/q), for
// k = 1 … ⌊q/2⌋; couplings (K, K2, …, K⌊q/2⌋, h). 2 ≤ q ≤ MaxStates.
func NewClock(q int) (*Model, error) {
	if q < 2 || q > MaxStates {
		return nil, &ParamError{Name: "q", Value: strconv.Itoa(q), Reason: fmt.Sprintf("need 2 <= q <= %d", MaxStates)}
	}
	var cs []flow.Coupling
	var phi []func(s, t int) float64
	for k := 1; k <= q/2; k++ {
		name := "K"
		var plus, minus *flow.Compact
		if k == 1 {
			plus, minus = both(name, 1-cosq(1, q))
		} else {
			name = "K" + strconv.Itoa(k)
			plus, minus = both(name, 1)
		}
		help := "nearest-neighbour exchange, K cos(2π(n_i - n_j)/q) (K > 0 ferromagnet)"
		if k > 1 {
			help = fmt.Sprintf("harmonic %d of the exchange, %s cos(2π·%d(n_i - n_j)/q)", k, name, k)
		}
		cs = append(cs, flow.Coupling{Name: name, Role: flow.Exchange, Symmetric: true, Plus: plus, Minus: minus, Help: help})
		kk := float64(k)
		phi = append(phi, func(s, t int) float64 { return cosq(kk*float64(s-t), q) })
	}
	hp, hm := both("h", 2)
	cs = append(cs, flow.Coupling{Name: "h", Role: flow.Field, Symmetric: false, Plus: hp, Minus: hm,
		Help: "field along state 0, h cos(2π n_i/q); breaks Z_q, so the basis no longer closes"})
	phi = append(phi, func(s, t int) float64 { return (cosq(float64(s), q) + cosq(float64(t), q)) / 2 })
	return newFull("clock q="+strconv.Itoa(q), "Z_q rotations and reflection", q, cs, phi), nil
}

// cosq returns cos(2π m/q), exact at the multiples of a twelfth of a turn
// (where the cosine is 0, ±1/2 or ±1).
func cosq(m float64, q int) float64 {
	full := float64(12 * q)
	r := math.Mod(12*m, full)
	if r < 0 {
		r += full
	}
	if r == math.Trunc(r) && int(r)%q == 0 {
		switch int(r) / q { // twelfths of a turn
		case 0:
			return 1
		case 2, 10:
			return 0.5
		case 3, 9:
			return 0
		case 4, 8:
			return -0.5
		case 6:
			return -1
		}
	}
	return math.Cos(2 * math.Pi * m / float64(q))
}

// NewSpin1 returns the spin-1 model with s ∈ {1, 0, −1},
// −H/kT = J Σ s_i s_j + K Σ s_i² s_j² − D Σ s_i² + h Σ s_i
// + Jodd Σ (s_i² s_j + s_i s_j²)/2; couplings (J, K, D, h, Jodd). Here K is
// the biquadratic coupling.
func NewSpin1() *Model {
	spin := [3]float64{1, 0, -1}
	jp, jm := both("J", 2)
	kp, km := both("K", 1)
	dp := withResidual(flow.ExpCompact("D", 1, 1), "every site s = 0")
	dm := withResidual(flow.ExpCompact("D", 1, -1), "spin-1/2 Ising (s = ±1)")
	hp, hm := both("h", 2)
	op, om := both("Jodd", 1)
	cs := []flow.Coupling{
		{Name: "J", Role: flow.Exchange, Symmetric: true, Plus: jp, Minus: jm,
			Help: "bilinear exchange, J s_i s_j"},
		{Name: "K", Role: flow.Biquadratic, Symmetric: true, Plus: kp, Minus: km,
			Help: "biquadratic coupling (not the exchange here), K s_i² s_j²"},
		{Name: "D", Role: flow.CrystalField, Symmetric: true, Plus: dp, Minus: dm,
			Help: "crystal field, -D s_i² (D > 0 favours s = 0)"},
		{Name: "h", Role: flow.Field, Symmetric: false, Plus: hp, Minus: hm,
			Help: "magnetic field, h s_i"},
		{Name: "Jodd", Role: flow.PairField, Symmetric: false, Plus: op, Minus: om,
			Help: "odd pair term, Jodd (s_i² s_j + s_i s_j²)/2"},
	}
	return newFull("spin1", "Z2 spin flip (s -> -s)", 3, cs, []func(s, t int) float64{
		func(s, t int) float64 { return spin[s] * spin[t] },
		func(s, t int) float64 { return spin[s] * spin[s] * spin[t] * spin[t] },
		func(s, t int) float64 { return -(spin[s]*spin[s] + spin[t]*spin[t]) / 2 },
		func(s, t int) float64 { return (spin[s] + spin[t]) / 2 },
		func(s, t int) float64 {
			return (spin[s]*spin[s]*spin[t] + spin[s]*spin[t]*spin[t]) / 2
		},
	})
}
