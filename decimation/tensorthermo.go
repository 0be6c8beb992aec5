package decimation

import (
	"context"
	"fmt"
	"math"
	"slices"

	"scalewalk/flow"
)

// TensorStep is the relative step of the central differences the tensor
// engine takes of its free energy: δ_i = TensorStep · max(1, |x_i|). The
// truncation error of the free energy enters the second derivatives as
// that error over δ².
const TensorStep = 1e-3

// Thermo computes ln Z/N at x and, by central differences of the tensor
// free energy (step TensorStep, stated in the flags), the energy and the
// specific heat along the ray on which every coupling scales as 1/T, the
// magnetization and susceptibility in the field, and the metric over the
// couplings metric; in the ordered phase at zero field, the spontaneous
// magnetization as the one-sided limit h -> 0+. What a truncated free
// energy cannot give reliably — the curvature (third derivatives) and the
// correlation length — is NaN with a flag.
func (t *TensorRG) Thermo(ctx context.Context, x []float64, metric []int) flow.ThermoValues {
	nan := math.NaN()
	p := flow.ThermoValues{X: x, F: nan, U: nan, C: nan, M: nan, Chi: nan, M0: nan, Xi: nan, Det: nan, R: nan}
	cs := t.cs
	e := flow.ExchangeIndex(t)
	field := -1
	for i, c := range cs {
		if c.Role == flow.Field {
			field = i
			break
		}
	}
	var ray []int
	for i := range cs {
		if x[i] != 0 {
			ray = append(ray, i)
		}
	}
	if len(ray) == 0 && e >= 0 {
		ray = []int{e}
	}
	union := append([]int(nil), ray...)
	for _, i := range append([]int{field}, metric...) {
		if i >= 0 && !slices.Contains(union, i) {
			union = append(union, i)
		}
	}
	n := len(union)
	d := make([]float64, n)
	for a, i := range union {
		d[a] = TensorStep * math.Max(1, math.Abs(x[i]))
	}
	cache := map[[2]int]float64{}
	var failed error
	f := func(a, sa, b, sb int) float64 {
		key := [2]int{a*4 + sa + 1, b*4 + sb + 1}
		if v, ok := cache[key]; ok {
			return v
		}
		y := append([]float64(nil), x...)
		if a >= 0 {
			y[union[a]] += float64(sa) * d[a]
		}
		if b >= 0 {
			y[union[b]] += float64(sb) * d[b]
		}
		v, err := t.FreeEnergy(ctx, y)
		if err != nil && failed == nil {
			failed = err
		}
		cache[key] = v
		return v
	}
	f0 := f(-1, 0, -1, 0)
	if failed != nil {
		p.Flags = append(p.Flags, "free energy: "+failed.Error())
		return p
	}
	p.F = f0
	grad := make([]float64, n)
	hess := make([][]float64, n)
	for a := range hess {
		hess[a] = make([]float64, n)
		fp, fm := f(a, 1, -1, 0), f(a, -1, -1, 0)
		grad[a] = (fp - fm) / (2 * d[a])
		hess[a][a] = (fp - 2*f0 + fm) / (d[a] * d[a])
	}
	for a := 0; a < n; a++ {
		for b := a + 1; b < n; b++ {
			v := (f(a, 1, b, 1) - f(a, 1, b, -1) - f(a, -1, b, 1) + f(a, -1, b, -1)) / (4 * d[a] * d[b])
			hess[a][b], hess[b][a] = v, v
		}
	}
	if failed != nil {
		p.Flags = append(p.Flags, "derivatives: "+failed.Error())
		return p
	}
	at := func(i int) int { return slices.Index(union, i) }
	var xg, xx float64
	for _, i := range ray {
		xg += x[i] * grad[at(i)]
		for _, j := range ray {
			xx += x[i] * x[j] * hess[at(i)][at(j)]
		}
	}
	if e >= 0 && x[e] != 0 {
		p.U = -xg / x[e]
	}
	p.C = xx
	orderedBoundary := false
	if field >= 0 {
		p.M, p.Chi = grad[at(field)], hess[at(field)][at(field)]
		if x[field] == 0 && onlyFieldZero(cs, x) {
			ph := t.Phase(ctx, x)
			switch {
			case ph.Index >= 2:
				// h = 0 is a first-order boundary: the one-sided limit
				// h -> 0+, from s(δ) = (F(δ) − F(0))/δ with one
				// Richardson step, m0 = 2 s(δ) − s(2δ).
				a := at(field)
				s1 := (f(a, 1, -1, 0) - f0) / d[a]
				y := append([]float64(nil), x...)
				y[field] = 2 * d[a]
				f2, err := t.FreeEnergy(ctx, y)
				if err == nil {
					s2 := (f2 - f0) / (2 * d[a])
					p.M0 = 2*s1 - s2
					p.M = p.M0
				}
				p.Chi = nan
				p.Flags = append(p.Flags, "ordered phase at h = 0 (a first-order boundary): magnetization as the one-sided limit h -> 0+; susceptibility not given")
				if slices.Contains(metric, field) {
					orderedBoundary = true
					p.Metric, p.Det = nil, nan
					p.Flags = append(p.Flags, "metric: the field's second derivative does not exist on the first-order boundary h = 0")
				}
			case ph.Index == 1:
				p.M0 = 0
			}
		}
	}
	if len(metric) > 0 && !orderedBoundary {
		p.Metric = make([][]float64, len(metric))
		for a, i := range metric {
			p.Metric[a] = make([]float64, len(metric))
			for b, j := range metric {
				p.Metric[a][b] = hess[at(i)][at(j)]
			}
		}
		p.Det = flow.Det(p.Metric)
	}
	p.Flags = append(p.Flags,
		fmt.Sprintf("derivatives by central differences of the tensor free energy, step %g relative", TensorStep),
		"curvature and correlation length: not available from a truncated tensor free energy")
	if p.C < 0 || p.Chi < 0 {
		p.Flags = append(p.Flags, "a negative second derivative: the truncation error dominates the difference here (near the transition, or chi too small)")
		if p.C < 0 {
			p.C = nan
		}
		if p.Chi < 0 {
			p.Chi = nan
		}
	}
	return p
}

// onlyFieldZero reports whether every symmetry-breaking coupling of x is
// zero.
func onlyFieldZero(cs []flow.Coupling, x []float64) bool {
	for i, c := range cs {
		if !c.Symmetric && x[i] != 0 {
			return false
		}
	}
	return true
}
