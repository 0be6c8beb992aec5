// Package compare sets the RG schemes side by side for one model on one
// lattice: for each scheme and setting, the critical coupling of the
// nearest-neighbour model, the nearest-neighbour coupling of the fixed
// point that controls it, and its exponents, beside the exact values where
// they are known. Results are plain rows for the command line and the
// explorer.
package compare

import (
	"context"
	"errors"
	"fmt"
	"math"
	"strings"

	"scalewalk/decimation"
	"scalewalk/flow"
)

// Row is one line of a comparison.
type Row struct {
	Method string            // the method's published name
	Scheme string            // the scalewalk scheme ("" for the exact row)
	Params map[string]string // the scheme's settings as typed
	// KC is the critical coupling of the nearest-neighbour model (all
	// other couplings 0); KStar the nearest-neighbour coupling of the
	// controlling fixed point. NaN when not known or not found.
	KC, KStar           float64
	Nu, YT, YH, Eta     float64
	Exact               bool
	Source              string // the exact row's sources
	Note                string
	Closure             float64 // closure error at the fixed point (NaN if none)
	Skipped             bool    // the setting could not be run (Note says why)
	Multicritical       bool    // the row is the multicritical point of the scheme
	Lattice, ModelLabel string
}

// Spec chooses what to compare.
type Spec struct {
	Model    string            // ising, potts, spin1, clock
	ModelSet map[string]string // the model's parameters (q)
	Lattice  string            // square or triangular
	// Large adds the settings whose precomputation takes more than a few
	// seconds (the periodic 27-site triangular cluster).
	Large bool
}

// setting is one scheme run.
type setting struct {
	method, scheme string
	set            map[string]string
	note           string
	multi          bool // report the multicritical point too
}

func settings(spec Spec, q float64) []setting {
	var out []setting
	bm := "blind to the lattice beyond its dimension d"
	out = append(out,
		setting{"Migdal–Kadanoff bond moving", "bondmove", map[string]string{"d": "2", "b": "2", "order": "move-first"}, bm, spec.Model == "spin1"},
		setting{"Migdal–Kadanoff bond moving", "bondmove", map[string]string{"d": "2", "b": "2", "order": "decimate-first"}, bm + "; K* is b^(d-1) times the move-first one", false},
		setting{"Migdal–Kadanoff bond moving", "bondmove", map[string]string{"d": "2", "b": "3", "order": "move-first"}, bm, false},
	)
	if spec.Model == "ising" && spec.Lattice == "triangular" {
		out = append(out,
			setting{"Niemeijer–van Leeuwen cumulant, order 1", "cumulant", map[string]string{"lattice": "triangular", "order": "1"}, "", false},
			setting{"Niemeijer–van Leeuwen cumulant, order 2", "cumulant", map[string]string{"lattice": "triangular", "order": "2"}, "", false},
		)
	}
	if spec.Lattice == "square" {
		tn := func(method, chi string) setting {
			name := "tensor renormalization (Levin–Nave TRG)"
			if method == "hotrg" {
				name = "tensor renormalization (HOTRG)"
			}
			return setting{name, "tensor", map[string]string{"method": method, "chi": chi}, "", false}
		}
		out = append(out, tn("trg", "8"), tn("trg", "16"), tn("hotrg", "8"))
		if spec.Large {
			out = append(out, tn("trg", "24"), tn("hotrg", "16"))
		}
	}
	if spec.Model == "ising" || spec.Model == "potts" {
		cl := func(blocks, keep, boundary string) setting {
			return setting{"finite-cluster RG", "cluster", map[string]string{"lattice": spec.Lattice, "blocks": blocks, "keep": keep, "boundary": boundary}, "", false}
		}
		if spec.Lattice == "square" {
			out = append(out, cl("2", "K", "free"), cl("4", "K,L", "free"), cl("6", "K,L", "free"))
		} else {
			out = append(out, cl("3", "K", "free"), cl("4", "K,L", "free"), cl("7", "K,L", "free"))
			if spec.Large {
				out = append(out, cl("9", "K", "periodic"))
			}
		}
	}
	return out
}

// exactRows returns the exact values for the model and lattice, with
// their sources; none when nothing exact is known.
func exactRows(spec Spec, q float64) []Row {
	nan := math.NaN()
	row := func(kc, yt, yh float64, src string) Row {
		return Row{Method: "exact", Exact: true, KC: kc, KStar: nan, YT: yt, Nu: 1 / yt, YH: yh, Eta: 4 - 2*yh, Source: src, Closure: nan}
	}
	const ising2D = "nu = 1, y_h = 15/8: L. Onsager, Phys. Rev. 65, 117 (1944); C. N. Yang, Phys. Rev. 85, 808 (1952)"
	switch {
	case spec.Model == "ising" && spec.Lattice == "square":
		return []Row{row(math.Log(1+math.Sqrt2)/2, 1, 15.0/8, "K_c = ln(1 + sqrt 2)/2: H. A. Kramers, G. H. Wannier, Phys. Rev. 60, 252 (1941); Onsager 1944; "+ising2D)}
	case spec.Model == "ising" && spec.Lattice == "triangular":
		return []Row{row(math.Log(3)/4, 1, 15.0/8, "K_c = ln(3)/4: R. M. F. Houtappel, Physica 16, 425 (1950); "+ising2D)}
	case spec.Model == "potts" && spec.Lattice == "square" && (q == 3 || q == 4):
		yt, yh := 6.0/5, 28.0/15 // nu = 5/6, eta = 4/15
		if q == 4 {
			yt, yh = 3.0/2, 15.0/8 // nu = 2/3, eta = 1/4
		}
		return []Row{row(math.Log(1+math.Sqrt(q)), yt, yh, "K_c = ln(1 + sqrt q): R. B. Potts (1952); F. Y. Wu, Rev. Mod. Phys. 54, 235 (1982); nu, eta: R. J. Baxter (1973); M. P. M. den Nijs (1979)")}
	case spec.Model == "potts" && spec.Lattice == "triangular" && (q == 3 || q == 4):
		yt, yh := 6.0/5, 28.0/15
		if q == 4 {
			yt, yh = 3.0/2, 15.0/8
		}
		return []Row{row(nan, yt, yh, "exponents universal: Baxter (1973); den Nijs (1979); K_c on this lattice not given here")}
	case spec.Model == "spin1":
		r := row(nan, 1, 15.0/8, "Ising universality of the critical line: "+ising2D)
		t := row(nan, 9.0/5, 77.0/40, "tricritical Ising point, central charge 7/10: D. Friedan, Z. Qiu, S. Shenker, PRL 52, 1575 (1984), from memory")
		t.Multicritical = true
		t.Method = "exact (tricritical)"
		return []Row{r, t}
	}
	return nil
}

// Rows runs every setting for the spec and returns the rows, the exact
// ones last. progress, when not nil, is told which setting starts.
func Rows(ctx context.Context, spec Spec, progress func(string)) ([]Row, error) {
	if spec.Lattice != "square" && spec.Lattice != "triangular" {
		return nil, &decimation.ParamError{Name: "lattice", Value: spec.Lattice, Reason: "unknown lattice for compare; accepted: square, triangular"}
	}
	ms, err := decimation.LookupModel(spec.Model)
	if err != nil {
		return nil, err
	}
	mv, err := decimation.Resolve(ms.Params, spec.ModelSet)
	if err != nil {
		return nil, fmt.Errorf("model %s: %w", spec.Model, err)
	}
	mod, err := ms.New(mv)
	if err != nil {
		return nil, fmt.Errorf("model %s: %w", spec.Model, err)
	}
	q := mod.States()
	var rows []Row
	for _, s := range settings(spec, q) {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		if progress != nil {
			progress(s.scheme + " " + joinSet(s.set))
		}
		rs, err := run(ctx, spec, s)
		if err != nil {
			return nil, err
		}
		rows = append(rows, rs...)
	}
	for _, r := range exactRows(spec, q) {
		r.Lattice, r.ModelLabel = spec.Lattice, mod.Name()
		rows = append(rows, r)
	}
	for i := range rows {
		rows[i].Lattice, rows[i].ModelLabel = spec.Lattice, mod.Name()
	}
	return rows, nil
}

func joinSet(set map[string]string) string {
	var parts []string
	for _, k := range []string{"lattice", "d", "b", "order", "blocks", "keep", "boundary"} {
		if v, ok := set[k]; ok {
			parts = append(parts, k+"="+v)
		}
	}
	return strings.Join(parts, " ")
}

// run builds one setting and reads its critical coupling, controlling
// fixed point and exponents.
func run(ctx context.Context, spec Spec, s setting) ([]Row, error) {
	nan := math.NaN()
	row := Row{Method: s.method, Scheme: s.scheme, Params: s.set, KC: nan, KStar: nan, Nu: nan, YT: nan, YH: nan, Eta: nan, Closure: nan, Note: s.note}
	set := map[string]string{}
	for k, v := range spec.ModelSet {
		set[k] = v
	}
	for k, v := range s.set {
		set[k] = v
	}
	if s.scheme == "cluster" && !spec.Large {
		if c := clusterConfigs(spec, s.set); c > largeConfigs {
			row.Skipped = true
			row.Note = fmt.Sprintf("%.3g spin configurations to enumerate (about %.0f s on two cores): run compare with --large", c, c*15e-9)
			return []Row{row}, nil
		}
	}
	b, err := decimation.Build(spec.Model, s.scheme, set)
	if err != nil {
		if errors.Is(err, decimation.ErrParam) {
			row.Skipped = true
			row.Note = err.Error()
			return []Row{row}, nil
		}
		return nil, err
	}
	if b.Tensor != nil {
		return runTensor(ctx, row, b.Tensor)
	}
	m := b.Map
	res, err := flow.FindAll(ctx, m, nil)
	if err != nil {
		return nil, err
	}
	flow.SortPoints(res.Points)
	sp := flow.NewSinkPhases(m, res.Points)
	k := 0 // the nearest-neighbour coupling is first in every scheme
	path := flow.Path{Name: m.Couplings()[k].Name, From: 0.02, To: 4, Samples: 80,
		Point: func(dst []float64, v float64) {
			for i := range dst {
				dst[i] = 0
			}
			dst[k] = v
		}}
	xs, err := flow.Crossings(ctx, sp, path, &flow.CrossingSettings{Tol: 1e-9})
	if err != nil {
		return nil, err
	}
	pts := sp.Points()
	ctrl := -1
	if len(xs) > 0 {
		row.KC = xs[0].Value
		ctrl = xs[0].Controlling
		if ctrl < 0 {
			row.Note = join(row.Note, "the fixed point controlling K_c was not identified; K* and exponents from the critical fixed point")
		}
	}
	if ctrl < 0 {
		// No crossing: fall back to the finite symmetric critical point.
		for i, p := range pts {
			if p.Kind == flow.Critical && p.Symmetric && finite(p) {
				ctrl = i
				break
			}
		}
		if math.IsNaN(row.KC) {
			row.Note = join(row.Note, "no transition found along K in [0.02, 4]")
		}
	}
	if ctrl >= 0 {
		fill(&row, pts[ctrl])
		if s.scheme == "cluster" && finite(pts[ctrl]) {
			if err := fieldProbe(&row, spec, set, pts[ctrl]); err != nil {
				return nil, err
			}
		}
	}
	out := []Row{row}
	if s.multi {
		for _, p := range pts {
			if p.Kind == flow.Multicritical && finite(p) && p.Symmetric && p.Relevant == 2 && p.X[0] > 0 {
				mr := Row{Method: s.method, Scheme: s.scheme, Params: s.set, KC: nan, Closure: nan, Multicritical: true, Note: "multicritical (tricritical) fixed point"}
				fill(&mr, p)
				out = append(out, mr)
				break
			}
		}
	}
	return out, nil
}

func fill(r *Row, p flow.FixedPoint) {
	r.KStar = p.X[0]
	if p.Inf[0] != 0 {
		r.KStar = math.Inf(p.Inf[0])
	}
	get := func(n string) float64 {
		if v, ok := flow.Lookup(p.Exponents, n); ok {
			return v
		}
		return math.NaN()
	}
	r.YT, r.Nu, r.YH, r.Eta = get("y_t"), get("nu"), get("y_h"), get("eta")
	r.Closure = p.Closure
	if !math.IsNaN(p.Closure) && p.Closure > 1e-10 {
		r.Note = join(r.Note, fmt.Sprintf("closure error %.2g", p.Closure))
	}
	if !math.IsNaN(r.YH) && r.YH > 2 {
		r.Note = join(r.Note, "y_h > d: unphysical")
	}
}

func finite(p flow.FixedPoint) bool {
	for _, v := range p.Inf {
		if v != 0 {
			return false
		}
	}
	return true
}

func join(a, b string) string {
	if a == "" {
		return b
	}
	return a + "; " + b
}

// largeConfigs is the most spin configurations a cluster row enumerates
// without --large (a few seconds).
const largeConfigs = 2e8

// clusterConfigs estimates q^N for a cluster setting.
func clusterConfigs(spec Spec, set map[string]string) float64 {
	q := 2.0
	if v, ok := spec.ModelSet["q"]; ok {
		fmt.Sscan(v, &q)
	} else if spec.Model == "potts" {
		q = 3
	}
	sites := 4.0
	if set["lattice"] == "triangular" {
		sites = 3
	}
	var n float64
	fmt.Sscan(set["blocks"], &n)
	return math.Pow(q, n*sites)
}

// fieldProbe gives y_h to a scheme run without the field: the same scheme
// with h kept is built, and λ_h = ∂h′/∂h at the fixed point with h = 0
// (the Jacobian is block-diagonal there, h′ being odd in h), by central
// differences with one Richardson step.
func fieldProbe(r *Row, spec Spec, set map[string]string, p flow.FixedPoint) error {
	set2 := map[string]string{}
	for k, v := range set {
		set2[k] = v
	}
	set2["keep"] = set["keep"] + ",h"
	b, err := decimation.Build(spec.Model, "cluster", set2)
	if err != nil {
		r.Note = join(r.Note, "y_h not available: the cluster with the field kept is refused ("+err.Error()+")")
		return nil
	}
	m := b.Map
	n := len(m.Couplings())
	x := make([]float64, n)
	copy(x, p.X)
	dst := make([]float64, n)
	d := func(h float64) float64 {
		x[n-1] = h
		m.Step(dst, x)
		hp := dst[n-1]
		x[n-1] = -h
		m.Step(dst, x)
		return (hp - dst[n-1]) / (2 * h)
	}
	const h = 1e-3
	lh := (4*d(h/2) - d(h)) / 3
	bb := m.Rescale()
	r.YH = math.Log(math.Abs(lh)) / math.Log(bb)
	r.Eta = m.Dimension() + 2 - 2*r.YH
	r.Note = join(r.Note, "y_h from dh'/dh at the fixed point (h kept)")
	return nil
}

// runTensor fills a row from the tensor engine: K_c by bisection on the
// phase along the exchange, the exponents from the scaling dimensions of
// the coarse tensor there; there is no fixed point, so no K*.
func runTensor(ctx context.Context, row Row, t *decimation.TensorRG) ([]Row, error) {
	path := flow.Path{Name: "K", From: 0.05, To: 3, Samples: 12, Point: func(dst []float64, v float64) {
		for i := range dst {
			dst[i] = 0
		}
		dst[0] = v
	}}
	tcs, err := t.Critical(ctx, path, 1e-6)
	if err != nil {
		return nil, err
	}
	row.Note = join(row.Note, "no fixed point of couplings (K* not defined); exponents from the scaling dimensions of the coarse tensor")
	if len(tcs) == 0 {
		row.Note = join(row.Note, "no transition found along K in [0.05, 3]")
		return []Row{row}, nil
	}
	c := tcs[0]
	row.KC = c.Crossing.Value
	if c.Have {
		row.YT, row.YH = 2-c.XEnergy, 2-c.XSpin
		row.Nu, row.Eta = c.Nu, c.Eta
		row.Note = join(row.Note, fmt.Sprintf("central charge %.4f, read after %d steps", c.Spectrum.C, c.Spectrum.Step))
	} else {
		row.Note = join(row.Note, "transition of kind "+c.Kind.String()+": no spectrum read")
	}
	return []Row{row}, nil
}
