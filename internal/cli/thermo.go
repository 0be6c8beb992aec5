package cli

import (
	"context"
	"fmt"
	"io"
	"math"
	"os"
	"runtime"
	"strings"
	"sync"
	"time"

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
			if b.tensor != nil {
				return runThermoTensor(cmd.Context(), o, b, along, grid, at, metric, stdout)
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
			pts, ts, path, temp, err := thermoInputs(b.m, along, grid, atv, func(p flow.Path) error { return checkPath(b.m, p) })
			if err != nil {
				return err
			}
			rows := thermoPoints(cmd.Context(), b.m, pts, mi)
			for k := range rows {
				rows[k].M0 = orderParameter(b, rows[k].M0)
			}
			doc := report.ThermoDoc{Meta: b.meta, Map: b.m, Metric: mi, Points: rows, Temperature: temp, T: ts}
			if path != nil {
				doc.Effective = effectiveExponents(cmd.Context(), b, *path, mi)
			}
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

// thermoInputs lays out the points of a thermo run: a grid, or the
// samples of a path (returned too, with whether it is a temperature path);
// check vets the path.
func thermoInputs(c flow.Coupled, along, grid string, atv map[string]float64, check func(flow.Path) error) (pts [][]float64, ts []float64, path *flow.Path, temp bool, err error) {
	if grid != "" {
		pts, err = gridPoints(c, grid, atv)
		return pts, nil, nil, false, err
	}
	if along == "" {
		return nil, nil, nil, false, usagef("thermo needs --along NAME=FROM:TO[:N] or --grid A=FROM:TO:N,B=FROM:TO:N")
	}
	ar, err := parseRange("--along", along, false)
	if err != nil {
		return nil, nil, nil, false, err
	}
	p, isT, err := pathFor(c, ar, atv, 100)
	if err != nil {
		return nil, nil, nil, false, err
	}
	if check != nil {
		if err := check(p); err != nil {
			return nil, nil, nil, false, err
		}
	}
	for k := 0; k < p.Samples; k++ {
		v := p.From + (p.To-p.From)*float64(k)/float64(p.Samples-1)
		x := make([]float64, len(c.Couplings()))
		p.Point(x, v)
		pts = append(pts, x)
		ts = append(ts, v)
	}
	return pts, ts, &p, isT, nil
}

func metricIndices(m flow.Coupled, spec string) ([]int, error) {
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

func gridPoints(m flow.Coupled, grid string, at map[string]float64) ([][]float64, error) {
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

// orderParameter turns the spontaneous magnetization m0 into the order
// parameter: for Potts the field is on state 1, m0 is the fraction of sites
// in state 1, and the order parameter is (q m0 - 1)/(q - 1); other models
// return m0.
func orderParameter(b *built, m0 float64) float64 {
	if b.model == nil || !strings.HasPrefix(b.model.Name(), "potts") || m0 != m0 {
		return m0
	}
	q := b.model.States()
	v := (q*m0 - 1) / (q - 1)
	if v < 1e-12 {
		v = 0
	}
	return v
}

// thermoPoints computes every point, in parallel on all cores.
func thermoPoints(ctx context.Context, m flow.Map, pts [][]float64, metric []int) []report.ThermoPoint {
	return eachPoint(ctx, len(pts), func(k int) report.ThermoPoint { return flow.Thermo(m, pts[k], metric) })
}

// eachPoint computes f for every point on all cores, showing progress on a
// terminal.
func eachPoint(ctx context.Context, n int, f func(k int) report.ThermoPoint) []report.ThermoPoint {
	out := make([]report.ThermoPoint, n)
	work := make(chan int)
	var wg sync.WaitGroup
	var mu sync.Mutex
	done := 0
	start := time.Now()
	show := isTerminal(os.Stderr)
	for w := 0; w < runtime.GOMAXPROCS(0); w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for k := range work {
				out[k] = f(k)
				mu.Lock()
				done++
				if show && time.Since(start) > time.Second {
					fmt.Fprintf(os.Stderr, "\r\033[K%6.1fs  point %d of %d", time.Since(start).Seconds(), done, n)
					progressShown = true
				}
				mu.Unlock()
			}
		}()
	}
	for k := 0; k < n; k++ {
		if ctx.Err() != nil {
			break
		}
		work <- k
	}
	close(work)
	wg.Wait()
	clearProgress()
	return out
}

// effectiveExponents reads exponents off the computed quantities near each
// continuous transition on the path, beside those the controlling fixed
// point predicts: ν from ξ on the disordered side, β from m₀ on the ordered
// side, α − 2 from the curvature on the disordered side (hyperscaling),
// each as the log slope between reduced distances 1e-3 and 1e-4. They are
// reported, not asserted: regular parts and, on hierarchical constructions
// such as bond moving, log-periodic oscillations make them differ.
func effectiveExponents(ctx context.Context, b *built, p flow.Path, metric []int) []report.Effective {
	sp, err := critSetup(ctx, b)
	if err != nil {
		return nil
	}
	xs, err := flow.Crossings(ctx, sp, p, &flow.CrossingSettings{Tol: 1e-11})
	if err != nil {
		return nil
	}
	e := flow.ExchangeIndex(b.m)
	var out []report.Effective
	for _, c := range xs {
		if c.Kind != flow.Continuous || c.Controlling < 0 || e < 0 {
			continue
		}
		fp := sp.Points()[c.Controlling]
		r := report.Effective{At: c.Value, Variable: p.Name, Nu: nan(), NuEff: nan(), Beta: nan(), BetaEff: nan(), Gamma: nan(), GammaEff: nan(), Alpha: nan(), AlphaEff: nan(), AlphaMinus2: nan(), CurvatureEff: nan()}
		if v, ok := flow.Lookup(fp.Exponents, "nu"); ok {
			r.Nu = v
		}
		if v, ok := flow.Lookup(fp.Exponents, "beta"); ok {
			r.Beta = v
		}
		if v, ok := flow.Lookup(fp.Exponents, "gamma"); ok {
			r.Gamma = v
		}
		if v, ok := flow.Lookup(fp.Exponents, "alpha"); ok {
			r.Alpha, r.AlphaMinus2 = v, v-2
		}
		at := func(sv float64) []float64 {
			x := make([]float64, len(b.m.Couplings()))
			p.Point(x, sv)
			return x
		}
		// Which side is ordered.
		up := at(c.Value * (1 + 1e-3))
		upOrdered, _ := flow.Ordered(b.m, up, e)
		side := func(ordered bool, eps float64) []float64 {
			if ordered == upOrdered {
				return at(c.Value * (1 + eps))
			}
			return at(c.Value * (1 - eps))
		}
		// The two reduced distances are 1e-3 and 1e-3/ratio with ratio =
		// b^{k y_t}, the integer number k of log-periods closest to a
		// decade: a hierarchical construction's log-periodic modulation
		// of the amplitudes then cancels in the slope.
		ratio := 10.0
		if yt, ok := flow.Lookup(fp.Exponents, "y_t"); ok && yt > 0 {
			per := yt * math.Log(b.m.Rescale())
			ratio = math.Exp(per * math.Max(1, math.Round(math.Log(10)/per)))
		}
		const t1 = 1e-3
		t2 := t1 / ratio
		slope := func(f func(x []float64) float64, ordered bool) float64 {
			a, bb := f(side(ordered, t1)), f(side(ordered, t2))
			if !(a > 0 && bb > 0) {
				return nan()
			}
			return math.Log(bb/a) / math.Log(t2/t1)
		}
		r.NuEff = -slope(func(x []float64) float64 { v, _ := flow.CorrelationLength(b.m, x); return v }, false)
		// α from the specific heat's singular part on the disordered
		// side: the second difference D(t) = C(2t) − 2C(t) + C(0) removes
		// the regular part's constant and linear terms and keeps
		// A t^{−α}(2^{−α} − 2).
		if c0 := flow.Thermo(b.m, at(c.Value), metric).C; !math.IsNaN(c0) {
			cAt := func(eps float64) float64 { return flow.Thermo(b.m, side(false, eps), metric).C }
			dd := func(eps float64) float64 { return math.Abs(cAt(2*eps) - 2*cAt(eps) + c0) }
			if a, bb := dd(t1), dd(t2); a > 0 && bb > 0 {
				r.AlphaEff = -math.Log(bb/a) / math.Log(t2/t1)
			}
		}
		r.CurvatureEff = slope(func(x []float64) float64 { return math.Abs(flow.Thermo(b.m, x, metric).R) }, false)
		for i, cp := range b.m.Couplings() {
			if cp.Role == flow.Field {
				r.BetaEff = slope(func(x []float64) float64 {
					_, st := flow.Ordered(b.m, x, e)
					v, _ := flow.SpontaneousMagnetization(b.m, x, i, st)
					return orderParameter(b, v)
				}, true)
				// γ from χ(0+) on the ordered side: χ ~ t^{−γ}.
				r.GammaEff = -slope(func(x []float64) float64 {
					_, st := flow.Ordered(b.m, x, e)
					x[i] = 0
					v, ok := flow.OrderedSusceptibility(b.m, x, i, st)
					if !ok {
						return nan()
					}
					return v
				}, true)
				break
			}
		}
		out = append(out, r)
	}
	return out
}

func nan() float64 { return math.NaN() }
