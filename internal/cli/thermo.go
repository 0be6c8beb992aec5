package cli

import (
	"context"
	"fmt"
	"io"
	"math"
	"runtime"
	"strings"
	"sync"

	"github.com/spf13/cobra"

	"scalewalk/flow"
	"scalewalk/internal/report"
)

func newThermo(stdout io.Writer) *cobra.Command {
	o := &options{}
	var along, at, metric, grid string
	c := &cobra.Command{
		Use:   "thermo [SCENARIO] --along NAME=FROM:TO[:N] [--at NAME=VALUE,...] [--metric A,B[,C]] [--grid A=FROM:TO:N,B=FROM:TO:N] [--json|--csv]",
		Short: "free energy, energy, specific heat, magnetization, susceptibility, thermodynamic metric and its curvature",
		Long: `thermo computes, at each point of a path (--along, --at: the same semantics as
critical; N defaults to 100 here) or of a grid (--grid):
  free_energy     ln Z/N per site (= -beta f; ln 2 for Ising at zero couplings),
                  the RG sum over n of b^(-d n) g(x_n)
  energy          u = -d(ln Z/N)/d(beta) along the ray on which every coupling
                  scales as 1/T, in units of the exchange
  specific_heat   C/k_B = beta^2 d^2(ln Z/N)/d(beta)^2 = sum_ij x_i x_j g_ij
  magnetization   m = d(ln Z/N)/dh, per site (reduced)
  susceptibility  chi = d^2(ln Z/N)/dh^2, per site (reduced)
  metric          g_ij = d^2(ln Z/N)/dx_i dx_j over the couplings of --metric
                  (default: the exchange and the field), its determinant
  curvature       the scalar curvature R of that metric, dimensionless, in the
                  convention R > 0 on a round sphere and R = 2 x the Gaussian
                  curvature for two couplings (the same convention for three)
Derivatives are taken by Richardson-extrapolated central differences of the
RG free energy; where their error estimate is large (on a phase boundary, or
where the scheme makes a response diverge, such as the field at the
disordered sink of bond moving) the value is null with a flag.`,
		Example: `  scalewalk thermo --model ising --scheme chain --set b=2 --along T=0.2:5:400 --at h=0.1 --csv
  scalewalk thermo chain-compound --json
  scalewalk thermo --model ising --scheme bondmove --grid K=0.05:1.5:40,h=-1:1:40 --csv`,
		Args: cobra.MaximumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if err := o.takeArgs(cmd, args); err != nil {
				return err
			}
			if err := o.checkFormat(); err != nil {
				return err
			}
			b, err := o.build()
			if err != nil {
				return err
			}
			if b.scenario != nil && b.scenario.File.Path != nil && along == "" && grid == "" {
				along = b.scenario.File.Path.Along
				if !cmd.Flags().Changed("at") {
					at = b.scenario.File.Path.At
				}
			}
			if hc, ok := b.m.(interface{ HasConstant() bool }); ok && !hc.HasConstant() {
				return usagef("thermodynamics needs the constant g of each step; this recursion gives none (add constant = \"...\" to its [recursion])")
			}
			atv, err := parseAt(at)
			if err != nil {
				return err
			}
			mi, err := metricIndices(b.m, metric)
			if err != nil {
				return err
			}
			var pts [][]float64
			var ts []float64
			temp := false
			if grid != "" {
				pts, err = gridPoints(b.m, grid, atv)
				if err != nil {
					return err
				}
			} else {
				if along == "" {
					return usagef("thermo needs --along NAME=FROM:TO[:N] or --grid A=FROM:TO:N,B=FROM:TO:N")
				}
				ar, err := parseRange("--along", along, false)
				if err != nil {
					return err
				}
				p, isT, err := pathFor(b.m, ar, atv, 100)
				if err != nil {
					return err
				}
				if err := checkPath(b.m, p); err != nil {
					return err
				}
				temp = isT
				for k := 0; k < p.Samples; k++ {
					v := p.From + (p.To-p.From)*float64(k)/float64(p.Samples-1)
					x := make([]float64, len(b.m.Couplings()))
					p.Point(x, v)
					pts = append(pts, x)
					ts = append(ts, v)
				}
			}
			rows := thermoPoints(cmd.Context(), b.m, pts, mi)
			if b.model != nil && strings.HasPrefix(b.model.Name(), "potts") {
				// For Potts the field is on state 1: m is the fraction of
				// sites in state 1, and the order parameter is (q m - 1)/(q - 1).
				q := b.model.States()
				for k := range rows {
					if rows[k].M0 == rows[k].M0 {
						rows[k].M0 = (q*rows[k].M0 - 1) / (q - 1)
						if rows[k].M0 < 1e-12 {
							rows[k].M0 = 0
						}
					}
				}
			}
			doc := report.ThermoDoc{Meta: b.meta, Map: b.m, Metric: mi, Points: rows, Temperature: temp, T: ts}
			switch {
			case o.json:
				return writeJSON(stdout, report.Thermo(doc))
			case o.csv:
				return report.ThermoCSV(stdout, doc)
			}
			return report.ThermoText(stdout, doc)
		},
	}
	c.Flags().StringVar(&along, "along", "", "the path, NAME=FROM:TO[:N] with NAME a coupling or T (N default 100)")
	c.Flags().StringVar(&at, "at", "", "held couplings, NAME=VALUE,... (energies in units of the exchange on a T path)")
	c.Flags().StringVar(&metric, "metric", "", "couplings of the metric, A,B[,C] (default: the exchange and the field)")
	c.Flags().StringVar(&grid, "grid", "", "a two-dimensional grid, A=FROM:TO:N,B=FROM:TO:N, computed on all cores")
	o.addModelFlags(c.Flags())
	o.addFormatFlags(c.Flags())
	return c
}

func metricIndices(m flow.Map, spec string) ([]int, error) {
	cs := m.Couplings()
	if spec == "" {
		var out []int
		if e := exchangeIndex(m); e >= 0 {
			out = append(out, e)
		}
		for i, c := range cs {
			if c.Role == flow.Field {
				out = append(out, i)
				break
			}
		}
		if len(out) == 0 {
			out = []int{0}
		}
		return out, nil
	}
	var out []int
	for _, n := range strings.Split(spec, ",") {
		i := flow.Index(m, strings.TrimSpace(n))
		if i < 0 {
			return nil, usagef("--metric %s: no coupling %q; the couplings are %s", spec, n, strings.Join(flow.Names(m), ", "))
		}
		out = append(out, i)
	}
	if len(out) < 1 || len(out) > 3 {
		return nil, usagef("--metric %s: give one to three couplings", spec)
	}
	return out, nil
}

func gridPoints(m flow.Map, grid string, at map[string]float64) ([][]float64, error) {
	specs := strings.SplitN(grid, ",", 2)
	if len(specs) != 2 {
		return nil, usagef("--grid %q: expected A=FROM:TO:N,B=FROM:TO:N", grid)
	}
	ra, err := parseRange("--grid", specs[0], true)
	if err != nil {
		return nil, err
	}
	rb, err := parseRange("--grid", specs[1], true)
	if err != nil {
		return nil, err
	}
	ia, ib := flow.Index(m, ra.name), flow.Index(m, rb.name)
	if ia < 0 || ib < 0 || ia == ib {
		return nil, usagef("--grid %q: expected two different couplings among %s", grid, strings.Join(flow.Names(m), ", "))
	}
	if ra.n*rb.n > 1000000 {
		return nil, usagef("--grid %q: %d points is too many (at most 1000000)", grid, ra.n*rb.n)
	}
	base := make([]float64, len(m.Couplings()))
	for name, v := range at {
		i := flow.Index(m, name)
		if i < 0 {
			return nil, usagef("--at %s: no coupling %q", name, name)
		}
		base[i] = v
	}
	var out [][]float64
	for j := 0; j < rb.n; j++ {
		for i := 0; i < ra.n; i++ {
			x := append([]float64(nil), base...)
			x[ia] = ra.from + (ra.to-ra.from)*float64(i)/float64(ra.n-1)
			x[ib] = rb.from + (rb.to-rb.from)*float64(j)/float64(rb.n-1)
			out = append(out, x)
		}
	}
	return out, nil
}

// thermoPoints computes every point, in parallel on all cores.
func thermoPoints(ctx context.Context, m flow.Map, pts [][]float64, metric []int) []report.ThermoPoint {
	out := make([]report.ThermoPoint, len(pts))
	work := make(chan int)
	var wg sync.WaitGroup
	for w := 0; w < runtime.GOMAXPROCS(0); w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for k := range work {
				out[k] = thermoPoint(m, pts[k], metric)
			}
		}()
	}
	for k := range pts {
		if ctx.Err() != nil {
			break
		}
		work <- k
	}
	close(work)
	wg.Wait()
	return out
}

// thermoPoint computes the quantities at one point.
func thermoPoint(m flow.Map, x []float64, metric []int) (p report.ThermoPoint) {
	nan := math.NaN()
	p = report.ThermoPoint{X: x, F: nan, U: nan, C: nan, M: nan, Chi: nan, M0: nan, Xi: nan, Det: nan, R: nan}
	defer func() {
		if r := recover(); r != nil {
			p.Flags = append(p.Flags, fmt.Sprintf("internal error: %v", r))
		}
	}()
	cs := m.Couplings()
	perSite := 1.0
	if pb, ok := m.(flow.PerBonder); ok && pb.PerBond() {
		perSite = 1 / pb.SitesPerBond()
	}
	ok := func(d flow.Derivatives) bool { return d.Err <= 1e-5*(1+maxAbsMatrix(d.Hess)) }
	flag := func(what string, d flow.Derivatives) {
		p.Flags = append(p.Flags, fmt.Sprintf("%s: derivatives unreliable (error estimate %.2g): on a phase boundary, or where the scheme makes a response diverge (bond moving: the field at the disordered sink)", what, d.Err))
	}
	// The energy and specific heat: derivatives over the couplings that
	// are not zero (the ray on which they all scale as 1/T).
	var ray []int
	for i := range cs {
		if x[i] != 0 {
			ray = append(ray, i)
		}
	}
	if len(ray) == 0 {
		ray = []int{0}
	}
	d := flow.FreeEnergyDerivatives(m, x, ray, 2)
	if d.Flag != "" {
		p.Flags = append(p.Flags, d.Flag)
		return p
	}
	p.F = d.F * perSite
	e := exchangeIndex(m)
	var xg, xx float64
	for a, i := range ray {
		xg += x[i] * d.Grad[a]
		for c, j := range ray {
			xx += x[i] * x[j] * d.Hess[a][c]
		}
	}
	if e >= 0 && x[e] != 0 {
		p.U = -xg / x[e] * perSite
	}
	if ok(d) {
		p.C = xx * perSite
	} else {
		flag("specific heat", d)
	}
	if xi, ok := flow.CorrelationLength(m, x); ok {
		p.Xi = xi
		if m.Dimension() != 1 {
			p.Flags = append(p.Flags, "correlation length known up to a factor of order one (exact only in one dimension)")
		}
	} else {
		p.Flags = append(p.Flags, "correlation length: the flow does not reach the disordered sink here (ordered phase, or no estimate for this engine)")
	}
	for i, c := range cs {
		if c.Role == flow.Field {
			if ord, steps := flow.Ordered(m, x, e); e >= 0 && ord {
				m0, limited := flow.SpontaneousMagnetization(m, x, i, steps)
				p.M0 = m0 * perSite
				if limited {
					p.Flags = append(p.Flags, "spontaneous magnetization: close to T_c the limit h -> 0+ is limited by rounding")
				}
			} else if e >= 0 {
				p.M0 = 0
			}
			dh := flow.FreeEnergyDerivatives(m, x, []int{i}, 2)
			p.M = dh.Grad[0] * perSite
			if ok(dh) {
				p.Chi = dh.Hess[0][0] * perSite
			} else {
				p.M = math.NaN()
				flag("magnetization and susceptibility", dh)
			}
			break
		}
	}
	dm := flow.FreeEnergyDerivatives(m, x, metric, 3)
	minDiag := math.Inf(1)
	for a := range metric {
		minDiag = math.Min(minDiag, math.Abs(dm.Hess[a][a]))
	}
	if !ok(dm) || dm.Err > 1e-4*minDiag {
		flag("metric", dm)
		return p
	}
	k := len(metric)
	p.Metric = make([][]float64, k)
	for a := range p.Metric {
		p.Metric[a] = make([]float64, k)
		for b := range p.Metric[a] {
			p.Metric[a][b] = dm.Hess[a][b] * perSite
		}
	}
	p.Det = det(p.Metric)
	if k >= 2 {
		diag := 1.0
		for a := 0; a < k; a++ {
			diag *= math.Abs(p.Metric[a][a])
		}
		if math.Abs(p.Det) < 1e-9*diag || diag == 0 {
			p.Flags = append(p.Flags, "curvature: the metric is nearly singular here (a frozen or decoupled direction), so R is not given")
			return p
		}
		if dm.Err3 > 1e-4*(maxAbs3(dm.Third)+1e-300) {
			p.Flags = append(p.Flags, fmt.Sprintf("curvature: third derivatives unreliable (error estimate %.2g)", dm.Err3))
			return p
		}
		third := dm.Third
		for a := range third {
			for b := range third[a] {
				for c := range third[a][b] {
					third[a][b][c] *= perSite
				}
			}
		}
		p.R = flow.HessianCurvature(p.Metric, third)
	}
	return p
}

func maxAbsMatrix(a [][]float64) float64 {
	var m float64
	for _, r := range a {
		for _, v := range r {
			m = math.Max(m, math.Abs(v))
		}
	}
	return m
}

func det(a [][]float64) float64 {
	switch len(a) {
	case 1:
		return a[0][0]
	case 2:
		return a[0][0]*a[1][1] - a[0][1]*a[1][0]
	case 3:
		return a[0][0]*(a[1][1]*a[2][2]-a[1][2]*a[2][1]) - a[0][1]*(a[1][0]*a[2][2]-a[1][2]*a[2][0]) + a[0][2]*(a[1][0]*a[2][1]-a[1][1]*a[2][0])
	}
	return math.NaN()
}

func maxAbs3(t [][][]float64) float64 {
	var m float64
	for _, a := range t {
		m = math.Max(m, maxAbsMatrix(a))
	}
	return m
}
