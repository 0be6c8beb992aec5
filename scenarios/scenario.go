package scenarios

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"os"
	"regexp"
	"sort"
	"strconv"
	"strings"

	toml "github.com/pelletier/go-toml/v2"

	"scalewalk/decimation"
	"scalewalk/flow"
)

// File is the TOML layout of a scenario. Field names are the file's keys.
type File struct {
	Scenario  ScenarioInfo   `toml:"scenario"`
	Model     *ModelTable    `toml:"model"`
	Scheme    *ModelTable    `toml:"scheme"`
	Recursion *RecursionFile `toml:"recursion"`
	Material  *MaterialFile  `toml:"material"`
	Slice     *SliceFile     `toml:"slice"`
	Path      *PathFile      `toml:"path"`
}

// ScenarioInfo describes the study.
type ScenarioInfo struct {
	Name        string `toml:"name"`
	Title       string `toml:"title"`
	Invented    bool   `toml:"invented"`
	Description string `toml:"description"`
}

// ModelTable names a built-in model or scheme with its parameters (every
// other key of the table is a parameter).
type ModelTable map[string]any

// RecursionFile holds recursion relations written by the user.
type RecursionFile struct {
	B          float64            `toml:"b"`
	D          float64            `toml:"d"`
	Symmetry   string             `toml:"symmetry"`
	Constant   string             `toml:"constant"`
	Parameters map[string]float64 `toml:"parameters"`
	Couplings  []CouplingFile     `toml:"coupling"`
}

// CouplingFile is one coupling of a user recursion.
type CouplingFile struct {
	Name      string       `toml:"name"`
	Role      string       `toml:"role"`
	Symmetric *bool        `toml:"symmetric"`
	Next      string       `toml:"next"`
	Plus      *CompactFile `toml:"plus"`
	Minus     *CompactFile `toml:"minus"`
}

// CompactFile is a compactified coordinate as two formulas.
type CompactFile struct {
	U string `toml:"u"`
	X string `toml:"x"`
}

// MaterialFile is the material's exchange energy and its convention.
type MaterialFile struct {
	Name       string  `toml:"name"`
	Exchange   float64 `toml:"exchange"`
	Unit       string  `toml:"unit"`
	Convention string  `toml:"convention"`
}

// SliceFile is the two-coupling slice the explorer shows.
type SliceFile struct {
	X      string             `toml:"x"`
	Y      string             `toml:"y"`
	XRange []float64          `toml:"x_range"`
	YRange []float64          `toml:"y_range"`
	Held   map[string]float64 `toml:"held"`
}

// PathFile is the default path of `critical`.
type PathFile struct {
	Along string `toml:"along"`
	At    string `toml:"at"`
}

// Scenario is a loaded and validated study.
type Scenario struct {
	Source string // the file name, or "built-in NAME"
	Text   []byte // the file as read
	File   File

	fromSet map[string]bool // parameters given by --set in the current build
}

// Error is a problem in a scenario file: where, what, and what is
// accepted.
type Error struct {
	File         string
	Line, Column int // 0 when unknown
	Msg          string
}

func (e *Error) Error() string {
	switch {
	case e.Line > 0 && e.Column > 0:
		return fmt.Sprintf("%s:%d:%d: %s", e.File, e.Line, e.Column, e.Msg)
	case e.Line > 0:
		return fmt.Sprintf("%s:%d: %s", e.File, e.Line, e.Msg)
	}
	return fmt.Sprintf("%s: %s", e.File, e.Msg)
}

// ErrScenario is the class of scenario errors.
var ErrScenario = errors.New("bad scenario")

func (e *Error) Unwrap() error { return ErrScenario }

// MaxFileSize bounds a scenario file.
const MaxFileSize = 1 << 20

// LooksLikeFile reports whether arg names a file rather than a built-in.
func LooksLikeFile(arg string) bool {
	return strings.HasSuffix(arg, ".toml") || strings.ContainsAny(arg, `/\`)
}

// Load reads a scenario from a file path or by built-in name.
func Load(arg string) (*Scenario, error) {
	if !LooksLikeFile(arg) {
		if b, ok := builtinText(arg); ok {
			return Parse("built-in "+arg, b)
		}
		if _, err := os.Stat(arg); err != nil {
			return nil, &Error{File: arg, Msg: "no such built-in scenario or file; built-ins: " + strings.Join(BuiltinNames(), ", ")}
		}
	}
	fi, err := os.Stat(arg)
	if err != nil {
		return nil, &Error{File: arg, Msg: "cannot read: " + errText(err)}
	}
	if fi.IsDir() {
		return nil, &Error{File: arg, Msg: "is a directory, not a scenario file"}
	}
	if !fi.Mode().IsRegular() {
		return nil, &Error{File: arg, Msg: "is not a regular file (a device or a pipe); give a scenario file"}
	}
	if fi.Size() > MaxFileSize {
		return nil, &Error{File: arg, Msg: fmt.Sprintf("is %d bytes; a scenario file may have at most %d", fi.Size(), MaxFileSize)}
	}
	b, err := os.ReadFile(arg)
	if err != nil {
		return nil, &Error{File: arg, Msg: "cannot read: " + errText(err)}
	}
	return Parse(arg, b)
}

func errText(err error) string {
	var pe *os.PathError
	if errors.As(err, &pe) {
		return pe.Err.Error()
	}
	return err.Error()
}

// Parse decodes and validates a scenario.
func Parse(name string, data []byte) (*Scenario, error) {
	if len(data) > MaxFileSize {
		return nil, &Error{File: name, Msg: fmt.Sprintf("larger than %d bytes", MaxFileSize)}
	}
	s := &Scenario{Source: name, Text: data}
	dec := toml.NewDecoder(bytes.NewReader(data))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&s.File); err != nil {
		return nil, tomlError(name, data, err)
	}
	if err := s.validate(); err != nil {
		return nil, err
	}
	return s, nil
}

func tomlError(name string, data []byte, err error) error {
	var sm *toml.StrictMissingError
	if errors.As(err, &sm) && len(sm.Errors) > 0 {
		e := sm.Errors[0]
		line, col := e.Position()
		key := strings.Join(e.Key(), ".")
		return &Error{File: name, Line: line, Column: col, Msg: fmt.Sprintf("unknown key %q; accepted keys are listed by 'scalewalk scenarios show' and in the README", key)}
	}
	var de *toml.DecodeError
	if errors.As(err, &de) {
		line, col := de.Position()
		msg := de.Error()
		if strings.Contains(msg, "cannot decode") {
			want := "another type"
			target := msg
			if i := strings.LastIndex(msg, "of type "); i >= 0 {
				target = msg[i+len("of type "):]
			} else if i := strings.LastIndex(msg, " into "); i >= 0 {
				target = msg[i+len(" into "):]
			}
			switch {
			case strings.HasPrefix(target, "float") || strings.HasPrefix(target, "int"):
				want = "a number"
			case strings.HasPrefix(target, "string"):
				want = "a quoted string"
			case strings.HasPrefix(target, "bool"):
				want = "true or false"
			case strings.HasPrefix(target, "[]"):
				want = "a list [ ... ]"
			case strings.Contains(target, "map") || strings.Contains(target, "struct"):
				want = "a table"
			}
			given := "a value"
			if i := strings.Index(msg, "cannot decode "); i >= 0 {
				rest := msg[i+len("cannot decode "):]
				if j := strings.Index(rest, " into"); j > 0 {
					given = rest[:j]
				}
			}
			msg = fmt.Sprintf("key %q has a value of the wrong type (%s); expected %s", strings.Join(de.Key(), "."), given, want)
		}
		return &Error{File: name, Line: line, Column: col, Msg: msg}
	}
	return &Error{File: name, Msg: err.Error()}
}

// locate returns the line of key inside table (for arrays of tables, the
// index-th occurrence), or 0.
func (s *Scenario) locate(table string, index int, key string) int {
	lines := strings.Split(string(s.Text), "\n")
	cur := ""
	seen := -1
	keyRe := regexp.MustCompile(`^\s*` + regexp.QuoteMeta(key) + `\s*=`)
	header := 0
	for i, l := range lines {
		t := strings.TrimSpace(strings.SplitN(l, "#", 2)[0])
		if strings.HasPrefix(t, "[[") {
			cur = strings.TrimSpace(strings.Trim(t, "[]"))
			if cur == table {
				seen++
				if index < 0 || seen == index {
					header = i + 1
				}
			}
			continue
		}
		if strings.HasPrefix(t, "[") {
			cur = strings.TrimSpace(strings.Trim(t, "[]"))
			if cur == table {
				header = i + 1
			}
			continue
		}
		if cur == table && (index < 0 || seen == index) && keyRe.MatchString(l) {
			return i + 1
		}
	}
	// The key is absent (or written as a dotted or inline key): point at
	// the table's header.
	return header
}

func (s *Scenario) errAt(table string, index int, key, format string, a ...any) error {
	return &Error{File: s.Source, Line: s.locate(table, index, key), Msg: fmt.Sprintf(format, a...)}
}

func (s *Scenario) validate() error {
	f := &s.File
	if f.Scenario.Name == "" {
		return &Error{File: s.Source, Msg: "missing [scenario] name"}
	}
	if f.Recursion == nil && f.Model == nil {
		return &Error{File: s.Source, Msg: "give either a [model] with a [scheme] (built-in engines) or a [recursion] (your own recursion relations)"}
	}
	if f.Recursion != nil && (f.Model != nil || f.Scheme != nil) {
		return s.errAt("recursion", -1, "b", "a scenario has either [model]/[scheme] or [recursion], not both")
	}
	if f.Model != nil {
		if f.Scheme == nil {
			return &Error{File: s.Source, Msg: "a [model] needs a [scheme] table (e.g. name = \"bondmove\")"}
		}
		if _, _, err := s.engine(nil); err != nil {
			return err
		}
	} else {
		if _, err := s.userMap(nil); err != nil {
			return err
		}
	}
	if err := s.validateViews(); err != nil {
		return err
	}
	if m := f.Material; m != nil {
		if _, err := MaterialFrom(m); err != nil {
			key := "exchange"
			switch {
			case strings.HasPrefix(err.Error(), "unit"):
				key = "unit"
			case strings.HasPrefix(err.Error(), "convention"):
				key = "convention"
			}
			return s.errAt("material", -1, key, "%v", err)
		}
		if conv := m.Convention; conv != "" && conv != "ising" {
			model := ""
			if f.Model != nil {
				model, _ = (*f.Model)["name"].(string)
			}
			if model != "ising" {
				return s.errAt("material", -1, "convention", "convention %q applies to Ising spins (s = +-1) only; for this study use convention = \"ising\" (J multiplies the model's own exchange term)", conv)
			}
		}
	}
	return nil
}

// tableParams splits a [model] or [scheme] table into its name and its
// parameters as text.
func (s *Scenario) tableParams(table string, t ModelTable) (string, map[string]string, error) {
	name, ok := t["name"].(string)
	if !ok || name == "" {
		var found []string
		for k := range t {
			found = append(found, k)
		}
		sort.Strings(found)
		line := 0
		if len(found) > 0 {
			line = s.locate(table, -1, found[0])
		}
		return "", nil, &Error{File: s.Source, Line: line, Msg: fmt.Sprintf("[%s] needs name = \"...\" (keys found: %s)", table, strings.Join(found, ", "))}
	}
	out := map[string]string{}
	for k, v := range t {
		if k == "name" {
			continue
		}
		switch x := v.(type) {
		case string:
			out[k] = x
		case int64:
			out[k] = strconv.FormatInt(x, 10)
		case float64:
			out[k] = strconv.FormatFloat(x, 'g', -1, 64)
		case bool:
			out[k] = strconv.FormatBool(x)
		case []any:
			var parts []string
			for _, e := range x {
				parts = append(parts, fmt.Sprint(e))
			}
			out[k] = strings.Join(parts, ",")
		default:
			return "", nil, s.errAt(table, -1, k, "parameter %s has a value of an unsupported kind", k)
		}
	}
	return name, out, nil
}

// Engine is a scenario's built-in model and scheme, resolved.
type Engine struct {
	Model       *decimation.Model
	ModelName   string
	SchemeName  string
	ModelParams decimation.Values
	Scheme      decimation.Values
}

// engine resolves the model and scheme with overrides (name → text) on top
// of the file's parameters.
func (s *Scenario) engine(set map[string]string) (flow.Map, *Engine, error) {
	mname, mpar, err := s.tableParams("model", *s.File.Model)
	if err != nil {
		return nil, nil, err
	}
	sname, spar, err := s.tableParams("scheme", *s.File.Scheme)
	if err != nil {
		return nil, nil, err
	}
	ms, err := decimation.LookupModel(mname)
	if err != nil {
		return nil, nil, s.errAt("model", -1, "name", "%v", err)
	}
	ss, err := decimation.LookupScheme(sname)
	if err != nil {
		return nil, nil, s.errAt("scheme", -1, "name", "%v", err)
	}
	s.fromSet = map[string]bool{}
	for k := range set {
		s.fromSet[k] = true
	}
	for k, v := range set {
		switch {
		case hasParam(ms.Params, k):
			mpar[k] = v
		case hasParam(ss.Params, k):
			spar[k] = v
		default:
			return nil, nil, &Error{File: s.Source, Msg: fmt.Sprintf("--set %s: no parameter %q for model %s with scheme %s; accepted: %s", k, k, mname, sname, paramList(ms.Params, ss.Params))}
		}
	}
	mv, err := decimation.Resolve(ms.Params, mpar)
	if err != nil {
		return nil, nil, s.paramErr("model", err)
	}
	sv, err := decimation.Resolve(ss.Params, spar)
	if err != nil {
		return nil, nil, s.paramErr("scheme", err)
	}
	model, err := ms.New(mv)
	if err != nil {
		return nil, nil, s.paramErr("model", err)
	}
	if ss.Build == nil {
		return nil, nil, &Error{File: s.Source, Msg: fmt.Sprintf("scheme %s has no flow of couplings to study in a scenario; accepted here: the map schemes (chain, bondmove, cumulant, cluster, hierarchical); run it with --scheme %s on the command line", ss.Name, ss.Name)}
	}
	m, err := ss.Build(model, sv)
	if err != nil {
		return nil, nil, s.paramErr("scheme", err)
	}
	return m, &Engine{Model: model, ModelName: ms.Name, SchemeName: ss.Name, ModelParams: mv, Scheme: sv}, nil
}

func (s *Scenario) paramErr(table string, err error) error {
	var pe *decimation.ParamError
	if errors.As(err, &pe) {
		if s.fromSet[pe.Name] {
			return &Error{File: s.Source, Msg: fmt.Sprintf("--set %s=%s: %s", pe.Name, pe.Value, pe.Reason)}
		}
		return s.errAt(table, -1, pe.Name, "%v", err)
	}
	return &Error{File: s.Source, Msg: err.Error()}
}

func hasParam(ps []decimation.Param, n string) bool {
	for _, p := range ps {
		if p.Name == n {
			return true
		}
	}
	return false
}

func paramList(a, b []decimation.Param) string {
	var out []string
	for _, p := range append(append([]decimation.Param{}, a...), b...) {
		out = append(out, p.Name+" ("+p.Range()+")")
	}
	if len(out) == 0 {
		return "none"
	}
	return strings.Join(out, ", ")
}

// probe points at which every user formula must be finite.
var probes = []float64{0.1, 0.37, 0.8}

// userMap builds the map of a [recursion] with parameter overrides.
func (s *Scenario) userMap(set map[string]string) (*UserMap, error) {
	r := s.File.Recursion
	if !(r.B > 1) || math.IsInf(r.B, 0) {
		return nil, s.errAt("recursion", -1, "b", "b = %g: the length rescaling factor must be a finite number > 1", r.B)
	}
	if !(r.D > 0) || math.IsInf(r.D, 0) {
		return nil, s.errAt("recursion", -1, "d", "d = %g: the dimension must be a finite number > 0", r.D)
	}
	if len(r.Couplings) == 0 {
		return nil, &Error{File: s.Source, Msg: "[recursion] needs at least one [[recursion.coupling]] with name, role and next"}
	}
	params := map[string]float64{}
	for k, v := range r.Parameters {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, s.errAt("recursion.parameters", -1, k, "parameter %s must be a finite number", k)
		}
		if reservedName(k) {
			return nil, s.errAt("recursion.parameters", -1, k, "parameter name %q is taken (pi, u and the function names are reserved)", k)
		}
		if !validName(k) {
			return nil, s.errAt("recursion.parameters", -1, k, "parameter name %q: use letters, digits and _ (starting with a letter)", k)
		}
		params[k] = v
	}
	for k, v := range set {
		if _, ok := params[k]; !ok {
			list := strings.Join(keys(params), ", ")
			if list == "" {
				list = "none"
			}
			return nil, &Error{File: s.Source, Msg: fmt.Sprintf("--set %s: the file has no parameter %q; its parameters: %s", k, k, list)}
		}
		x, err := strconv.ParseFloat(strings.TrimSpace(v), 64)
		if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
			return nil, &Error{File: s.Source, Msg: fmt.Sprintf("--set %s=%s: parameters of a recursion are finite real numbers", k, v)}
		}
		params[k] = x
	}
	var names []string
	seen := map[string]bool{"pi": true, "u": true}
	for k := range params {
		seen[k] = true
	}
	for i, c := range r.Couplings {
		if !validName(c.Name) {
			return nil, s.errAt("recursion.coupling", i, "name", "coupling name %q: use letters, digits and _ (starting with a letter)", c.Name)
		}
		if seen[c.Name] || reservedName(c.Name) {
			return nil, s.errAt("recursion.coupling", i, "name", "coupling name %q is used twice, or names a parameter, pi, u or a function", c.Name)
		}
		seen[c.Name] = true
		names = append(names, c.Name)
	}
	symbols := append(append([]string{}, names...), keys(params)...)
	var ucs []UserCoupling
	for i, c := range r.Couplings {
		role, ok := flow.ParseRole(c.Role)
		if !ok {
			return nil, s.errAt("recursion.coupling", i, "role", "role %q of %s; accepted: %s", c.Role, c.Name, strings.Join(flow.RoleNames(), ", "))
		}
		sym := true
		if c.Symmetric != nil {
			sym = *c.Symmetric
		} else if role == flow.Field || role == flow.PairField {
			sym = false
		}
		if c.Next == "" {
			return nil, s.errAt("recursion.coupling", i, "name", "coupling %s needs next = \"...\", the formula for its renormalized value", c.Name)
		}
		nf, err := CompileFormula(c.Next, symbols)
		if err != nil {
			return nil, s.errAt("recursion.coupling", i, "next", "next (%s'): %v", c.Name, err)
		}
		uc := UserCoupling{Name: c.Name, Role: role, Symmetric: sym, Next: nf}
		for _, side := range []struct {
			key string
			cf  *CompactFile
			u   **Formula
			x   **Formula
		}{{"plus", c.Plus, &uc.PlusU, &uc.PlusX}, {"minus", c.Minus, &uc.MinusU, &uc.MinusX}} {
			if side.cf == nil {
				continue
			}
			u, err := CompileFormula(side.cf.U, append([]string{c.Name}, keys(params)...))
			if err != nil {
				return nil, s.errAt("recursion.coupling", i, side.key, "%s coordinate u(%s): %v", side.key, c.Name, err)
			}
			x, err := CompileFormula(side.cf.X, append([]string{"u"}, keys(params)...))
			if err != nil {
				return nil, s.errAt("recursion.coupling", i, side.key, "%s coordinate %s(u): %v", side.key, c.Name, err)
			}
			*side.u, *side.x = u, x
		}
		ucs = append(ucs, uc)
	}
	var cf *Formula
	if r.Constant != "" {
		var err error
		cf, err = CompileFormula(r.Constant, symbols)
		if err != nil {
			return nil, s.errAt("recursion", -1, "constant", "constant g: %v", err)
		}
	}
	m := NewUserMap(ucs, r.B, r.D, cf, params, r.Symmetry)
	// Every formula must be finite at the probe points.
	x := make([]float64, len(ucs))
	dst := make([]float64, len(ucs))
	for _, p := range probes {
		for i := range x {
			x[i] = p
		}
		g := m.Step(dst, x)
		if i := m.failing(x); i >= 0 {
			return nil, s.errAt("recursion.coupling", i, "next", "the formula for %s' is not finite at %s", ucs[i].Name, pointText(names, x))
		}
		if cf != nil && (math.IsNaN(g) || math.IsInf(g, 0)) {
			return nil, s.errAt("recursion", -1, "constant", "the constant g is not finite at %s", pointText(names, x))
		}
	}
	for i, c := range m.Couplings() {
		for _, cp := range []*flow.Compact{c.Plus, c.Minus} {
			if cp == nil {
				continue
			}
			sign := 1.0
			if cp == c.Minus {
				sign = -1
			}
			if far, near := cp.U(400*sign), cp.U(5*sign); !(far >= 0 && near > 0 && far < 0.05*near) {
				return nil, s.errAt("recursion.coupling", i, "name", "the coordinate %s of %s must be positive and fall to 0 as %s runs to %s (it is %g at %s = %g)", cp.Name, c.Name, c.Name, map[bool]string{true: "+infinity", false: "-infinity"}[sign > 0], far, c.Name, 400*sign)
			}
			for _, v := range []float64{0.5, 2, 5} {
				if cp == c.Minus {
					v = -v
				}
				u := cp.U(v)
				back := cp.X(u)
				if !(u > 0) || math.IsInf(u, 0) || math.Abs(back-v) > 1e-9*(1+math.Abs(v)) {
					return nil, s.errAt("recursion.coupling", i, "name", "the coordinate %s of %s must be positive and invert to %s at %s = %g (u = %g gives %g)", cp.Name, c.Name, c.Name, c.Name, v, u, back)
				}
			}
		}
	}
	return m, nil
}

// reservedName reports whether n is pi, u or a function name.
func reservedName(n string) bool {
	if n == "pi" || n == "u" {
		return true
	}
	_, f1 := functions1[n]
	_, f2 := functions2[n]
	return f1 || f2
}

func validName(n string) bool {
	if n == "" {
		return false
	}
	for i, r := range n {
		if !(r == '_' || (r >= 'a' && r <= 'z') || (r >= 'A' && r <= 'Z') || (i > 0 && r >= '0' && r <= '9')) {
			return false
		}
	}
	return true
}

func keys(m map[string]float64) []string {
	var out []string
	for k := range m {
		out = append(out, k)
	}
	sort.Strings(out)
	return out
}

func pointText(names []string, x []float64) string {
	var parts []string
	for i, n := range names {
		parts = append(parts, fmt.Sprintf("%s=%g", n, x[i]))
	}
	return strings.Join(parts, ", ")
}

// Built is what a scenario gives the batch commands and the explorer.
type Built struct {
	Map    flow.Map
	Engine *Engine // nil for a user recursion
	Model  string  // model name, or "user"
	Scheme string  // scheme name, or "recursion"
	Params map[string]any
}

// Build resolves the scenario with parameter overrides into a map.
func (s *Scenario) Build(set map[string]string) (*Built, error) {
	if s.File.Model != nil {
		m, e, err := s.engine(set)
		if err != nil {
			return nil, err
		}
		params := map[string]any{}
		for k, v := range e.ModelParams {
			params[k] = v
		}
		for k, v := range e.Scheme {
			params[k] = v
		}
		return &Built{Map: m, Engine: e, Model: e.ModelName, Scheme: e.SchemeName, Params: params}, nil
	}
	m, err := s.userMap(set)
	if err != nil {
		return nil, err
	}
	params := map[string]any{"b": m.b, "d": m.d}
	for k, v := range m.params {
		params[k] = v
	}
	return &Built{Map: m, Model: "user (" + s.File.Scenario.Name + ")", Scheme: "recursion", Params: params}, nil
}

// validateViews checks [slice] and [path] against the map's couplings.
func (s *Scenario) validateViews() error {
	b, err := s.Build(nil)
	if err != nil {
		return nil // reported by the engine's own check
	}
	names := flow.Names(b.Map)
	known := func(n string) bool { return flow.Index(b.Map, n) >= 0 }
	if sl := s.File.Slice; sl != nil {
		for _, kv := range []struct{ key, v string }{{"x", sl.X}, {"y", sl.Y}} {
			if kv.v != "" && !known(kv.v) {
				return s.errAt("slice", -1, kv.key, "%s = %q: no such coupling; the couplings are %s", kv.key, kv.v, strings.Join(names, ", "))
			}
		}
		for _, r := range []struct {
			key string
			v   []float64
		}{{"x_range", sl.XRange}, {"y_range", sl.YRange}} {
			if r.v != nil && (len(r.v) != 2 || !(r.v[1] > r.v[0]) || math.IsInf(r.v[0], 0) || math.IsInf(r.v[1], 0)) {
				return s.errAt("slice", -1, r.key, "%s must be [low, high] with finite low < high", r.key)
			}
		}
		for k := range sl.Held {
			if !known(k) {
				return s.errAt("slice", -1, "held", "held %s: no such coupling; the couplings are %s", k, strings.Join(names, ", "))
			}
		}
	}
	if p := s.File.Path; p != nil {
		if p.Along != "" {
			name, rest, ok := strings.Cut(p.Along, "=")
			parts := strings.Split(rest, ":")
			if !ok || (name != "T" && !known(strings.TrimSpace(name))) || len(parts) < 2 || len(parts) > 3 {
				return s.errAt("path", -1, "along", "along = %q: expected NAME=FROM:TO[:N] with NAME T or one of %s", p.Along, strings.Join(names, ", "))
			}
			for _, x := range parts[:2] {
				if _, err := strconv.ParseFloat(strings.TrimSpace(x), 64); err != nil {
					return s.errAt("path", -1, "along", "along = %q: %q is not a number", p.Along, x)
				}
			}
		}
		if p.At != "" {
			for _, part := range strings.Split(p.At, ",") {
				name, v, ok := strings.Cut(part, "=")
				if _, err := strconv.ParseFloat(strings.TrimSpace(v), 64); !ok || !known(strings.TrimSpace(name)) || err != nil {
					return s.errAt("path", -1, "at", "at = %q: expected NAME=VALUE,... over the couplings %s", p.At, strings.Join(names, ", "))
				}
			}
		}
	}
	return nil
}
