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
}

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
		ms, err := decimation.LookupModel(o.Model)
		if err != nil {
			return nil, err
		}
		ss, err := decimation.LookupScheme(o.Scheme)
		if err != nil {
			return nil, err
		}
		mset, sset := map[string]string{}, map[string]string{}
		for k, v := range o.Set {
			switch {
			case hasParam(ms.Params, k):
				mset[k] = v
			case hasParam(ss.Params, k):
				sset[k] = v
			default:
				return nil, fmt.Errorf("no parameter %q for model %s with scheme %s", k, ms.Name, ss.Name)
			}
		}
		mv, err := decimation.Resolve(ms.Params, mset)
		if err != nil {
			return nil, err
		}
		sv, err := decimation.Resolve(ss.Params, sset)
		if err != nil {
			return nil, err
		}
		model, err := ms.New(mv)
		if err != nil {
			return nil, err
		}
		m, err := ss.Build(model, sv)
		if err != nil {
			return nil, err
		}
		s.m, s.model, s.scheme = m, ms.Name, ss.Name
		s.engine = true
		s.params = map[string]any{}
		for k, v := range mv {
			s.params[k] = v
		}
		for k, v := range sv {
			s.params[k] = v
		}
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
