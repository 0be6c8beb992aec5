package cli

import (
	"bytes"
	"context"
	"encoding/csv"
	"encoding/json"
	"math"
	"os"
	"strconv"
	"strings"
	"testing"
)

func run(args ...string) (code int, stdout, stderr string) {
	var o, e bytes.Buffer
	code = Main(context.Background(), args, strings.NewReader(""), &o, &e)
	return code, o.String(), e.String()
}

// Wrong input: a non-zero exit and one clear line on stderr naming the
// problem and what is accepted; never a panic or stack trace.
func TestBadInput(t *testing.T) {
	cases := []struct {
		args []string
		want []string // substrings of the message
	}{
		{[]string{"fixed", "--model", "heisenberg"}, []string{"heisenberg", "ising"}},
		{[]string{"fixed", "--scheme", "nope"}, []string{"nope", "chain"}},
		{[]string{"fixed", "--set", "b=1"}, []string{"b=1", ">= 2"}},
		{[]string{"fixed", "--set", "b=1.5"}, []string{"b=1.5", "whole"}},
		{[]string{"fixed", "--set", "b=NaN"}, []string{"b=NaN", "finite"}},
		{[]string{"fixed", "--set", "b=Inf"}, []string{"b=Inf", "finite"}},
		{[]string{"fixed", "--set", "K=1"}, []string{"K", "coupling", "--from"}},
		{[]string{"fixed", "--set", "zeta=1"}, []string{"zeta", "accepted", "b"}},
		{[]string{"fixed", "--set", "b=2,q=3"}, []string{"b=2,q=3"}},
		{[]string{"fixed", "--set", "b"}, []string{"NAME=VALUE"}},
		{[]string{"fixed", "--model", "potts", "--set", "q=0"}, []string{"q=0", "> 0"}},
		{[]string{"fixed", "--model", "potts", "--set", "q=-1"}, []string{"q=-1"}},
		{[]string{"fixed", "--json", "--csv"}, []string{"--json", "--csv"}},
		{[]string{"fixed", "--bogus"}, []string{"unknown flag", "--bogus"}},
		{[]string{"fixed", "extra"}, []string{"extra"}},
		{[]string{"trace"}, []string{"--from"}},
		{[]string{"trace", "--from", "K"}, []string{"NAME=VALUE"}},
		{[]string{"trace", "--from", "K=abc"}, []string{"not a number"}},
		{[]string{"trace", "--from", "K=NaN"}, []string{"finite"}},
		{[]string{"trace", "--from", "K=Inf"}, []string{"finite"}},
		{[]string{"trace", "--from", "K=-inf"}, []string{"finite"}},
		{[]string{"trace", "--from", "J=1"}, []string{"no coupling", "K, h"}},
		{[]string{"trace", "--from", "k=1"}, []string{"case-sensitive"}},
		{[]string{"trace", "--from", "K=1,K=2"}, []string{"twice"}},
		{[]string{"trace", "--from", "K=1", "--steps", "-1"}, []string{"--steps"}},
		{[]string{"trace", "--model", "potts", "--set", "q=2.5", "--from", "h=1"}, []string{"no coupling", "h", "integer q >= 2"}},
		{[]string{"nosuch"}, []string{"unknown command"}},
		{[]string{"critical"}, []string{"--along"}},
		{[]string{"critical", "--along", "T=0:3"}, []string{"> 0"}},
		{[]string{"critical", "--along", "T=1"}, []string{"FROM:TO"}},
		{[]string{"critical", "--along", "Q=1:2"}, []string{"no coupling", "T"}},
		{[]string{"critical", "--along", "T=1:2", "--at", "K=1"}, []string{"exchange"}},
		{[]string{"critical", "--along", "T=1:2", "--at", "x=1"}, []string{"no coupling"}},
		{[]string{"critical", "--along", "T=1:2", "--tol", "0"}, []string{"--tol"}},
		{[]string{"critical", "--along", "T=1:2", "--samples", "1"}, []string{"--samples"}},
		{[]string{"critical", "--model", "potts", "--set", "q=0.5", "--along", "K=-3:-1"}, []string{"physical domain"}},
		{[]string{"fixed", "--scheme", "bondmove", "--set", "d=0.5"}, []string{"d=0.5", ">= 1"}},
		{[]string{"fixed", "--scheme", "bondmove", "--set", "b=2.5"}, []string{"b=2.5", "whole"}},
		{[]string{"fixed", "--scheme", "bondmove", "--set", "order=sideways"}, []string{"move-first", "decimate-first"}},
		{[]string{"fixed", "--scheme", "hierarchical", "--set", "m=0"}, []string{"m=0", ">= 1"}},
	}
	for _, c := range cases {
		code, out, errs := run(c.args...)
		name := strings.Join(c.args, " ")
		if code == 0 {
			t.Errorf("%s: exit 0, want non-zero", name)
		}
		if strings.Count(errs, "\n") != 1 || !strings.HasPrefix(errs, "scalewalk: ") {
			t.Errorf("%s: stderr %q, want exactly one line starting 'scalewalk: '", name, errs)
		}
		if strings.Contains(errs, "panic") || strings.Contains(errs, "goroutine") {
			t.Errorf("%s: stack trace on stderr: %q", name, errs)
		}
		for _, w := range c.want {
			if !strings.Contains(errs, w) {
				t.Errorf("%s: message %q does not mention %q", name, errs, w)
			}
		}
		if out != "" {
			t.Errorf("%s: wrote to stdout on error: %q", name, out)
		}
	}
}

func TestHelpEverywhere(t *testing.T) {
	for _, args := range [][]string{{"--help"}, {"list", "--help"}, {"fixed", "--help"}, {"trace", "--help"}, {"help", "fixed"}} {
		code, out, errs := run(args...)
		if code != 0 || !strings.Contains(out, "Usage:") || errs != "" {
			t.Errorf("%v: exit %d, stdout %d bytes, stderr %q", args, code, len(out), errs)
		}
	}
	_, out, _ := run("fixed", "--help")
	for _, rel := range []string{"hyperscaling", "Widom", "Fisher", "nu    = 1/y_t"} {
		if !strings.Contains(out, rel) {
			t.Errorf("fixed --help does not name %q", rel)
		}
	}
}

func TestList(t *testing.T) {
	code, out, _ := run("list")
	if code != 0 {
		t.Fatalf("exit %d", code)
	}
	for _, w := range []string{"ising", "potts", "clock", "spin1", "chain", "Kfav", "Jodd", "biquadratic", "default 2"} {
		if !strings.Contains(out, w) {
			t.Errorf("list does not show %q", w)
		}
	}
	code, out, _ = run("list", "--json")
	var doc map[string]any
	if code != 0 || json.Unmarshal([]byte(out), &doc) != nil {
		t.Fatalf("list --json: exit %d, invalid JSON", code)
	}
}

// fixed --json on the b = 2 Ising chain: the K = 0 family (sink) and the
// K = +inf point, critical with y = 1 in exp(-2K) and y_h = 1 = d
// (Nelson and Fisher, Ann. Phys. 91, 226, 1975; Nienhuis and Nauenberg,
// PRL 35, 477, 1975, from memory).
func TestFixedJSONIsingChain(t *testing.T) {
	code, out, errs := run("fixed", "--model", "ising", "--scheme", "chain", "--set", "b=2", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var doc struct {
		Model       string  `json:"model"`
		B           float64 `json:"b"`
		FixedPoints []struct {
			Values   map[string]*float64 `json:"values"`
			Infinite map[string]string   `json:"infinite"`
			Family   *struct {
				Free  []string       `json:"free"`
				Range map[string]any `json:"range"`
			} `json:"family"`
			Kind          string              `json:"kind"`
			Discontinuity bool                `json:"discontinuity"`
			Y             []*float64          `json:"y"`
			Exponents     map[string]*float64 `json:"exponents"`
		} `json:"fixed_points"`
	}
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatal(err)
	}
	if doc.Model != "ising" || doc.B != 2 || len(doc.FixedPoints) != 2 {
		t.Fatalf("model %q b %g with %d fixed points, want ising, 2, 2", doc.Model, doc.B, len(doc.FixedPoints))
	}
	f := doc.FixedPoints[0]
	if f.Family == nil || f.Family.Free[0] != "h" || f.Kind != "sink" || f.Family.Range["h"].([]any)[1] != "+inf" {
		t.Errorf("first point %+v, want the sink family along h to +inf", f)
	}
	z := doc.FixedPoints[1]
	if z.Infinite["K"] != "+inf" || z.Kind != "critical" || !z.Discontinuity {
		t.Errorf("second point %+v, want K = +inf critical discontinuity", z)
	}
	for _, y := range z.Y {
		if y == nil || math.Abs(*y-1) > 1e-7 {
			t.Errorf("y %v, want 1", y)
		}
	}
	if z.Exponents["delta"] != nil {
		t.Errorf("delta = %v, want null (infinite)", *z.Exponents["delta"])
	}
}

// trace --csv on the b = 3 chain: row 0 is the start and each row is the
// exact b = 3 recursion of the previous, tanh K' = tanh^3 K at h = 0
// (Nelson and Fisher 1975).
func TestTraceCSV(t *testing.T) {
	code, out, errs := run("trace", "--model", "ising", "--scheme", "chain", "--set", "b=3", "--from", "K=0.8", "--steps", "3", "--csv")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	rows, err := csv.NewReader(strings.NewReader(out)).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if strings.Join(rows[0], ",") != "n,K,h,g" || len(rows) != 5 {
		t.Fatalf("header %v with %d rows, want n,K,h,g and 5 rows", rows[0], len(rows))
	}
	k := 0.8
	for n := 1; n < len(rows); n++ {
		got, _ := strconv.ParseFloat(rows[n][1], 64)
		if math.Abs(got-k) > 1e-12 {
			t.Errorf("row %d K = %.15g, want %.15g", n-1, got, k)
		}
		k = math.Atanh(math.Pow(math.Tanh(k), 3))
	}
}

func TestDefaultReport(t *testing.T) {
	code, out, _ := run()
	if code != 0 || !strings.Contains(out, "critical") || !strings.Contains(out, "exp(-2K)") {
		t.Errorf("scalewalk with no arguments: exit %d, output %q", code, out)
	}
}

// critical on a temperature path for the d = 2, b = 2 bond-moving Ising
// map: one continuous crossing at kT_c/J = 1/K*, with K* the fixed point
// of tanh K' = tanh^2(2K) (R. K. Pathria, P. D. Beale, Statistical
// Mechanics, ch. 14), solved here by bisection of the closed form, to 1e-9.
func TestCriticalBondMoveIsing(t *testing.T) {
	code, out, errs := run("critical", "--model", "ising", "--scheme", "bondmove", "--set", "d=2", "--along", "T=1:5", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var doc struct {
		Order       string `json:"order"`
		Transitions []struct {
			Value   float64  `json:"value"`
			Kind    string   `json:"kind"`
			KT      *float64 `json:"kT_over_J"`
			Bracket []float64
			Ctl     *struct {
				Kind string `json:"kind"`
			} `json:"controlling_fixed_point"`
		} `json:"transitions"`
	}
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatal(err)
	}
	lo, hi := 0.2, 0.5 // K' - K changes sign once here
	f := func(k float64) float64 { return math.Atanh(math.Pow(math.Tanh(2*k), 2)) - k }
	for i := 0; i < 200; i++ {
		mid := (lo + hi) / 2
		if f(mid) < 0 {
			lo = mid
		} else {
			hi = mid
		}
	}
	kstar := (lo + hi) / 2
	if len(doc.Transitions) != 1 {
		t.Fatalf("%d transitions, want 1", len(doc.Transitions))
	}
	tr := doc.Transitions[0]
	if tr.Kind != "continuous" || tr.KT == nil || tr.Ctl == nil || tr.Ctl.Kind != "critical" {
		t.Errorf("transition %+v, want continuous, controlled by the critical point", tr)
	}
	if math.Abs(1/tr.Value-kstar) > 1e-9 {
		t.Errorf("1/T_c = %.12f, want K* = %.12f", 1/tr.Value, kstar)
	}
	if doc.Order != "move-first" {
		t.Errorf("order %q, want move-first printed beside T_c", doc.Order)
	}
}

// Below T_c the field path crosses one first-order line at h = 0,
// controlled by the discontinuity fixed point at K = +inf (y_h = d;
// B. Nienhuis, M. Nauenberg, PRL 35, 477, 1975, from memory).
func TestCriticalFirstOrderInField(t *testing.T) {
	code, out, errs := run("critical", "--model", "ising", "--scheme", "bondmove", "--along", "h=-1:1.1", "--at", "K=0.5", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var doc struct {
		Transitions []struct {
			Value float64 `json:"value"`
			Kind  string  `json:"kind"`
		} `json:"transitions"`
	}
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatal(err)
	}
	if len(doc.Transitions) != 1 || doc.Transitions[0].Kind != "first order" || math.Abs(doc.Transitions[0].Value) > 1e-9 {
		t.Errorf("transitions %+v, want one first-order transition at h = 0", doc.Transitions)
	}
}

// A scenario file works with flags before or after it, and a built-in
// scenario printed by 'scenarios show' runs unchanged when saved.
func TestScenarioArgument(t *testing.T) {
	dir := t.TempDir()
	code, text, _ := run("scenarios", "show", "mk-formula")
	if code != 0 || !strings.Contains(text, "invented") {
		t.Fatalf("scenarios show: exit %d", code)
	}
	file := dir + "/my-study.toml"
	if err := writeFile(file, text); err != nil {
		t.Fatal(err)
	}
	c1, o1, e1 := run("fixed", file, "--json")
	c2, o2, e2 := run("fixed", "--json", file)
	if c1 != 0 || c2 != 0 {
		t.Fatalf("exit %d (%s) and %d (%s)", c1, e1, c2, e2)
	}
	var d1, d2 map[string]any
	if json.Unmarshal([]byte(o1), &d1) != nil || json.Unmarshal([]byte(o2), &d2) != nil {
		t.Fatal("invalid JSON")
	}
	if len(d1["fixed_points"].([]any)) != 3 || len(d2["fixed_points"].([]any)) != 3 {
		t.Errorf("want the three fixed points of the recursion (K = 0, K*, +inf) both ways")
	}
	code, list, _ := run("scenarios")
	if code != 0 {
		t.Fatal("scenarios: non-zero exit")
	}
	for _, line := range strings.Split(strings.TrimSpace(list), "\n") {
		name := strings.Fields(line)[0]
		if c, _, e := run("fixed", name, "--csv"); c != 0 {
			t.Errorf("built-in %s: exit %d: %s", name, c, e)
		}
	}
}

func writeFile(name, text string) error { return os.WriteFile(name, []byte(text), 0o644) }

// A transition temperature in kelvin: T_c = (kT_c/J) J/k_B with
// k_B = 8.617333262e-5 eV/K (CODATA, exact since 2019); the monolayer's
// J = 5 meV gives J/k_B = 58.0226 K (5e-3/8.617333262e-5, by hand), printed
// with the convention, the scheme, its order and the caution.
func TestCriticalKelvin(t *testing.T) {
	code, out, errs := run("critical", "monolayer", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var doc struct {
		Order       string `json:"order"`
		Transitions []struct {
			Value   float64  `json:"value"`
			Kelvin  *float64 `json:"T_c_kelvin"`
			Caution string   `json:"caution"`
		} `json:"transitions"`
	}
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatal(err)
	}
	if len(doc.Transitions) != 1 || doc.Transitions[0].Kelvin == nil {
		t.Fatalf("transitions %+v, want one with T_c in kelvin", doc.Transitions)
	}
	tr := doc.Transitions[0]
	if want := tr.Value * 58.02257; math.Abs(*tr.Kelvin-want) > 1e-4*want {
		t.Errorf("T_c = %g K, want %g K", *tr.Kelvin, want)
	}
	if !strings.Contains(tr.Caution, "estimate, not a measurement") || doc.Order != "move-first" {
		t.Errorf("caution %q order %q", tr.Caution, doc.Order)
	}
	// On a coupling path other than the exchange alone, no kelvin.
	code, out, _ = run("critical", "monolayer", "--along", "h=-1:1.1", "--at", "K=0.5", "--json")
	if code != 0 || strings.Contains(out, "T_c_kelvin") || !strings.Contains(out, "kelvin_note") {
		t.Errorf("coupling path with a field: want no T_c in kelvin and the reason")
	}
}

func TestScenarioBadInput(t *testing.T) {
	cases := []struct {
		args []string
		want []string
	}{
		{[]string{"fixed", "nosuch-study"}, []string{"nosuch-study", "monolayer"}},
		{[]string{"fixed", "/nonexistent/x.toml"}, []string{"x.toml"}},
		{[]string{"fixed", "monolayer", "--model", "potts"}, []string{"scenario", "--model"}},
		{[]string{"fixed", "monolayer", "--set", "zz=1"}, []string{"zz", "accepted"}},
		{[]string{"fixed", "monolayer", "--set", "K=1"}, []string{"coupling", "--from"}},
		{[]string{"fixed", "cumulant-formula", "--set", "w=abc"}, []string{"w=abc"}},
		{[]string{"scenarios", "show", "nope"}, []string{"nope", "monolayer"}},
	}
	for _, c := range cases {
		code, out, errs := run(c.args...)
		name := strings.Join(c.args, " ")
		if code == 0 || out != "" || strings.Count(errs, "\n") != 1 {
			t.Errorf("%s: exit %d, stdout %q, stderr %q", name, code, out, errs)
		}
		for _, w := range c.want {
			if !strings.Contains(errs, w) {
				t.Errorf("%s: message %q does not mention %q", name, errs, w)
			}
		}
	}
}

// thermo --json on the Ising chain keeps the contract's names, gives
// ln Z/N = ln 2 at zero couplings (Z = 2^N), and at a point in a field the
// exact values of R. J. Baxter (Exactly Solved Models, 1982, ch. 2):
// ψ = K + ln[cosh h + √(sinh²h + e^{−4K})] and m = sinh h/√(sinh²h + e^{−4K})
// (by hand), and the curvature R = 1 + cosh h/√(sinh²h + e^{−4K}) (Dolan,
// Johnston, Kenna, J. Phys. A 35, 9025, 2002).
func TestThermoJSON(t *testing.T) {
	code, out, errs := run("thermo", "--model", "ising", "--scheme", "chain", "--along", "K=0:0.8:3", "--at", "h=0.3", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var doc struct {
		Points []map[string]any `json:"points"`
	}
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatal(err)
	}
	for _, k := range []string{"values", "free_energy", "energy", "specific_heat", "magnetization", "spontaneous_magnetization",
		"susceptibility", "correlation_length", "metric", "curvature", "flags"} {
		if _, ok := doc.Points[0][k]; !ok {
			t.Errorf("point lacks %q", k)
		}
	}
	last := doc.Points[2]
	K, h := 0.8, 0.3
	s := math.Sqrt(math.Sinh(h)*math.Sinh(h) + math.Exp(-4*K))
	if f := last["free_energy"].(float64); math.Abs(f-(K+math.Log(math.Cosh(h)+s))) > 1e-10 {
		t.Errorf("free energy %.12g", f)
	}
	if m := last["magnetization"].(float64); math.Abs(m-math.Sinh(h)/s) > 1e-8 {
		t.Errorf("magnetization %.12g, want %.12g", m, math.Sinh(h)/s)
	}
	if r := last["curvature"].(float64); math.Abs(r-(1+math.Cosh(h)/s)) > 1e-6*r {
		t.Errorf("curvature %.10g, want %.10g", r, 1+math.Cosh(h)/s)
	}
	code, out, _ = run("thermo", "--model", "ising", "--scheme", "bondmove", "--along", "K=0:0.1:2", "--json")
	if code != 0 {
		t.Fatal("thermo bondmove failed")
	}
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatal(err)
	}
	if f := doc.Points[0]["free_energy"].(float64); math.Abs(f-math.Ln2) > 1e-12 {
		t.Errorf("ln Z/N at zero couplings = %.15g, want ln 2", f)
	}
	if doc.Points[0]["susceptibility"] != nil || len(doc.Points[0]["flags"].([]any)) == 0 {
		t.Errorf("bond moving at the disordered sink: the susceptibility must be null with a flag, got %v", doc.Points[0]["susceptibility"])
	}
}

// Near the bond-moving Ising transition, thermo reports effective
// exponents beside the predicted ones (reported, not asserted, beyond a
// loose check that they are the same numbers within 5 %: the predicted β is
// (d − y_h)/y_t from the eigenvalues, which other tests check against the
// closed-form recursion of Pathria and Beale).
func TestThermoEffectiveExponents(t *testing.T) {
	e := effectiveNearTc(t, "thermo", "--model", "ising", "--scheme", "bondmove", "--along", "T=2:5:5", "--json")
	closeTo(t, e, "beta_from_spontaneous_magnetization", "beta_predicted", 0.05)
	closeTo(t, e, "gamma_from_susceptibility", "gamma_predicted", 0.02)
	closeTo(t, e, "nu_from_correlation_length", "nu_predicted", 0.02)
	closeTo(t, e, "alpha_from_specific_heat", "alpha_predicted", 0.02)
}

// For Potts the effective β is read from the order parameter
// (q m0 − 1)/(q − 1), which vanishes at T_c, not from m0 → 1/q.
func TestThermoEffectivePotts(t *testing.T) {
	e := effectiveNearTc(t, "thermo", "--model", "potts", "--set", "q=3", "--scheme", "bondmove", "--along", "T=0.5:3:6", "--json")
	closeTo(t, e, "beta_from_spontaneous_magnetization", "beta_predicted", 0.05)
}

// effectiveNearTc runs thermo --json with args and returns its one entry of
// effective_exponents.
func effectiveNearTc(t *testing.T, args ...string) map[string]any {
	t.Helper()
	code, out, errs := run(args...)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var doc struct {
		Effective []map[string]any `json:"effective_exponents"`
	}
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatal(err)
	}
	if len(doc.Effective) != 1 {
		t.Fatalf("%d entries, want one near T_c", len(doc.Effective))
	}
	return doc.Effective[0]
}

// closeTo checks e[got] against e[want] within the relative tolerance tol
// (a null is a failure).
func closeTo(t *testing.T, e map[string]any, got, want string, tol float64) {
	t.Helper()
	g, ok1 := e[got].(float64)
	w, ok2 := e[want].(float64)
	if !ok1 || !ok2 || !(math.Abs(g-w) <= tol*math.Abs(w)) {
		t.Errorf("%s = %v, %s = %v: want them within %g %%", got, e[got], want, e[want], 100*tol)
	}
}

// compare --json writes one row per setting with the contract's keys, and
// the exact row names its sources; bad settings give one message and exit
// status 2.
func TestCompareJSON(t *testing.T) {
	code, out, errOut := run("compare", "--model", "potts", "--set", "q=4", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var doc struct {
		Rows []map[string]any `json:"rows"`
	}
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatal(err)
	}
	var exact map[string]any
	for _, r := range doc.Rows {
		for _, k := range []string{"scheme", "parameters", "K_c", "K_star", "nu", "y_t", "y_h", "eta", "exact"} {
			if _, ok := r[k]; !ok {
				t.Errorf("row %v lacks %s", r, k)
			}
		}
		if r["exact"] == true {
			exact = r
		}
	}
	// K_c = ln 3 and nu = 2/3 for the square four-state Potts model (Potts
	// 1952; Wu, Rev. Mod. Phys. 54, 235 (1982); Baxter 1973).
	if exact == nil || math.Abs(exact["K_c"].(float64)-math.Log(3)) > 1e-15 || math.Abs(exact["nu"].(float64)-2.0/3) > 1e-15 ||
		!strings.Contains(exact["source"].(string), "Wu") {
		t.Errorf("exact row %v", exact)
	}
	for _, bad := range [][]string{
		{"compare", "--set", "lattice=cubic"},
		{"compare", "--set", "b=2"},
		{"compare", "--model", "potts", "--set", "q=abc"},
	} {
		code, _, errOut := run(bad...)
		if code != 2 || strings.Count(strings.TrimSpace(errOut), "\n") != 0 || !strings.Contains(errOut, "accepted") {
			t.Errorf("%v: exit %d, %q", bad, code, errOut)
		}
	}
}

// The tensor scheme's contracts: fixed --json writes a critical point with
// critical_coupling, central_charge, scaling_dimensions, y, nu, eta and
// null eigenvalues; critical --json has no controlling fixed point and a
// kind from the plateau of X. K_c of the square Ising model within 1 % at
// chi = 8 (Kramers and Wannier 1941); c within 15 % of 1/2 (Cardy 1986,
// from memory) at so small a chi.
func TestTensorJSON(t *testing.T) {
	code, out, errOut := run("fixed", "--model", "ising", "--scheme", "tensor", "--set", "chi=8", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var doc struct {
		FixedPoints []map[string]any `json:"fixed_points"`
	}
	if err := json.Unmarshal([]byte(out), &doc); err != nil || len(doc.FixedPoints) != 1 {
		t.Fatalf("%v: %s", err, out)
	}
	fp := doc.FixedPoints[0]
	kc := math.Log(1+math.Sqrt2) / 2
	if fp["kind"] != "critical" || fp["eigenvalues"] != nil || math.Abs(fp["critical_coupling"].(float64)-kc) > 0.01*kc ||
		math.Abs(fp["central_charge"].(float64)-0.5) > 0.075 {
		t.Errorf("fixed point %v", fp)
	}
	for _, k := range []string{"scaling_dimensions", "y", "exponents", "spectrum_step"} {
		if _, ok := fp[k]; !ok {
			t.Errorf("fixed point lacks %s", k)
		}
	}
	code, out, errOut = run("critical", "--model", "ising", "--scheme", "tensor", "--set", "chi=8", "--along", "K=0.3:0.6", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var cd struct {
		Transitions []map[string]any `json:"transitions"`
	}
	if err := json.Unmarshal([]byte(out), &cd); err != nil || len(cd.Transitions) != 1 {
		t.Fatalf("%v: %s", err, out)
	}
	tr := cd.Transitions[0]
	if v, ok := tr["controlling_fixed_point"]; !ok || v != nil || tr["kind"] != "continuous" {
		t.Errorf("transition %v", tr)
	}
	if code, _, errOut := run("trace", "--scheme", "tensor", "--from", "K=0.3"); code != 2 || !strings.Contains(errOut, "has none") {
		t.Errorf("trace on tensor: exit %d, %q", code, errOut)
	}
}
