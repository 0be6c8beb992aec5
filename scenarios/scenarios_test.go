package scenarios_test

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"scalewalk/decimation"
	"scalewalk/flow"
	"scalewalk/scenarios"
)

// Named tolerances, each with its reason.
const (
	// closeTol: closed forms evaluated twice in floating point, by different
	// routes (a formula interpreter against Go's math package).
	closeTol = 1e-12
	// newtonTol: fixed points located by the finder's Newton iteration at its
	// default relative tolerance 1e-11, compared with a closed form.
	newtonTol = 1e-10
	// jacTol: eigenvalues from the finder's Richardson-extrapolated
	// numerical Jacobian, compared with a derivative taken by hand or with
	// another map's numerical Jacobian.
	jacTol = 1e-8
	// bookTol: a value printed in a book to four decimals (Pathria and Beale
	// truncate; the truncation error is below 1e-4).
	bookTol = 1e-4
)

// mustLoad loads a scenario or stops the test.
func mustLoad(t testing.TB, arg string) *scenarios.Scenario {
	t.Helper()
	s, err := scenarios.Load(arg)
	if err != nil {
		t.Fatalf("Load(%q): %v", arg, err)
	}
	return s
}

// mustBuild builds a scenario with overrides or stops the test.
func mustBuild(t testing.TB, s *scenarios.Scenario, set map[string]string) *scenarios.Built {
	t.Helper()
	b, err := s.Build(set)
	if err != nil {
		t.Fatalf("Build(%v) of %s: %v", set, s.Source, err)
	}
	return b
}

// findAll runs the fixed-point finder with default settings.
func findAll(t testing.TB, m flow.Map) []flow.FixedPoint {
	t.Helper()
	r, err := flow.FindAll(context.Background(), m, nil)
	if err != nil {
		t.Fatalf("FindAll: %v", err)
	}
	flow.SortPoints(r.Points)
	return r.Points
}

// scenarioError asserts err is a *scenarios.Error and returns it.
func scenarioError(t testing.TB, err error) *scenarios.Error {
	t.Helper()
	if err == nil {
		t.Fatalf("no error, want a *scenarios.Error")
	}
	var se *scenarios.Error
	if !errors.As(err, &se) {
		t.Fatalf("error %v (%T) is not a *scenarios.Error", err, err)
	}
	if !errors.Is(err, scenarios.ErrScenario) {
		t.Errorf("error %v does not unwrap to ErrScenario", err)
	}
	return se
}

// noPanic runs f and turns a panic into an error.
func noPanic(what string, f func() error) (err error) {
	defer func() {
		if r := recover(); r != nil {
			err = fmt.Errorf("%s panicked: %v", what, r)
		}
	}()
	return f()
}

// Every built-in scenario loads by name, says it is invented, builds with
// no overrides, and its text round-trips: parsed from BuiltinText, and
// loaded from a file holding that text unchanged.
func TestBuiltinsLoadBuildRoundTrip(t *testing.T) {
	names := scenarios.BuiltinNames()
	want := []string{"chain-compound", "cumulant-formula", "diluted-magnet", "mk-formula", "monolayer", "reconstruction", "triangular-monolayer"}
	if strings.Join(names, ",") != strings.Join(want, ",") {
		t.Errorf("BuiltinNames() = %v, want %v", names, want)
	}
	found := false
	for _, n := range names {
		found = found || n == scenarios.DefaultScenario
	}
	if !found {
		t.Errorf("DefaultScenario %q is not among the built-ins %v", scenarios.DefaultScenario, names)
	}
	dir := t.TempDir()
	for _, name := range names {
		t.Run(name, func(t *testing.T) {
			s := mustLoad(t, name)
			if s.Source != "built-in "+name {
				t.Errorf("Source = %q, want %q", s.Source, "built-in "+name)
			}
			if !s.File.Scenario.Invented {
				t.Errorf("built-in %s is not marked invented = true", name)
			}
			if s.File.Scenario.Name != name {
				t.Errorf("[scenario] name = %q, want the built-in's name %q", s.File.Scenario.Name, name)
			}
			b := mustBuild(t, s, nil)
			if b.Map == nil || len(b.Map.Couplings()) == 0 {
				t.Fatalf("built map %v has no couplings", b.Map)
			}
			if r := b.Map.Rescale(); !(r > 1) {
				t.Errorf("Rescale() = %g, want > 1", r)
			}
			if s.File.Material != nil {
				if _, err := scenarios.MaterialFrom(s.File.Material); err != nil {
					t.Errorf("material: %v", err)
				}
			}
			text, ok := scenarios.BuiltinText(name)
			if !ok || len(text) == 0 {
				t.Fatalf("BuiltinText(%q) = %d bytes, %v", name, len(text), ok)
			}
			if !bytes.Equal(text, s.Text) {
				t.Errorf("BuiltinText differs from the text Load read")
			}
			p, err := scenarios.Parse(name, text)
			if err != nil {
				t.Fatalf("Parse(BuiltinText(%q)): %v", name, err)
			}
			mustBuild(t, p, nil)
			// Saved unchanged, the file runs.
			path := filepath.Join(dir, name+".toml")
			if err := os.WriteFile(path, text, 0o644); err != nil {
				t.Fatal(err)
			}
			f := mustLoad(t, path)
			if f.Source != path {
				t.Errorf("Source of the saved file = %q, want %q", f.Source, path)
			}
			mustBuild(t, f, nil)
		})
	}
	if _, ok := scenarios.BuiltinText("no-such-scenario"); ok {
		t.Errorf("BuiltinText of an unknown name reports ok")
	}
}

// badCase is what a file under testdata/bad declares in its header:
//
//	# want-at: TEXT   the error's line starts with TEXT (one of several)
//	# want-at: any    any line, 0 included
//	# want-col: N     the error's column
//	# want: TEXT      the message contains TEXT (every one)
type badCase struct {
	lines []int // accepted lines; nil: any
	col   int   // 0: not checked
	wants []string
}

func readBadCase(t *testing.T, text string) badCase {
	t.Helper()
	var c badCase
	var at []string
	lines := strings.Split(text, "\n")
	for _, l := range lines {
		switch {
		case strings.HasPrefix(l, "# want-at: "):
			at = append(at, strings.TrimPrefix(l, "# want-at: "))
		case strings.HasPrefix(l, "# want-col: "):
			n, err := strconv.Atoi(strings.TrimPrefix(l, "# want-col: "))
			if err != nil {
				t.Fatalf("bad want-col line %q", l)
			}
			c.col = n
		case strings.HasPrefix(l, "# want: "):
			c.wants = append(c.wants, strings.TrimPrefix(l, "# want: "))
		}
	}
	if len(at) == 0 {
		t.Fatalf("the file declares no want-at line")
	}
	if len(c.wants) == 0 {
		t.Fatalf("the file declares no want message")
	}
	if len(at) == 1 && at[0] == "any" {
		return c
	}
	for _, a := range at {
		n := 0
		for i, l := range lines {
			if !strings.HasPrefix(l, "#") && strings.HasPrefix(strings.TrimSpace(l), a) {
				c.lines = append(c.lines, i+1)
				n++
			}
		}
		if n == 0 {
			t.Fatalf("want-at %q matches no line of the file", a)
		}
	}
	return c
}

// Each file under testdata/bad is a broken scenario whose header says what
// the error must say and where. Loading it gives a *scenarios.Error (never a
// panic) naming the file, pointing at the line, and saying what is wrong and
// what is accepted.
func TestBadFiles(t *testing.T) {
	files, err := filepath.Glob(filepath.Join("testdata", "bad", "*.toml"))
	if err != nil {
		t.Fatal(err)
	}
	if len(files) < 20 {
		t.Fatalf("found %d files under testdata/bad, want the full set", len(files))
	}
	for _, path := range files {
		t.Run(filepath.Base(path), func(t *testing.T) {
			text, err := os.ReadFile(path)
			if err != nil {
				t.Fatal(err)
			}
			c := readBadCase(t, string(text))
			var s *scenarios.Scenario
			err = noPanic("Load", func() error {
				var e error
				s, e = scenarios.Load(path)
				return e
			})
			if s != nil {
				t.Fatalf("Load accepted a broken file")
			}
			if err != nil && strings.Contains(err.Error(), "panicked") {
				t.Fatal(err)
			}
			se := scenarioError(t, err)
			if se.File != path {
				t.Errorf("File = %q, want %q", se.File, path)
			}
			if c.lines != nil {
				ok := false
				for _, l := range c.lines {
					ok = ok || se.Line == l
				}
				if !ok {
					t.Errorf("Line = %d, want one of %v (error: %v)", se.Line, c.lines, se)
				}
			}
			if c.col != 0 && se.Column != c.col {
				t.Errorf("Column = %d, want %d (error: %v)", se.Column, c.col, se)
			}
			for _, w := range c.wants {
				if !strings.Contains(se.Msg, w) {
					t.Errorf("message %q does not contain %q", se.Msg, w)
				}
			}
			// Error() is "file:line:col: msg", with the parts that are known.
			prefix := path + ":"
			if se.Line > 0 {
				prefix += strconv.Itoa(se.Line) + ":"
				if se.Column > 0 {
					prefix += strconv.Itoa(se.Column) + ":"
				}
			}
			if got := se.Error(); got != prefix+" "+se.Msg {
				t.Errorf("Error() = %q, want %q", got, prefix+" "+se.Msg)
			}
			// The same text through Parse gives the same error.
			_, perr := scenarios.Parse(path, text)
			if pe := scenarioError(t, perr); pe.Error() != se.Error() {
				t.Errorf("Parse error %q differs from Load error %q", pe, se)
			}
		})
	}
}

// Load of a name that is neither a built-in nor a file, of a directory and
// of a missing file: a *scenarios.Error naming the argument; the first lists
// the built-ins.
func TestLoadErrors(t *testing.T) {
	dir := t.TempDir()
	big := filepath.Join(dir, "big.toml")
	if err := os.WriteFile(big, bytes.Repeat([]byte("#"), scenarios.MaxFileSize+1), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		arg  string
		want []string
	}{
		{"no-such-builtin", []string{"no such built-in", "monolayer", "mk-formula"}},
		{"", []string{"no such built-in"}},
		{dir, []string{"directory"}},
		{filepath.Join(dir, "missing.toml"), []string{"cannot read"}},
		{big, []string{"at most"}},
	} {
		_, err := scenarios.Load(tc.arg)
		se := scenarioError(t, err)
		if se.File != tc.arg {
			t.Errorf("Load(%q): File = %q", tc.arg, se.File)
		}
		for _, w := range tc.want {
			if !strings.Contains(se.Msg, w) {
				t.Errorf("Load(%q): message %q does not contain %q", tc.arg, se.Msg, w)
			}
		}
	}
}

// --set on a built-in engine: an accepted parameter changes the scheme; an
// unknown one is an error that lists the accepted parameters; an out-of-range
// value is an error naming the range.
func TestEngineSet(t *testing.T) {
	s := mustLoad(t, "monolayer")
	b := mustBuild(t, s, map[string]string{"b": "3"})
	if b.Map.Rescale() != 3 {
		t.Errorf("with b=3 the map rescales by %g", b.Map.Rescale())
	}
	_, err := s.Build(map[string]string{"nosuch": "1"})
	se := scenarioError(t, err)
	for _, w := range []string{"nosuch", "accepted", "b ("} {
		if !strings.Contains(se.Msg, w) {
			t.Errorf("message %q does not contain %q", se.Msg, w)
		}
	}
	_, err = s.Build(map[string]string{"b": "1"})
	se = scenarioError(t, err)
	if !strings.Contains(se.Msg, "integer >= 2") {
		t.Errorf("b=1: message %q does not name the range", se.Msg)
	}
}

// --set on a user recursion: only the file's parameters, and only finite
// numbers.
func TestUserSetErrors(t *testing.T) {
	s := mustLoad(t, "cumulant-formula")
	for _, set := range []map[string]string{{"q": "1"}, {"w": "two"}, {"w": "NaN"}, {"w": "Inf"}} {
		_, err := s.Build(set)
		se := scenarioError(t, err)
		if !strings.Contains(se.Msg, "--set") {
			t.Errorf("Build(%v): message %q does not mention --set", set, se.Msg)
		}
	}
}

// The monolayer's exchange is the lattice-gas J = eps/4 for the eps = 20 meV
// its description gives (K. Huang, Statistical Mechanics, 2nd ed., 1987,
// sect. 14.4, from memory; mapping re-derived in units_test.go), so its
// [material] must read 5 meV in the ising convention.
func TestMonolayerExchangeIsLatticeGasJ(t *testing.T) {
	s := mustLoad(t, "monolayer")
	if !strings.Contains(s.File.Scenario.Description, "eps = 20 meV") {
		t.Fatalf("description no longer states eps = 20 meV; revisit this test")
	}
	J, _ := scenarios.LatticeGasToIsing(20, -40, 4)
	m := s.File.Material
	if m == nil || m.Exchange != J || m.Unit != "meV" || m.Convention != "ising" {
		t.Errorf("material %+v, want exchange %g meV, convention ising", m, J)
	}
	if math.Abs(J-20.0/4) > closeTol {
		t.Errorf("J = %g, want eps/4 = 5", J)
	}
}

// A compact coordinate at +inf (or -inf) must go to 0 as the coupling goes
// to that infinity (flow.Compact: "u -> 0+ as x -> +-inf"). u = exp(-2K)
// declared for K -> -inf grows without bound there; it is positive and
// inverts correctly. Regression: the loader passed it, and the finder then
// reported a "K = -inf" fixed point of the ferromagnetic MK map, which has
// none (tanh K' = tanh^2 2K >= 0). The loader must reject it.
func TestCompactMustVanishAtItsInfinity(t *testing.T) {
	const text = `[scenario]
name = "wrong-way"

[recursion]
b = 2
d = 2

[[recursion.coupling]]
name = "K"
role = "exchange"
next = "log(1 + tanh(2*K)^2)/2 + logcosh(2*K)"
minus = { u = "exp(-2*K)", x = "-log(u)/2" }
`
	_, err := scenarios.Parse("wrong-way.toml", []byte(text))
	if err == nil {
		t.Fatalf("a minus coordinate exp(-2K), which grows as K -> -inf, was accepted")
	}
	scenarioError(t, err)
}

// A coordinate that does vanish at its infinity is accepted however slowly
// it decays: exp(-K/10) and exp(K/10) meet flow.Compact's contract ("u -> 0+
// as x -> +-inf and u > 0 for finite x on that side") just as exp(-2K) does
// (flow.ExpCompact builds the same family for any a > 0).
func TestCompactSlowDecayAccepted(t *testing.T) {
	const text = `[scenario]
name = "slow"

[recursion]
b = 2
d = 2

[[recursion.coupling]]
name = "K"
role = "exchange"
next = "2*K"
plus = { u = "exp(-K/10)", x = "-10*log(u)" }
minus = { u = "exp(K/10)", x = "10*log(u)" }
`
	if _, err := scenarios.Parse("slow.toml", []byte(text)); err != nil {
		t.Errorf("a slowly vanishing coordinate is rejected: %v", err)
	}
}

// The built-in cumulant-formula scenario writes out the first-order
// recursion of Niemeijer and van Leeuwen (PRL 31, 1411 (1973)) by hand;
// the cumulant engine generates it by enumeration. They must agree to
// rounding.
func TestCumulantFormulaMatchesEngine(t *testing.T) {
	user := mustBuild(t, mustLoad(t, "cumulant-formula"), nil).Map
	eng, err := decimation.Build("ising", "cumulant", map[string]string{"order": "1", "keep": "K"})
	if err != nil {
		t.Fatal(err)
	}
	a, b := make([]float64, 1), make([]float64, 1)
	for _, K := range []float64{0.05, 0.2, 0.3356, 0.8} {
		user.Step(a, []float64{K})
		eng.Map.Step(b, []float64{K})
		if math.Abs(a[0]-b[0]) > 1e-12*math.Abs(b[0]) {
			t.Errorf("K=%g: formula %.15g, engine %.15g", K, a[0], b[0])
		}
	}
}
