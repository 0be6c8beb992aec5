package decimation

import (
	"math"
	"testing"
)

// bondEnergy is −H/kT of one bond plus, for the site s, its one-body terms:
// a ring's weight is exp(Σ_i e(s_i, s_{i+1})). Written from the
// Hamiltonians directly, independently of Model.Edge.
type bondEnergy func(x []float64, s, t int) float64

var isingSpin = [2]float64{1, -1}

func isingEnergy(x []float64, s, t int) float64 {
	return x[0]*isingSpin[s]*isingSpin[t] + x[1]*isingSpin[s]
}

func potts3Energy(x []float64, s, t int) float64 {
	return x[0]*delta(s, t) + x[1]*delta(s, 0) + x[2]*delta(s, 0)*delta(t, 0)
}

var spin1Spin = [3]float64{1, 0, -1}

func spin1Energy(x []float64, i, j int) float64 {
	s, t := spin1Spin[i], spin1Spin[j]
	return x[0]*s*t + x[1]*s*s*t*t - x[2]*s*s + x[3]*s + x[4]*(s*s*t+s*t*t)/2
}

// ringLnZ enumerates every configuration of a ring of n sites with q
// states and returns ln Z by log-sum-exp.
func ringLnZ(e bondEnergy, x []float64, q, n int) float64 {
	conf := make([]int, n)
	var terms []float64
	for {
		w := 0.0
		for i := 0; i < n; i++ {
			w += e(x, conf[i], conf[(i+1)%n])
		}
		terms = append(terms, w)
		i := 0
		for ; i < n; i++ {
			conf[i]++
			if conf[i] < q {
				break
			}
			conf[i] = 0
		}
		if i == n {
			break
		}
	}
	mx := math.Inf(-1)
	for _, v := range terms {
		mx = math.Max(mx, v)
	}
	s := 0.0
	for _, v := range terms {
		s += math.Exp(v - mx)
	}
	return mx + math.Log(s)
}

// TestBruteForceRing checks the per-site constant convention directly on
// a ring of 6 sites: ln Z_6(x) = 6 g(x) + ln Z_3(x′) for b = 2, both
// partition functions by enumeration of the Hamiltonian (summing out every
// other spin of a ring is exact: common practice, Nelson–Fisher 1975).
func TestBruteForceRing(t *testing.T) {
	cases := []struct {
		m *Model
		e bondEnergy
		q int
		x [][]float64
	}{
		{NewIsing(), isingEnergy, 2, [][]float64{{0.7, 0.3}, {-1.1, 0.8}, {0.4, -2}}},
		{mustPotts(t, 3), potts3Energy, 3, [][]float64{{0.9, 0.4, -0.3}, {-0.8, -0.6, 1.2}}},
		{NewSpin1(), spin1Energy, 3, [][]float64{{0.6, -0.4, 0.3, 0.2, -0.5}, {-0.9, 0.8, -0.7, -0.4, 0.6}}},
	}
	for _, tc := range cases {
		c := mustChain(t, tc.m, 2)
		for _, x := range tc.x {
			xp, g := step(c, x)
			lhs := ringLnZ(tc.e, x, tc.q, 6)
			rhs := 6*g + ringLnZ(tc.e, xp, tc.q, 3)
			if !near(lhs, rhs, tolExact) {
				t.Errorf("%s x=%v: ln Z_6 = %.15g, 6 g + ln Z_3(x′) = %.15g", tc.m.Name(), x, lhs, rhs)
			}
		}
	}
}
