package scenarios_test

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"testing"
	"time"

	"github.com/expr-lang/expr/vm"

	"scalewalk/scenarios"
)

// parseFragments are small scenario texts, valid and broken, that seed the
// fuzzer beside the built-ins and the files under testdata/bad.
var parseFragments = []string{
	"",
	"[scenario]\nname = \"x\"\n",
	"[scenario]\nname = \"x\"\n[model]\nname = \"ising\"\n[scheme]\nname = \"chain\"\n",
	"[scenario]\nname = \"x\"\n[model]\nname = \"potts\"\nq = 2.5\n[scheme]\nname = \"bondmove\"\nd = 2\nb = 3\n",
	"[scenario]\nname = \"x\"\n[model]\nname = \"clock\"\n[scheme]\nname = \"hierarchical\"\n",
	nelsonFisherTOML,
	"[scenario]\nname = \"x\"\n[recursion]\nb = 2\nd = 2\nconstant = \"log(2)\"\n[recursion.parameters]\nw = 0.5\n[[recursion.coupling]]\nname = \"K\"\nrole = \"exchange\"\nnext = \"w*K\"\nplus = { u = \"exp(-K)\", x = \"-log(u)\" }\nminus = { u = \"exp(K)\", x = \"log(u)\" }\n",
	"[scenario]\nname = \"x\"\n[recursion]\nb = 1e308\nd = 1e-308\n[[recursion.coupling]]\nname = \"K\"\nrole = \"multi-site\"\nsymmetric = false\nnext = \"K^K^K\"\n",
	"[scenario]\nname = \"x\"\n[model]\nname = \"ising\"\n[scheme]\nname = \"bondmove\"\nb = 64\nd = 3\n[material]\nexchange = -1e-300\nunit = \"K\"\n",
	"[scenario]\nname = \"\"\"x\"\"\"\n[[recursion.coupling]]\n",
	"[scenario]\nname = \"x\"\n[model]\n[scheme]\n",
	"[scenario]\nname = \"x\"\n[model]\nname = \"ising\"\nq = [1, [2]]\n[scheme]\nname = \"chain\"\n",
	"a.b.c = 1\n[scenario]\nname = 'x'\n",
	"[scenario]\r\nname = \"x\"\r\n[model]\r\nname = \"ising\"\r\n[scheme]\r\nname = \"chain\"\r\n",
	"\xff\xfe[scenario]",
}

// FuzzParse: Parse never panics, and returns exactly one of a scenario or a
// *scenarios.Error naming the file with a line inside the text. A
// scenario it accepts builds, and its map steps without panicking.
func FuzzParse(f *testing.F) {
	for _, n := range scenarios.BuiltinNames() {
		text, _ := scenarios.BuiltinText(n)
		f.Add(text)
	}
	bad, _ := filepath.Glob(filepath.Join("testdata", "bad", "*.toml"))
	for _, p := range bad {
		if b, err := os.ReadFile(p); err == nil {
			f.Add(b)
		}
	}
	for _, s := range parseFragments {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		// parseLimit: parsing, building and one step of a scenario take
		// milliseconds. A watchdog beyond it crashes the worker with the
		// input, so that the fuzzer keeps the input that hangs (a t.Fatal
		// cannot run while the test goroutine is stuck).
		const parseLimit = 10 * time.Second
		dog := time.AfterFunc(parseLimit, func() {
			panic(fmt.Sprintf("Parse/Build/Step did not finish within %v on %q", parseLimit, data))
		})
		defer dog.Stop()
		const name = "fuzz.toml"
		s, err := scenarios.Parse(name, data)
		if (s == nil) == (err == nil) {
			t.Fatalf("Parse returned scenario %v and error %v; want exactly one", s != nil, err)
		}
		if err != nil {
			var se *scenarios.Error
			if !errors.As(err, &se) {
				t.Fatalf("error %v is a %T, want *scenarios.Error", err, err)
			}
			if se.File != name {
				t.Errorf("File = %q, want %q", se.File, name)
			}
			if lines := bytes.Count(data, []byte("\n")) + 1; se.Line < 0 || se.Line > lines || se.Column < 0 {
				t.Errorf("position %d:%d outside a text of %d lines (%v)", se.Line, se.Column, lines, se)
			}
			if se.Msg == "" {
				t.Errorf("empty message")
			}
			_ = se.Error()
			return
		}
		b, err := s.Build(nil)
		if err != nil {
			t.Fatalf("Parse accepted the scenario but Build fails: %v", err)
		}
		n := len(b.Map.Couplings())
		if n == 0 {
			t.Fatalf("built map has no couplings")
		}
		x := make([]float64, n)
		dst := make([]float64, n)
		for i := range x {
			x[i] = 0.3
		}
		b.Map.Step(dst, x)
	})
}

// formulaSeeds are valid and invalid formulas.
var formulaSeeds = []string{
	"2*K", "K^2 + h", "log(1 + tanh(2*K)^2)/2 + logcosh(2*K)", "2*K*((exp(3*K) + exp(-K))/(exp(3*K) + 3*exp(-K)))^2",
	"(logcosh(2*K + h) + logcosh(2*K - h) - 2*logcosh(h))/4", "pow(K, h)", "atan2(h, K)", "log1pexp(-K)",
	"-2^2", "2**3**2", "1/0", "0/0", "9223372036854775807 + 1", "0x10 + 1_000 + .5 + 1e-3",
	"2*K +", "2*Q", "len(K)", "K > 1 ? 1 : 0", "min(K, h)", "abs(K)", "max(1, 2)", "foo(K)", "exp", "exp(K, h)",
	"\"s\"", "K.x", "[1, 2]", "let x = 1; x", "K |> exp", "1e400", "((((((((((K))))))))))", "1 /* c */ + K", "",
}

// FuzzCompileFormula: CompileFormula never panics; an error is a
// *FormulaError; a compiled formula evaluates without panic or error, to a
// float64, within a bounded time, on a small environment.
func FuzzCompileFormula(f *testing.F) {
	for _, s := range formulaSeeds {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, src string) {
		fm, err := scenarios.CompileFormula(src, []string{"K", "h"})
		if err != nil {
			var fe *scenarios.FormulaError
			if !errors.As(err, &fe) {
				t.Fatalf("error %v is a %T, want *scenarios.FormulaError", err, err)
			}
			if fe.Column < 0 || fe.Msg == "" {
				t.Errorf("bad error %+v", fe)
			}
			_ = fe.Error()
			return
		}
		if fm == nil {
			t.Fatalf("nil formula and nil error")
		}
		type result struct {
			v   float64
			err error
		}
		done := make(chan result, 1)
		go func() {
			defer func() {
				if r := recover(); r != nil {
					done <- result{math.NaN(), fmt.Errorf("panic: %v", r)}
				}
			}()
			var v vm.VM
			x, err := fm.Eval(&v, map[string]any{"K": 0.3, "h": -0.2, "pi": math.Pi})
			done <- result{x, err}
		}()
		// evalLimit: a formula of at most 4096 bytes evaluates in
		// microseconds; a second means it does not terminate.
		const evalLimit = time.Second
		select {
		case r := <-done:
			if r.err != nil {
				t.Fatalf("compiled formula %q fails to evaluate: %v", src, r.err)
			}
		case <-time.After(evalLimit):
			t.Fatalf("formula %q did not evaluate within %v", src, evalLimit)
		}
	})
}
