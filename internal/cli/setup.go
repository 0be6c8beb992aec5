package cli

import (
	"errors"
	"math"
	"sort"
	"strconv"
	"strings"

	"github.com/spf13/cobra"
	"github.com/spf13/pflag"

	"scalewalk/decimation"
	"scalewalk/flow"
	"scalewalk/internal/report"
	"scalewalk/scenarios"
)

const (
	defaultModel  = "ising"
	defaultScheme = "chain"
)

// options are the flags shared by the commands that build a map.
type options struct {
	model, scheme string
	set           []string
	json, csv     bool
	scenario      string // a scenario file or built-in name, from the argument
	modelFlags    bool   // --model or --scheme was given
}

// takeArgs records the optional scenario argument.
func (o *options) takeArgs(cmd *cobra.Command, args []string) error {
	o.modelFlags = cmd.Flags().Changed("model") || cmd.Flags().Changed("scheme")
	if len(args) == 1 {
		if o.modelFlags {
			return usagef("a scenario (%s) sets the model and scheme: give either the scenario or --model/--scheme", args[0])
		}
		o.scenario = args[0]
	}
	return nil
}

func (o *options) addModelFlags(fs *pflag.FlagSet) {
	fs.StringVar(&o.model, "model", defaultModel, "spin model: "+strings.Join(modelNames(), ", "))
	fs.StringVar(&o.scheme, "scheme", defaultScheme, "RG scheme: "+strings.Join(schemeNames(), ", "))
	fs.StringArrayVar(&o.set, "set", nil, "a model or scheme parameter, NAME=VALUE (repeatable; one per --set; see 'scalewalk list')")
}

func (o *options) addFormatFlags(fs *pflag.FlagSet) {
	fs.BoolVar(&o.json, "json", false, "write JSON instead of a table")
	fs.BoolVar(&o.csv, "csv", false, "write CSV instead of a table")
}

func (o *options) checkFormat() error {
	if o.json && o.csv {
		return usagef("--json and --csv exclude each other: choose one")
	}
	return nil
}

func modelNames() []string {
	var out []string
	for _, m := range decimation.Models() {
		out = append(out, m.Name)
	}
	return out
}

func schemeNames() []string {
	var out []string
	for _, s := range decimation.Schemes() {
		out = append(out, s.Name)
	}
	return out
}

// built is a map with what the reports need to know about it.
type built struct {
	m        flow.Map
	tensor   *decimation.TensorRG // the tensor engine instead of a map
	meta     report.Meta
	model    *decimation.Model // nil for a user recursion
	scenario *scenarios.Scenario
	material *scenarios.Material
}

func (b *built) absent(name string) string {
	if b.model == nil {
		return ""
	}
	return b.model.Absent(name)
}

// setMap parses the --set list into NAME → VALUE.
func (o *options) setMap() (map[string]string, error) {
	out := map[string]string{}
	for _, kv := range o.set {
		name, val, ok := strings.Cut(kv, "=")
		name = strings.TrimSpace(name)
		if !ok || name == "" {
			return nil, usagef("--set %q: expected NAME=VALUE, e.g. --set b=2", kv)
		}
		if strings.Contains(val, "=") {
			return nil, usagef("--set %q: one NAME=VALUE per --set (repeat --set for more)", kv)
		}
		if _, dup := out[name]; dup {
			return nil, usagef("--set %s given twice", name)
		}
		out[name] = val
	}
	return out, nil
}

// buildScenario loads the scenario and applies --set to its parameters.
func (o *options) buildScenario() (*built, error) {
	sc, err := scenarios.Load(o.scenario)
	if err != nil {
		return nil, usagef("%v", err)
	}
	set, err := o.setMap()
	if err != nil {
		return nil, err
	}
	// A coupling given to --set gets the usual pointer to --from.
	if probe, err := sc.Build(nil); err == nil {
		for name := range set {
			if flow.Index(probe.Map, name) >= 0 {
				return nil, usagef("--set %s: %s is a coupling, not a parameter; give couplings with --from (e.g. --from %s=0.5)", name, name, name)
			}
		}
	}
	b, err := sc.Build(set)
	if err != nil {
		return nil, usagef("%v", err)
	}
	out := &built{m: b.Map, scenario: sc,
		meta: report.Meta{Model: b.Model, Scheme: b.Scheme, Params: b.Params, Cautions: cautions(b.Map), Scenario: sc.File.Scenario.Name}}
	if b.Engine != nil {
		out.model = b.Engine.Model
	}
	if mf := sc.File.Material; mf != nil {
		mat, err := scenarios.MaterialFrom(mf)
		if err != nil {
			return nil, usagef("%s: %v", sc.Source, err)
		}
		out.material = mat
	}
	return out, nil
}

// build resolves the model, scheme and parameters into a map.
func (o *options) build() (*built, error) {
	if o.scenario != "" {
		return o.buildScenario()
	}
	ms, err := decimation.LookupModel(o.model)
	if err != nil {
		return nil, usagef("%v", err)
	}
	ss, err := decimation.LookupScheme(o.scheme)
	if err != nil {
		return nil, usagef("%v", err)
	}
	inModel := func(n string) bool { return hasParam(ms.Params, n) }
	inScheme := func(n string) bool { return hasParam(ss.Params, n) }
	// Couplings of the model, for a clear message when one is given to --set.
	var couplings []string
	if m, err := ms.New(defaultValues(ms.Params)); err == nil {
		for _, c := range m.Couplings() {
			couplings = append(couplings, c.Name)
		}
	}
	given, err := o.setMap()
	if err != nil {
		return nil, err
	}
	for _, name := range sortedKeys(given) {
		kv := name + "=" + given[name]
		switch {
		case inModel(name), inScheme(name):
		case contains(couplings, name):
			return nil, usagef("--set %s: %s is a coupling of %s, not a parameter; give couplings with --from (e.g. --from %s=0.5)", kv, name, ms.Name, name)
		default:
			return nil, usagef("--set %s: no parameter %q for model %s with scheme %s; accepted: %s", kv, name, ms.Name, ss.Name, acceptedParams(ms, ss))
		}
	}
	bt, err := decimation.Build(ms.Name, ss.Name, given)
	if err != nil {
		return nil, usagef("%v", err)
	}
	if bt.Tensor != nil {
		return &built{tensor: bt.Tensor, meta: report.Meta{Model: ms.Name, Scheme: ss.Name, Params: bt.Params(), Cautions: bt.Tensor.Cautions()}, model: bt.Model}, nil
	}
	return &built{m: bt.Map, meta: report.Meta{Model: ms.Name, Scheme: ss.Name, Params: bt.Params(), Cautions: cautions(bt.Map)}, model: bt.Model}, nil
}

func hasParam(ps []decimation.Param, n string) bool {
	for _, p := range ps {
		if p.Name == n {
			return true
		}
	}
	return false
}

func contains(list []string, s string) bool {
	for _, v := range list {
		if v == s {
			return true
		}
	}
	return false
}

func defaultValues(ps []decimation.Param) decimation.Values {
	v, err := decimation.Resolve(ps, nil)
	if err != nil {
		return decimation.Values{}
	}
	return v
}

func acceptedParams(ms decimation.ModelSpec, ss decimation.SchemeSpec) string {
	var out []string
	for _, p := range ms.Params {
		out = append(out, p.Name+" ("+p.Range()+")")
	}
	for _, p := range ss.Params {
		out = append(out, p.Name+" ("+p.Range()+")")
	}
	if len(out) == 0 {
		return "none"
	}
	return strings.Join(out, ", ")
}

// parsePoint parses "K=0.8,h=0.1" into couplings of m (unnamed ones 0).
// absent, if not nil, says why a model lacks a coupling.
func parsePoint(flag, s string, m flow.Map, absent func(string) string) ([]float64, error) {
	names := flow.Names(m)
	x := make([]float64, len(names))
	if strings.TrimSpace(s) == "" {
		return nil, usagef("%s is empty: expected NAME=VALUE[,NAME=VALUE...] over the couplings %s", flag, strings.Join(names, ", "))
	}
	seen := map[string]bool{}
	for _, part := range strings.Split(s, ",") {
		name, val, ok := strings.Cut(strings.TrimSpace(part), "=")
		name = strings.TrimSpace(name)
		if !ok || name == "" {
			return nil, usagef("%s %q: %q is not NAME=VALUE; expected e.g. %s=0.5,%s over the couplings %s", flag, s, part, names[0], restExample(names), strings.Join(names, ", "))
		}
		i := flow.Index(m, name)
		if i < 0 && absent != nil && absent(name) != "" {
			return nil, usagef("%s %q: no coupling %q here: %s; the couplings are %s", flag, s, name, absent(name), strings.Join(names, ", "))
		}
		if i < 0 {
			return nil, usagef("%s %q: no coupling %q; the couplings are %s (names are case-sensitive)", flag, s, name, strings.Join(names, ", "))
		}
		if seen[name] {
			return nil, usagef("%s %q: coupling %s given twice", flag, s, name)
		}
		seen[name] = true
		v, err := strconv.ParseFloat(strings.TrimSpace(val), 64)
		if err != nil && errors.Is(err, strconv.ErrRange) {
			return nil, usagef("%s %q: %s=%s is out of range: it must be a finite number", flag, s, name, val)
		}
		if err != nil {
			return nil, usagef("%s %q: %s=%q is not a number", flag, s, name, val)
		}
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, usagef("%s %q: %s must be a finite number, not %s", flag, s, name, val)
		}
		x[i] = v
	}
	return x, nil
}

func restExample(names []string) string {
	if len(names) > 1 {
		return names[1] + "=0.1"
	}
	return ""
}

func sortedKeys(m map[string]string) []string {
	var k []string
	for n := range m {
		k = append(k, n)
	}
	sort.Strings(k)
	return k
}
