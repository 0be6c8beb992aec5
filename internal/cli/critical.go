package cli

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"github.com/spf13/cobra"

	"scalewalk/flow"
	"scalewalk/internal/report"
	"scalewalk/scenarios"
)

// rangeSpec is NAME=FROM:TO[:N].
type rangeSpec struct {
	name     string
	from, to float64
	n        int // 0 when not given
}

func parseRange(flag, s string, needN bool) (rangeSpec, error) {
	var r rangeSpec
	name, rest, ok := strings.Cut(strings.TrimSpace(s), "=")
	name = strings.TrimSpace(name)
	if !ok || name == "" {
		return r, usagef("%s %q: expected NAME=FROM:TO[:N], e.g. %s T=0.5:3", flag, s, flag)
	}
	parts := strings.Split(rest, ":")
	if len(parts) < 2 || len(parts) > 3 || (needN && len(parts) != 3) {
		want := "FROM:TO[:N]"
		if needN {
			want = "FROM:TO:N"
		}
		return r, usagef("%s %q: expected NAME=%s", flag, s, want)
	}
	r.name = name
	var err error
	for i, dst := range []*float64{&r.from, &r.to} {
		*dst, err = strconv.ParseFloat(strings.TrimSpace(parts[i]), 64)
		if err != nil || math.IsNaN(*dst) || math.IsInf(*dst, 0) {
			return r, usagef("%s %q: %q is not a finite number", flag, s, parts[i])
		}
	}
	if r.from == r.to {
		return r, usagef("%s %q: FROM and TO are equal; give a range", flag, s)
	}
	if len(parts) == 3 {
		n, err := strconv.Atoi(strings.TrimSpace(parts[2]))
		if err != nil || n < 2 || n > 1000000 {
			return r, usagef("%s %q: N must be a whole number from 2 to 1000000", flag, s)
		}
		r.n = n
	}
	return r, nil
}

// parseAt parses NAME=VALUE,... into a map.
func parseAt(s string) (map[string]float64, error) {
	out := map[string]float64{}
	if strings.TrimSpace(s) == "" {
		return out, nil
	}
	for _, part := range strings.Split(s, ",") {
		name, val, ok := strings.Cut(strings.TrimSpace(part), "=")
		name = strings.TrimSpace(name)
		if !ok || name == "" {
			return nil, usagef("--at %q: %q is not NAME=VALUE", s, part)
		}
		v, err := strconv.ParseFloat(strings.TrimSpace(val), 64)
		if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, usagef("--at %q: %s=%s is not a finite number", s, name, val)
		}
		if _, dup := out[name]; dup {
			return nil, usagef("--at %q: %s given twice", s, name)
		}
		out[name] = v
	}
	return out, nil
}

// exchangeIndex returns the coupling that sets the temperature scale: the
// first exchange coupling.
func exchangeIndex(m flow.Coupled) int {
	for i, c := range m.Couplings() {
		if c.Role == flow.Exchange && c.Symmetric {
			return i
		}
	}
	return -1
}

// pathFor builds the path for --along/--at: on a temperature path every
// coupling scales as 1/T, the exchange being 1/T and the --at values
// energies in units of the exchange; on a coupling path the held couplings
// are fixed dimensionless values.
func pathFor(m flow.Coupled, along rangeSpec, at map[string]float64, samples int) (flow.Path, bool, error) {
	cs := m.Couplings()
	names := flow.Names(m)
	base := make([]float64, len(cs))
	for name, v := range at {
		i := flow.Index(m, name)
		if i < 0 {
			return flow.Path{}, false, usagef("--at %s: no coupling %q; the couplings are %s", name, name, strings.Join(names, ", "))
		}
		base[i] = v
	}
	n := along.n
	if n == 0 {
		n = samples
	}
	p := flow.Path{Name: along.name, From: along.from, To: along.to, Samples: n}
	if along.name == "T" {
		e := exchangeIndex(m)
		if e < 0 {
			return p, false, usagef("--along T: this model has no exchange coupling to set the temperature scale; use a coupling path")
		}
		if _, ok := at[cs[e].Name]; ok {
			return p, false, usagef("--at %s: on a temperature path the exchange %s is 1/T; the other --at values are energies in units of it", cs[e].Name, cs[e].Name)
		}
		if along.from <= 0 || along.to <= 0 {
			return p, false, usagef("--along T=%g:%g: temperatures must be > 0 (kT in units of the exchange %s)", along.from, along.to, cs[e].Name)
		}
		p.Point = func(dst []float64, t float64) {
			for i := range dst {
				dst[i] = base[i] / t
			}
			dst[e] = 1 / t
		}
		return p, true, nil
	}
	i := flow.Index(m, along.name)
	if i < 0 {
		return p, false, usagef("--along %s: no coupling %q; give T or one of %s", along.name, along.name, strings.Join(names, ", "))
	}
	if _, ok := at[along.name]; ok {
		return p, false, usagef("--at %s: %s is the path variable", along.name, along.name)
	}
	p.Point = func(dst []float64, s float64) {
		copy(dst, base)
		dst[i] = s
	}
	return p, false, nil
}

// checkPath refuses a path that leaves the map's domain at a sample.
func checkPath(m flow.Map, p flow.Path) error {
	d, ok := m.(flow.Domainer)
	if !ok {
		return nil
	}
	x := make([]float64, len(m.Couplings()))
	for k := 0; k < p.Samples; k++ {
		v := p.From + (p.To-p.From)*float64(k)/float64(p.Samples-1)
		p.Point(x, v)
		if err := d.Domain(x); err != nil {
			return usagef("--along %s: the path leaves the physical domain at %s=%g: %v", p.Name, p.Name, v, err)
		}
	}
	return nil
}

func newCritical(stdout io.Writer) *cobra.Command {
	o := &options{}
	var along, at, sweep, grid, chis string
	var samples int
	var tol float64
	c := &cobra.Command{
		Use:   "critical [SCENARIO] --along NAME=FROM:TO[:N] [--at NAME=VALUE,...] [--samples N] [--tol T] [--sweep NAME=FROM:TO[:N]] [--model M] [--scheme S] [--set NAME=VALUE]... [--json|--csv]",
		Short: "locate every transition along a path in coupling space or in temperature",
		Long: `critical samples a path, follows the flow from every sample to the phase
(sink) it reaches, and bisects every bracket whose ends reach different phases
down to --tol. For each crossing it prints the critical value to the digits
the tolerance supports, the bracket, the fixed point that controls it (the one
the flows from both sides of the crossing stay near longest, in compact
coordinates), and whether the transition is continuous (a critical or
multicritical point) or first order (a discontinuity fixed point).

Paths:
  --along T=FROM:TO[:N]     a temperature path: the exchange coupling is 1/T
                            (T is kT in units of the exchange) and every --at
                            value is an energy in units of the exchange, so
                            all couplings scale as 1/T; kT_c/J is printed.
  --along NAME=FROM:TO[:N]  a coupling path: the held couplings (--at) are
                            fixed dimensionless values.
N evenly spaced samples include both ends (default --samples, 64).
Crossings closer together than the sampling step may be missed.

--sweep NAME=FROM:TO[:N] repeats the path search for each value of a held
coupling (on a temperature path, an energy ratio) and reports, by bisection,
where the transition changes kind along that line (a tricritical point).
--grid A=FROM:TO:N,B=FROM:TO:N prints the phase reached from every point of a
two-dimensional grid of couplings (held couplings from --at).

Every critical coupling or temperature is printed with the scheme's order
where it has one (bond moving: move-first or decimate-first).

With --scheme tensor the phase of each point is read from the degeneracy X
of the coarse tensor (1 disordered, n ordered with n states), decided at the
first square step where X settles within 0.02 of a whole number (at most 60
steps; a flow still undecided ends the bisection and the bracket is given);
the defaults there are --samples 8 and --tol 1e-6, there is no controlling
fixed point, and the kind comes from the plateau X holds at the transition.
--chis 8,16,32 repeats the search at each bond dimension and extrapolates
each transition in chi (three values in ratio: Aitken's delta-squared, for a
truncation error falling geometrically; two: their difference as the error).`,
		Example: `  scalewalk critical --model ising --scheme bondmove --set d=2 --along T=1:5
  scalewalk critical --model spin1 --scheme bondmove --set d=2 --set b=2 --along T=0.1:3 --at K=0,D=1.5
  scalewalk critical --model spin1 --scheme bondmove --along J=0.1:3 --at D=0.5 --json
  scalewalk critical --model spin1 --scheme bondmove --along T=0.1:3 --sweep D=0:2:9`,
		Args: cobra.MaximumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if err := o.takeArgs(cmd, args); err != nil {
				return err
			}
			if err := o.checkFormat(); err != nil {
				return err
			}
			if !(tol > 0) || math.IsInf(tol, 0) {
				return usagef("--tol %g: must be a positive number", tol)
			}
			if samples < 2 || samples > 1000000 {
				return usagef("--samples %d: must be a whole number from 2 to 1000000", samples)
			}
			b, err := o.build()
			if err != nil {
				return err
			}
			if b.scenario != nil && b.scenario.File.Path != nil {
				// The scenario's default path, unless the flags give one.
				if along == "" {
					along = b.scenario.File.Path.Along
					if !cmd.Flags().Changed("at") {
						at = b.scenario.File.Path.At
					}
				}
			}
			atv, err := parseAt(at)
			if err != nil {
				return err
			}
			if chis != "" && b.tensor == nil {
				return usagef("--chis repeats a tensor search at several bond dimensions; it needs --scheme tensor")
			}
			if b.tensor != nil {
				if grid != "" || sweep != "" {
					return usagef("--grid and --sweep follow a flow of couplings; the tensor scheme has none: give --along")
				}
				if along == "" {
					return usagef("critical needs a path: --along NAME=FROM:TO[:N] (NAME a coupling or T)")
				}
				ar, err := parseRange("--along", along, false)
				if err != nil {
					return err
				}
				if i := flow.Index(b.tensor, ar.name); i >= 0 && !b.tensor.Couplings()[i].Symmetric {
					return usagef("--along %s: the tensor scheme reads the phase from the degeneracy of the coarse tensor, which does not tell the two field-polarized states apart; give a path along a symmetric coupling or T (below T_c the first-order line is %s = 0)", ar.name, ar.name)
				}
				if !cmd.Flags().Changed("samples") {
					samples = 8
				}
				if !cmd.Flags().Changed("tol") {
					tol = 1e-6
				}
				if chis != "" {
					return runCriticalChis(cmd.Context(), o, chis, ar, atv, samples, tol, stdout)
				}
				return runCriticalTensor(cmd.Context(), o, b, ar, atv, samples, tol, stdout)
			}
			if grid != "" {
				return runGrid(cmd.Context(), o, b, grid, atv, stdout)
			}
			if along == "" {
				return usagef("critical needs a path: --along NAME=FROM:TO[:N] (NAME a coupling or T)")
			}
			ar, err := parseRange("--along", along, false)
			if err != nil {
				return err
			}
			var sw *rangeSpec
			if sweep != "" {
				r, err := parseRange("--sweep", sweep, false)
				if err != nil {
					return err
				}
				if r.n == 0 {
					r.n = samples
				}
				sw = &r
			}
			return runCritical(cmd.Context(), o, b, ar, atv, samples, tol, sw, stdout)
		},
	}
	c.Flags().StringVar(&along, "along", "", "the path, NAME=FROM:TO[:N] with NAME a coupling or T")
	c.Flags().StringVar(&at, "at", "", "held couplings, NAME=VALUE,... (energies in units of the exchange on a T path)")
	c.Flags().IntVar(&samples, "samples", 64, "samples along the path")
	c.Flags().Float64Var(&tol, "tol", 1e-10, "bisection tolerance in the path variable")
	c.Flags().StringVar(&chis, "chis", "", "tensor scheme: repeat at these bond dimensions, e.g. 8,16,32, and extrapolate the transitions in chi")
	c.Flags().StringVar(&sweep, "sweep", "", "repeat for each value of a held coupling, NAME=FROM:TO[:N]")
	c.Flags().StringVar(&grid, "grid", "", "phase map over two couplings, A=FROM:TO:N,B=FROM:TO:N")
	o.addModelFlags(c.Flags())
	o.addFormatFlags(c.Flags())
	return c
}

// critSetup finds the fixed points once and builds the phase decision.
func critSetup(ctx context.Context, b *built) (*flow.SinkPhases, error) {
	var res *flow.FindResult
	err := safely(func() error {
		var e error
		res, e = flow.FindAll(ctx, b.m, nil)
		return e
	})
	if err != nil {
		if errors.Is(err, flow.ErrCanceled) {
			return nil, fmt.Errorf("interrupted: fixed-point search canceled")
		}
		return nil, err
	}
	flow.SortPoints(res.Points)
	return flow.NewSinkPhases(b.m, res.Points), nil
}

func runCritical(ctx context.Context, o *options, b *built, along rangeSpec, at map[string]float64, samples int, tol float64, sweep *rangeSpec, stdout io.Writer) error {
	path, temp, err := pathFor(b.m, along, at, samples)
	if err != nil {
		return err
	}
	if err := checkPath(b.m, path); err != nil {
		return err
	}
	if sweep != nil {
		if sweep.name == along.name {
			return usagef("--sweep %s: the sweep variable must differ from the path variable", sweep.name)
		}
		if flow.Index(b.m, sweep.name) < 0 {
			return usagef("--sweep %s: no coupling %q; the couplings are %s", sweep.name, sweep.name, strings.Join(flow.Names(b.m), ", "))
		}
	}
	sp, err := critSetup(ctx, b)
	if err != nil {
		return err
	}
	doc := report.CriticalDoc{Meta: b.meta, Map: b.m, Path: path, Temperature: temp, At: at, Tolerance: tol,
		Cautions: b.meta.Cautions}
	if b.material != nil {
		doc.Material = &report.MaterialInfo{Name: b.material.Name, Exchange: b.material.Exchange, Unit: b.material.Unit,
			Convention: b.material.Convention, ConventionHelp: scenarios.ConventionHelp(b.material.Convention),
			JModelK: b.material.JModelK, Caution: scenarios.Caution(b.meta.Scheme)}
	}
	var xs []flow.Crossing
	if err := safely(func() error {
		var e error
		xs, e = flow.Crossings(ctx, sp, path, &flow.CrossingSettings{Tol: tol})
		return e
	}); err != nil {
		if errors.Is(err, flow.ErrCanceled) {
			return fmt.Errorf("interrupted: critical search canceled")
		}
		return err
	}
	doc.Crossings = xs
	doc.Points = sp.Points()
	if sweep != nil {
		sw, err := runSweep(ctx, b, sp, along, at, samples, tol, *sweep)
		if err != nil {
			return err
		}
		doc.Sweep = sw
	}
	return writeCritical(o, doc, stdout)
}

// writeCritical writes the critical report in the format asked for.
func writeCritical(o *options, doc report.CriticalDoc, stdout io.Writer) error {
	switch {
	case o.json:
		return writeJSON(stdout, report.Critical(doc))
	case o.csv:
		return report.CriticalCSV(stdout, doc)
	}
	return report.CriticalText(stdout, doc)
}

// runSweep repeats the path search for each sweep value, then bisects
// where the kind of the transition changes.
func runSweep(ctx context.Context, b *built, sp *flow.SinkPhases, along rangeSpec, at map[string]float64, samples int, tol float64, sw rangeSpec) (*report.SweepDoc, error) {
	cross := func(v float64) ([]flow.Crossing, error) {
		at2 := map[string]float64{}
		for k, x := range at {
			at2[k] = x
		}
		at2[sw.name] = v
		p, _, err := pathFor(b.m, along, at2, samples)
		if err != nil {
			return nil, err
		}
		return flow.Crossings(ctx, sp, p, &flow.CrossingSettings{Tol: tol})
	}
	doc := &report.SweepDoc{Name: sw.name}
	for k := 0; k < sw.n; k++ {
		v := sw.from + (sw.to-sw.from)*float64(k)/float64(sw.n-1)
		xs, err := cross(v)
		if err != nil {
			return nil, err
		}
		doc.Rows = append(doc.Rows, report.SweepRow{Value: v, Crossings: xs})
	}
	// The primary transition of each row: the one nearest the previous
	// row's; where its kind changes, bisect on the sweep value.
	primary := func(xs []flow.Crossing, near float64) (flow.Crossing, bool) {
		best, bd := -1, math.Inf(1)
		for i, c := range xs {
			d := math.Abs(c.Value - near)
			if math.IsNaN(near) {
				d = c.Value
			}
			if d < bd {
				best, bd = i, d
			}
		}
		if best < 0 {
			return flow.Crossing{}, false
		}
		return xs[best], true
	}
	prevVal := math.NaN()
	var prev *flow.Crossing
	var prevSweep float64
	for _, row := range doc.Rows {
		c, ok := primary(row.Crossings, prevVal)
		if !ok {
			continue
		}
		// The line changes where the transition stops being continuous
		// (a first-order or an undetermined crossing on the other side).
		if prev != nil && (prev.Kind == flow.Continuous) != (c.Kind == flow.Continuous) {
			a, bb := prevSweep, row.Value
			ka := prev.Kind == flow.Continuous
			va, vb := prev.Value, c.Value
			for k := 0; k < 40 && math.Abs(bb-a) > 1e-6*(1+math.Abs(a)); k++ {
				mid := (a + bb) / 2
				xs, err := cross(mid)
				if err != nil {
					return nil, err
				}
				cm, ok := primary(xs, (va+vb)/2)
				if !ok {
					break
				}
				if (cm.Kind == flow.Continuous) == ka {
					a, va = mid, cm.Value
				} else {
					bb, vb = mid, cm.Value
				}
			}
			doc.Changes = append(doc.Changes, report.KindChange{
				From: prev.Kind, To: c.Kind, Value: (a + bb) / 2, Bracket: [2]float64{a, bb}, PathValue: (va + vb) / 2,
			})
		}
		cc := c
		prev, prevVal, prevSweep = &cc, c.Value, row.Value
	}
	return doc, nil
}

// runGrid prints the phase reached from each point of a two-dimensional
// grid of couplings.
func runGrid(ctx context.Context, o *options, b *built, grid string, at map[string]float64, stdout io.Writer) error {
	specs := strings.SplitN(grid, ",", 2)
	if len(specs) != 2 {
		return usagef("--grid %q: expected A=FROM:TO:N,B=FROM:TO:N", grid)
	}
	ra, err := parseRange("--grid", specs[0], true)
	if err != nil {
		return err
	}
	rb, err := parseRange("--grid", specs[1], true)
	if err != nil {
		return err
	}
	ia, ib := flow.Index(b.m, ra.name), flow.Index(b.m, rb.name)
	if ia < 0 || ib < 0 || ia == ib {
		return usagef("--grid %q: expected two different couplings among %s", grid, strings.Join(flow.Names(b.m), ", "))
	}
	if ra.n*rb.n > 1000000 {
		return usagef("--grid %q: %d points is too many (at most 1000000)", grid, ra.n*rb.n)
	}
	base := make([]float64, len(b.m.Couplings()))
	for name, v := range at {
		i := flow.Index(b.m, name)
		if i < 0 {
			return usagef("--at %s: no coupling %q", name, name)
		}
		base[i] = v
	}
	sp, err := critSetup(ctx, b)
	if err != nil {
		return err
	}
	g := report.PhaseGrid{Meta: b.meta, Map: b.m, A: ra.name, B: rb.name}
	labels := map[string]int{}
	for j := 0; j < rb.n; j++ {
		vb := rb.from + (rb.to-rb.from)*float64(j)/float64(rb.n-1)
		var row []int
		for i := 0; i < ra.n; i++ {
			va := ra.from + (ra.to-ra.from)*float64(i)/float64(ra.n-1)
			x := append([]float64(nil), base...)
			x[ia], x[ib] = va, vb
			ph := sp.Phase(ctx, x)
			if ctx.Err() != nil {
				return fmt.Errorf("interrupted: grid canceled")
			}
			k, ok := labels[ph.Label]
			if !ok {
				k = len(g.Labels)
				labels[ph.Label] = k
				g.Labels = append(g.Labels, ph.Label)
			}
			row = append(row, k)
			if j == 0 {
				g.AValues = append(g.AValues, va)
			}
		}
		g.BValues = append(g.BValues, vb)
		g.Phase = append(g.Phase, row)
	}
	switch {
	case o.json:
		return writeJSON(stdout, g.JSON())
	case o.csv:
		return g.CSV(stdout)
	}
	return g.Text(stdout)
}

func cautions(m flow.Map) []string {
	if c, ok := m.(interface{ Cautions() []string }); ok {
		return c.Cautions()
	}
	return nil
}
