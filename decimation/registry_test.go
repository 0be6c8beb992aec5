package decimation

import (
	"errors"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"
)

func TestRegistryParams(t *testing.T) {
	chain, err := LookupScheme("chain")
	if err != nil {
		t.Fatalf("LookupScheme(chain): %v", err)
	}
	for _, set := range []map[string]string{
		{"nope": "2"}, // unknown name
		{"b": "1"},    // out of range
		{"b": "2.5"},  // not a whole number
		{"b": "two"},  // not a number
	} {
		if _, err := Resolve(chain.Params, set); !errors.Is(err, ErrParam) {
			t.Errorf("Resolve(chain, %v) = %v, want an ErrParam", set, err)
		}
	}
	v, err := Resolve(chain.Params, nil)
	if err != nil || v.Int("b") != 2 {
		t.Errorf("Resolve(chain, defaults) = %v, %v; want b = 2", v, err)
	}

	_, err = LookupModel("nope")
	if err == nil {
		t.Fatal(`LookupModel("nope"): no error`)
	}
	for _, s := range Models() {
		if !strings.Contains(err.Error(), s.Name) {
			t.Errorf("LookupModel error %q does not list %q", err, s.Name)
		}
	}
	if _, err := LookupScheme("nope"); err == nil || !strings.Contains(err.Error(), "chain") {
		t.Errorf(`LookupScheme("nope") = %v, want an error listing "chain"`, err)
	}
	if _, err := NewChain(NewIsing(), 1); !errors.Is(err, ErrParam) {
		t.Errorf("NewChain(ising, 1) = %v, want an ErrParam", err)
	}
	for _, q := range []float64{0, -1, 65} {
		if _, err := NewPotts(q); !errors.Is(err, ErrParam) {
			t.Errorf("NewPotts(%g) = %v, want an ErrParam", q, err)
		}
	}
	potts, _ := LookupModel("potts")
	if _, err := Resolve(potts.Params, map[string]string{"q": "0"}); !errors.Is(err, ErrParam) {
		t.Errorf("Resolve(potts, q=0) = %v, want an ErrParam", err)
	}
}

// TestRegistryModels builds every model with its defaults and a few
// parameters and checks the fixed coupling names.
func TestRegistryModels(t *testing.T) {
	cases := []struct {
		model string
		set   map[string]string
		names string
	}{
		{"ising", nil, "K h"},
		{"potts", nil, "K h Kfav"},
		{"potts", map[string]string{"q": "2"}, "K h"},
		{"potts", map[string]string{"q": "2.5"}, "K"},
		{"potts", map[string]string{"q": "1"}, "K"},
		{"clock", nil, "K K2 K3 h"},
		{"clock", map[string]string{"q": "3"}, "K h"},
		{"spin1", nil, "J K D h Jodd"},
	}
	for _, tc := range cases {
		spec, err := LookupModel(tc.model)
		if err != nil {
			t.Fatal(err)
		}
		v, err := Resolve(spec.Params, tc.set)
		if err != nil {
			t.Fatalf("%s %v: %v", tc.model, tc.set, err)
		}
		m, err := spec.New(v)
		if err != nil {
			t.Fatalf("%s %v: %v", tc.model, tc.set, err)
		}
		var names []string
		for _, c := range m.Couplings() {
			names = append(names, c.Name)
			if c.Help == "" || strings.Contains(c.Help, "\n") {
				t.Errorf("%s: coupling %s: help must be one line", m.Name(), c.Name)
			}
			if c.Plus == nil || c.Minus == nil {
				t.Errorf("%s: coupling %s: missing compact coordinate", m.Name(), c.Name)
			}
		}
		if got := strings.Join(names, " "); got != tc.names {
			t.Errorf("%s %v: couplings %q, want %q", tc.model, tc.set, got, tc.names)
		}
		mp, err := Schemes()[0].Build(m, Values{"b": 2})
		if err != nil || mp.Dimension() != 1 || mp.Rescale() != 2 {
			t.Errorf("%s: chain build: %v", m.Name(), err)
		}
	}
	for _, s := range Models() {
		if s.Help == "" || strings.Contains(s.Help, "\n") {
			t.Errorf("model %s: help must be one line", s.Name)
		}
	}
}

// TestNoPanicOnBadInput: non-finite couplings give NaN and a domain error,
// never a panic.
func TestNoPanicOnBadInput(t *testing.T) {
	c := mustChain(t, NewSpin1(), 3)
	for _, bad := range [][]float64{{nan(), 0, 0, 0, 0}, {inf(), 0, 0, 0, 0}, {1e308, 1e308, 0, 0, 0}} {
		xp, g := step(c, bad)
		if finite(g) {
			t.Errorf("Step(%v) = %v, %g; want NaN", bad, xp, g)
		}
		if err := c.Domain(bad); !errors.Is(err, ErrDomain) {
			t.Errorf("Domain(%v) = %v, want an ErrDomain", bad, err)
		}
		_ = c.Closure(bad)
		var j mat.Dense
		c.JacobianTo(&j, bad)
		if v := j.At(0, 0); finite(v) {
			t.Errorf("JacobianTo(%v)[0][0] = %g, want NaN", bad, v)
		}
	}
}
