package tui

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"scalewalk/decimation"
	"scalewalk/flow"
	"scalewalk/scenarios"
)

// Options say what the explorer opens: a scenario (file or built-in name),
// or a model and scheme, with parameter values.
type Options struct {
	Scenario      string
	Model, Scheme string
	Set           map[string]string
}

// source is the resolved study.
type source struct {
	opts     Options
	m        flow.Map
	title    string
	model    string
	scheme   string
	params   map[string]any
	specs    []decimation.Param // the parameters the form offers
	values   map[string]string  // their current values as text
	material *scenarios.Material
	slice    *scenarios.SliceFile
	cautions []string
	engine   bool // a built-in model and scheme (not user formulas)
	// tensor is the tensor engine, which has no flow: m is then a
	// stand-in that carries its couplings, and the view is a basin map.
	tensor *decimation.TensorRG
}

// tensorMap stands in for the tensor engine where the explorer needs a
// coupling vector: it has the couplings but no step (Step writes NaN).
type tensorMap struct{ t *decimation.TensorRG }

func (tm tensorMap) Couplings() []flow.Coupling { return tm.t.Couplings() }
func (tm tensorMap) Rescale() float64           { return math.Sqrt2 }
func (tm tensorMap) Dimension() float64         { return 2 }
func (tm tensorMap) Step(dst, x []float64) float64 {
	for i := range dst {
		dst[i] = math.NaN()
	}
	return math.NaN()
}
func (tm tensorMap) Cautions() []string { return tm.t.Cautions() }

func build(o Options) (*source, error) {
	s := &source{opts: o, values: map[string]string{}}
	if o.Scenario != "" {
		sc, err := scenarios.Load(o.Scenario)
		if err != nil {
			return nil, err
		}
		b, err := sc.Build(o.Set)
		if err != nil {
			return nil, err
		}
		s.m, s.model, s.scheme, s.params = b.Map, b.Model, b.Scheme, b.Params
		s.title = sc.File.Scenario.Name + ": " + sc.File.Scenario.Title
		if sc.File.Material != nil {
			if mat, err := scenarios.MaterialFrom(sc.File.Material); err == nil {
				s.material = mat
			}
		}
		s.slice = sc.File.Slice
		if b.Engine != nil {
			s.engine = true
			s.model, s.scheme = b.Engine.ModelName, b.Engine.SchemeName
			ms, _ := decimation.LookupModel(b.Engine.ModelName)
			ss, _ := decimation.LookupScheme(b.Engine.SchemeName)
			s.specs = append(append(s.specs, ms.Params...), ss.Params...)
		} else {
			for k := range sc.File.Recursion.Parameters {
				s.specs = append(s.specs, decimation.Param{Name: k, Kind: decimation.Real, Min: negInf, Max: posInf, Help: "parameter of the recursion"})
			}
			sort.Slice(s.specs, func(i, j int) bool { return s.specs[i].Name < s.specs[j].Name })
		}
	} else {
		bt, err := decimation.Build(o.Model, o.Scheme, o.Set)
		if err != nil {
			return nil, err
		}
		ms, ss := bt.ModelSpec, bt.SchemeSpec
		s.m, s.model, s.scheme = bt.Map, ms.Name, ss.Name
		if bt.Tensor != nil {
			s.tensor = bt.Tensor
			s.m = tensorMap{bt.Tensor}
		}
		s.engine = true
		s.params = bt.Params()
		s.title = ms.Name + " with " + ss.Name
		s.specs = append(append(s.specs, ms.Params...), ss.Params...)
	}
	for _, p := range s.specs {
		if v, ok := s.params[p.Name]; ok {
			switch x := v.(type) {
			case []string:
				s.values[p.Name] = strings.Join(x, ",")
			default:
				s.values[p.Name] = fmt.Sprint(x)
			}
		} else {
			s.values[p.Name] = p.Default
		}
	}
	if c, ok := s.m.(interface{ Cautions() []string }); ok {
		s.cautions = c.Cautions()
	}
	return s, nil
}

func hasParam(ps []decimation.Param, n string) bool {
	for _, p := range ps {
		if p.Name == n {
			return true
		}
	}
	return false
}

func (s *source) paramText() string {
	var keys []string
	for k := range s.params {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	var parts []string
	for _, k := range keys {
		parts = append(parts, fmt.Sprintf("%s=%v", k, s.params[k]))
	}
	return strings.Join(parts, " ")
}

var (
	negInf = math.Inf(-1)
	posInf = math.Inf(1)
)
