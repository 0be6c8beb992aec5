package decimation

import (
	"errors"
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"
)

// ParamKind is the type of a parameter's value.
type ParamKind int

const (
	Int    ParamKind = iota // a whole number
	Real                    // a finite real number
	Choice                  // one of a fixed set of words
	List                    // a comma-separated list of words
)

func (k ParamKind) String() string {
	switch k {
	case Int:
		return "integer"
	case Real:
		return "real"
	case Choice:
		return "choice"
	case List:
		return "list"
	}
	return "unknown"
}

// Param describes one parameter of a model or scheme as data: the command
// line, the scenario validator and the explorer's form all read it.
type Param struct {
	Name string
	Kind ParamKind
	// Min and Max bound Int and Real values; MinOpen and MaxOpen make the
	// bound strict. ±Inf means unbounded.
	Min, Max         float64
	MinOpen, MaxOpen bool
	Choices          []string // accepted words for Choice and List
	Default          string   // the default as it would be typed
	Help             string
}

// Range returns the accepted values in words, e.g. "integer >= 2".
func (p Param) Range() string {
	switch p.Kind {
	case Choice:
		return "one of " + strings.Join(p.Choices, ", ")
	case List:
		return "comma-separated, each one of " + strings.Join(p.Choices, ", ")
	}
	var parts []string
	if !math.IsInf(p.Min, -1) {
		op := ">="
		if p.MinOpen {
			op = ">"
		}
		parts = append(parts, op+" "+numText(p.Min))
	}
	if !math.IsInf(p.Max, 1) {
		op := "<="
		if p.MaxOpen {
			op = "<"
		}
		parts = append(parts, op+" "+numText(p.Max))
	}
	s := p.Kind.String()
	if len(parts) > 0 {
		s += " " + strings.Join(parts, " and ")
	}
	return s
}

// ErrParam is the class of every bad-parameter error.
var ErrParam = errors.New("bad parameter")

// ParamError records which parameter was given which bad value.
type ParamError struct {
	Name, Value string
	Reason      string
}

func (e *ParamError) Error() string {
	if e.Value == "" {
		return fmt.Sprintf("parameter %s: %s", e.Name, e.Reason)
	}
	return fmt.Sprintf("parameter %s=%s: %s", e.Name, e.Value, e.Reason)
}

func (e *ParamError) Unwrap() error { return ErrParam }

// Parse checks s against the parameter and returns its value: int, float64,
// string or []string by Kind.
func (p Param) Parse(s string) (any, error) {
	bad := func(why string) error { return &ParamError{Name: p.Name, Value: s, Reason: why} }
	s = strings.TrimSpace(s)
	switch p.Kind {
	case Int, Real:
		v, err := strconv.ParseFloat(s, 64)
		if err != nil && !errors.Is(err, strconv.ErrRange) {
			return nil, bad("not a number; accepted: " + p.Range())
		}
		if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, bad("not finite; accepted: " + p.Range())
		}
		if p.Kind == Int && v != math.Trunc(v) {
			return nil, bad("not a whole number; accepted: " + p.Range())
		}
		if v < p.Min || (p.MinOpen && v == p.Min) || v > p.Max || (p.MaxOpen && v == p.Max) {
			return nil, bad("out of range; accepted: " + p.Range())
		}
		if p.Kind == Int {
			return int(v), nil
		}
		return v, nil
	case Choice:
		for _, c := range p.Choices {
			if s == c {
				return c, nil
			}
		}
		return nil, bad("unknown value; accepted: " + p.Range())
	case List:
		out := []string{}
		if s == "" {
			return out, nil // the empty list: the scheme's default
		}
		for _, w := range strings.Split(s, ",") {
			w = strings.TrimSpace(w)
			ok := false
			for _, c := range p.Choices {
				ok = ok || w == c
			}
			if !ok {
				return nil, bad(fmt.Sprintf("unknown item %q; accepted: %s", w, p.Range()))
			}
			out = append(out, w)
		}
		return out, nil
	}
	return nil, bad("unknown parameter kind")
}

// Values holds validated parameter values by name.
type Values map[string]any

// Int returns an integer parameter; it panics if the parameter is missing
// or of another kind (a programming error: Resolve fills every parameter).
func (v Values) Int(name string) int { return v[name].(int) }

// Real returns a real parameter (an integer one is converted).
func (v Values) Real(name string) float64 {
	switch x := v[name].(type) {
	case float64:
		return x
	case int:
		return float64(x)
	}
	panic("decimation: parameter " + name + " is not numeric")
}

// Choice returns a choice parameter.
func (v Values) Choice(name string) string { return v[name].(string) }

// List returns a list parameter.
func (v Values) List(name string) []string { return v[name].([]string) }

// Resolve validates the raw values set (name → text) against params and
// fills defaults. A name not among params is an error naming the accepted
// ones.
func Resolve(params []Param, set map[string]string) (Values, error) {
	out := Values{}
	known := map[string]bool{}
	for _, p := range params {
		known[p.Name] = true
	}
	var names []string
	for n := range set {
		names = append(names, n)
	}
	sort.Strings(names)
	for _, n := range names {
		if !known[n] {
			return nil, &ParamError{Name: n, Value: set[n], Reason: "no such parameter here; accepted: " + paramNames(params)}
		}
	}
	for _, p := range params {
		s, ok := set[p.Name]
		if !ok {
			s = p.Default
		}
		v, err := p.Parse(s)
		if err != nil {
			return nil, err
		}
		out[p.Name] = v
	}
	return out, nil
}

func paramNames(params []Param) string {
	if len(params) == 0 {
		return "none"
	}
	var n []string
	for _, p := range params {
		n = append(n, p.Name)
	}
	return strings.Join(n, ", ")
}

func numText(v float64) string {
	if v == math.Trunc(v) && math.Abs(v) < 1e15 {
		return strconv.FormatFloat(v, 'f', -1, 64)
	}
	return strconv.FormatFloat(v, 'g', -1, 64)
}
