package decimation

import (
	"fmt"
	"math"
	"strings"

	"scalewalk/flow"
)

// The block-spin engines (cumulant and cluster) share the names of the
// couplings they can keep, the block rules and the parsing of both.

// blockCouplingNames are the couplings a block-spin engine can keep, in
// the order of the coupling vector: the pair couplings of neighbour shells
// 1, 2, 3 and the field.
var blockCouplingNames = []string{"K", "L", "M", "h"}

// keptSet is a chosen subset of K, L, M, h in canonical order.
type keptSet struct {
	shells []int // kept pair shells, ascending (1 = K, 2 = L, 3 = M)
	field  bool
}

// parseKeep reads the list of kept couplings; K is always required.
func parseKeep(list []string, lat *Lattice) (keptSet, error) {
	var k keptSet
	seen := map[string]bool{}
	for _, w := range list {
		if seen[w] {
			return k, &ParamError{Name: "keep", Value: strings.Join(list, ","), Reason: "coupling " + w + " named twice"}
		}
		seen[w] = true
	}
	if !seen["K"] {
		return k, &ParamError{Name: "keep", Value: strings.Join(list, ","), Reason: "the nearest-neighbour coupling K must be kept; accepted: K with any of L, M, h"}
	}
	for s, n := range blockCouplingNames[:3] {
		if seen[n] {
			k.shells = append(k.shells, s+1)
		}
	}
	k.field = seen["h"]
	if lat == Linear && len(k.shells) > 1 {
		return k, &ParamError{Name: "keep", Value: strings.Join(list, ","), Reason: "the chain check keeps K and h only; accepted: K or K,h"}
	}
	return k, nil
}

// shellIndex returns the index in x of the coupling of pair shell s, or −1.
func (k keptSet) shellIndex(s int) int {
	for i, t := range k.shells {
		if t == s {
			return i
		}
	}
	return -1
}

// fieldIndex returns the index of h in x, or −1.
func (k keptSet) fieldIndex() int {
	if !k.field {
		return -1
	}
	return len(k.shells)
}

func (k keptSet) len() int {
	n := len(k.shells)
	if k.field {
		n++
	}
	return n
}

// couplings returns the flow couplings of the kept set for a model whose
// nearest-neighbour coupling and field are base[0] and base[fieldAt].
func (k keptSet) couplings(lat *Lattice, pairWord string, base []flow.Coupling, fieldAt int) []flow.Coupling {
	var out []flow.Coupling
	shellWords := map[*Lattice][3]string{
		Square:     {"nearest-neighbour", "next-nearest (diagonal)", "third-neighbour (two spacings along an axis)"},
		Triangular: {"nearest-neighbour", "next-nearest (distance √3)", "third-neighbour (two spacings along a row)"},
		Linear:     {"nearest-neighbour", "second-neighbour", "third-neighbour"},
	}[lat]
	for _, s := range k.shells {
		c := base[0]
		if s > 1 {
			n := blockCouplingNames[s-1]
			c = flow.Coupling{Name: n, Role: flow.FurtherNeighbour, Symmetric: true,
				Plus: flow.ExpCompact(n, 2, 1), Minus: flow.ExpCompact(n, 2, -1)}
		}
		c.Help = fmt.Sprintf("%s coupling on the %s lattice, %s", shellWords[s-1], lat.Name, strings.Replace(pairWord, "X", blockCouplingNames[s-1], 1))
		out = append(out, c)
	}
	if k.field {
		out = append(out, base[fieldAt])
	}
	return out
}

// Rule sets the block spin from the spins of a block.
type Rule struct {
	Kind string  // "majority", "kadanoff" or "decimation"
	P    float64 // the Kadanoff weight's parameter
}

// RuleNames lists the block rules.
var RuleNames = []string{"majority", "kadanoff", "decimation"}

// weights writes into dst (length q) the probabilities P(μ | s) of the
// block states μ given the states s of the block's sites. Majority: the
// most frequent state, ties shared equally among the tied states.
// Kadanoff: P ∝ exp(2p Σ_i δ(s_i, μ)), for the Ising model
// e^{p μ Σ s_i} / (2 cosh(p Σ s_i)), tending to majority as p → ∞.
// Decimation: the state of the block's first site.
func (r Rule) weights(dst []float64, s []int, q int) {
	for i := range dst[:q] {
		dst[i] = 0
	}
	switch r.Kind {
	case "decimation":
		dst[s[0]] = 1
	case "majority":
		cnt, best := stateCounts(s)
		n := 0
		for m := 0; m < q; m++ {
			if cnt[m] == best {
				n++
			}
		}
		for m := 0; m < q; m++ {
			if cnt[m] == best {
				dst[m] = 1 / float64(n)
			}
		}
	case "kadanoff":
		cnt, best := stateCounts(s)
		sum := 0.0
		for m := 0; m < q; m++ {
			dst[m] = math.Exp(2 * r.P * float64(cnt[m]-best))
			sum += dst[m]
		}
		for m := 0; m < q; m++ {
			dst[m] /= sum
		}
	default:
		panic("decimation: unknown block rule " + r.Kind)
	}
}

// stateCounts returns how many sites are in each state and the largest
// count.
func stateCounts(s []int) (cnt [MaxStates]int, best int) {
	for _, v := range s {
		cnt[v]++
		best = max(best, cnt[v])
	}
	return cnt, best
}

// blockStepInput checks a block-spin step's lengths (a programming error
// panics) and writes NaN into dst when x is not finite, reporting whether
// the step can go on.
func blockStepInput(engine string, dst, x []float64, n int) bool {
	if len(dst) != n || len(x) != n {
		panic(fmt.Sprintf("decimation: %s step with len(dst) = %d, len(x) = %d, want %d", engine, len(dst), len(x), n))
	}
	for _, v := range x {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			for i := range dst {
				dst[i] = math.NaN()
			}
			return false
		}
	}
	return true
}

// blockingFrom resolves the lattice and block parameters of a block-spin
// scheme.
func blockingFrom(v Values) (*Blocking, error) {
	lat, err := LookupLattice(v.Choice("lattice"))
	if err != nil {
		return nil, err
	}
	return NewBlocking(lat, v.Int("block"))
}

// String describes the rule in words.
func (r Rule) String() string {
	switch r.Kind {
	case "majority":
		return "majority rule (ties shared equally)"
	case "kadanoff":
		return fmt.Sprintf("Kadanoff weight p = %g", r.P)
	}
	return "decimation (the block's first site)"
}
