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
		var cnt [MaxStates]int
		best := 0
		for _, v := range s {
			cnt[v]++
			if cnt[v] > best {
				best = cnt[v]
			}
		}
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
		var cnt [MaxStates]int
		best := 0
		for _, v := range s {
			cnt[v]++
			if cnt[v] > best {
				best = cnt[v]
			}
		}
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
