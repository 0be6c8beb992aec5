package cli

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"strconv"
	"strings"
	"sync"
	"time"

	"scalewalk/decimation"
	"scalewalk/flow"
	"scalewalk/internal/report"
)

// The tensor scheme has no flow of couplings: fixed, critical and thermo
// take these paths for it.

// tensorProgress shows, on a terminal, each phase decision of a long run.
func tensorProgress(t *decimation.TensorRG, what string) func() {
	if !isTerminal(os.Stderr) {
		return func() {}
	}
	start := time.Now()
	var mu sync.Mutex
	t.OnPhase = func(x []float64, ph flow.Phase) {
		mu.Lock()
		defer mu.Unlock()
		fmt.Fprintf(os.Stderr, "\r\033[K%6.1fs  %s: %s=%.10g -> %s after %d steps", time.Since(start).Seconds(), what, t.Couplings()[0].Name, x[0], ph.Label, ph.Steps)
		progressShown = true
	}
	return func() { t.OnPhase = nil; clearProgress() }
}

func tensorCritical(ctx context.Context, t *decimation.TensorRG, path flow.Path, tol float64) ([]decimation.TensorCritical, []report.TensorTransition, error) {
	var tcs []decimation.TensorCritical
	err := safely(func() error {
		var e error
		tcs, e = t.Critical(ctx, path, tol)
		return e
	})
	if err != nil {
		if errors.Is(err, flow.ErrCanceled) || ctx.Err() != nil {
			return nil, nil, fmt.Errorf("interrupted: critical search canceled")
		}
		return nil, nil, err
	}
	var tt []report.TensorTransition
	for _, c := range tcs {
		tt = append(tt, report.TensorTransition{Plateau: c.Plateau, C: c.Spectrum.C, Dimensions: c.Spectrum.Dimensions, Step: c.Spectrum.Step,
			XSpin: c.XSpin, XEnergy: c.XEnergy, Nu: c.Nu, Eta: c.Eta})
		if !c.Have {
			tt[len(tt)-1].C = nanf()
		}
	}
	return tcs, tt, nil
}

func nanf() float64 { var z float64; return z / z }

// runFixedTensor finds the critical points of the tensor scheme on the
// exchange from 0.05 to 3 at zero field, and what the coarse tensor says
// of each.
func runFixedTensor(ctx context.Context, o *options, b *built, stdout io.Writer) error {
	if o.csv {
		return usagef("fixed --scheme tensor writes text or --json")
	}
	t := b.tensor
	e := exchangeIndex(t)
	if e < 0 {
		return usagef("fixed --scheme tensor: the model has no exchange coupling to scan")
	}
	cs := t.Couplings()
	path := flow.Path{Name: cs[e].Name, From: 0.05, To: 3, Samples: 12, Point: func(dst []float64, v float64) {
		for i := range dst {
			dst[i] = 0
		}
		dst[e] = v
	}}
	done := tensorProgress(t, "bisecting")
	tcs, tt, err := tensorCritical(ctx, t, path, 1e-6)
	done()
	if err != nil {
		return err
	}
	doc := report.TensorFixedDoc{Meta: b.meta, Path: fmt.Sprintf("%s from 0.05 to 3, every other coupling 0 (bisection to 1e-6)", cs[e].Name), Cautions: b.meta.Cautions}
	for k, c := range tcs {
		doc.Points = append(doc.Points, report.TensorFixedPoint{Coupling: cs[e].Name, Value: c.Crossing.Value, Bracket: c.Crossing.Bracket,
			Kind: c.Kind.String(), TensorTransition: tt[k]})
	}
	if o.json {
		return writeJSON(stdout, report.TensorFixed(doc))
	}
	return report.TensorFixedText(stdout, doc)
}

// runCriticalTensor locates the transitions on a path with the tensor
// engine.
func runCriticalTensor(ctx context.Context, o *options, b *built, along rangeSpec, at map[string]float64, samples int, tol float64, stdout io.Writer) error {
	t := b.tensor
	path, temp, err := pathFor(t, along, at, samples)
	if err != nil {
		return err
	}
	done := tensorProgress(t, "bisecting")
	tcs, tt, err := tensorCritical(ctx, t, path, tol)
	done()
	if err != nil {
		return err
	}
	doc := report.CriticalDoc{Meta: b.meta, Map: t, Path: path, Temperature: temp, At: at, Tolerance: tol, Cautions: b.meta.Cautions, Tensor: tt}
	for _, c := range tcs {
		doc.Crossings = append(doc.Crossings, c.Crossing)
	}
	return writeCritical(o, doc, stdout)
}

// runThermoTensor computes the thermodynamics along a path or on a grid
// with the tensor engine.
func runThermoTensor(ctx context.Context, o *options, b *built, along, grid, at, metric string, stdout io.Writer) error {
	t := b.tensor
	atv, err := parseAt(at)
	if err != nil {
		return err
	}
	mi, err := metricIndices(t, metric)
	if err != nil {
		return err
	}
	pts, ts, _, temp, err := thermoInputs(t, along, grid, atv, nil)
	if err != nil {
		return err
	}
	rows := eachPoint(ctx, len(pts), func(k int) report.ThermoPoint { return t.Thermo(ctx, pts[k], mi) })
	if ctx.Err() != nil {
		return fmt.Errorf("interrupted: thermodynamics canceled")
	}
	doc := report.ThermoDoc{Meta: b.meta, Map: t, Metric: mi, Points: rows, Temperature: temp, T: ts}
	switch {
	case o.json:
		return writeJSON(stdout, report.Thermo(doc))
	case o.csv:
		return report.ThermoCSV(stdout, doc)
	}
	return report.ThermoText(stdout, doc)
}

// runCriticalChis repeats the tensor search at several bond dimensions and
// extrapolates each transition in chi.
func runCriticalChis(ctx context.Context, o *options, chis string, along rangeSpec, at map[string]float64, samples int, tol float64, stdout io.Writer) error {
	var list []int
	for _, w := range strings.Split(chis, ",") {
		v, err := strconv.Atoi(strings.TrimSpace(w))
		if err != nil || v < 2 {
			return usagef("--chis %q: expected whole numbers >= 2 separated by commas, e.g. 8,16,32", chis)
		}
		list = append(list, v)
	}
	if len(list) < 2 {
		return usagef("--chis %q: give at least two bond dimensions", chis)
	}
	// Build every chi first, so a bad one is refused before any runs.
	var engines []*built
	for _, chi := range list {
		o2 := *o
		o2.set = append(append([]string{}, o.set...), "chi="+strconv.Itoa(chi))
		o2.set = dropSet(o2.set, "chi", len(o2.set)-1)
		b, err := o2.build()
		if err != nil {
			return err
		}
		engines = append(engines, b)
	}
	var rows []report.ChiRow
	for k, b := range engines {
		chi := list[k]
		path, _, err := pathFor(b.tensor, along, at, samples)
		if err != nil {
			return err
		}
		done := tensorProgress(b.tensor, fmt.Sprintf("chi=%d", chi))
		tcs, _, err := tensorCritical(ctx, b.tensor, path, tol)
		done()
		if err != nil {
			return err
		}
		r := report.ChiRow{Chi: chi}
		for _, c := range tcs {
			r.Values = append(r.Values, c.Crossing.Value)
			r.Nu = append(r.Nu, c.Nu)
		}
		rows = append(rows, r)
	}
	doc := report.ChiDoc{Variable: along.name, Rows: rows}
	doc.Extrapolate()
	if o.json {
		return writeJSON(stdout, doc.JSON())
	}
	return doc.Text(stdout)
}

// dropSet removes every NAME=... entry but the one at keep.
func dropSet(set []string, name string, keep int) []string {
	var out []string
	for i, kv := range set {
		if n, _, _ := strings.Cut(kv, "="); n == name && i != keep {
			continue
		}
		out = append(out, kv)
	}
	return out
}
