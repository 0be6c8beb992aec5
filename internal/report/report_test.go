package report

import (
	"bytes"
	"context"
	"encoding/csv"
	"encoding/json"
	"math"
	"reflect"
	"strings"
	"testing"

	"scalewalk/flow"
	"scalewalk/flow/flowtest"
)

// fill sets every float field reachable from v (structs, slices, maps,
// arrays, pointers) to f, so that encoding can be checked on each.
func fill(v reflect.Value, f float64) {
	switch v.Kind() {
	case reflect.Float64:
		if v.CanSet() {
			v.SetFloat(f)
		}
	case reflect.Pointer:
		if !v.IsNil() {
			fill(v.Elem(), f)
		}
	case reflect.Struct:
		for i := 0; i < v.NumField(); i++ {
			fill(v.Field(i), f)
		}
	case reflect.Slice, reflect.Array:
		for i := 0; i < v.Len(); i++ {
			fill(v.Index(i), f)
		}
	case reflect.Map:
		for _, k := range v.MapKeys() {
			e := reflect.New(v.Type().Elem()).Elem()
			e.Set(v.MapIndex(k))
			fill(e, f)
			v.SetMapIndex(k, e)
		}
	}
}

// Every JSON output type must encode with +Inf, -Inf and NaN in every
// float field, and never write a bare Inf or NaN (Go's encoder refuses
// them; JSON has no such literals, RFC 8259).
func TestJSONNonFinite(t *testing.T) {
	m := flowtest.IsingChain2{}
	res, err := flow.FindAll(context.Background(), m, nil)
	if err != nil {
		t.Fatal(err)
	}
	meta := Meta{Model: "ising", Scheme: "chain", Params: map[string]any{"b": 2}}
	tr := flow.Trace(m, []float64{0.5, 0.1}, 3, nil)
	docs := map[string]func() any{
		"fixed": func() any { d := Fixed(meta, m, res); return &d },
		"trace": func() any { d := Trace(meta, m, tr); return &d },
		"critical": func() any {
			path := flow.Path{Name: "T", From: 1, To: 2, Samples: 3, Point: func(dst []float64, s float64) { dst[0], dst[1] = 1/s, 0 }}
			cd := CriticalDoc{Meta: meta, Map: m, Path: path, Temperature: true, At: map[string]float64{"h": 0}, Tolerance: 1e-10,
				Crossings: []flow.Crossing{{Value: 1.5, Bracket: [2]float64{1.4, 1.6}, Controlling: 1, Kind: flow.Continuous}},
				Points:    res.Points,
				Material:  &MaterialInfo{Name: "x", Exchange: 1, Unit: "meV", Convention: "ising", JModelK: 11.6},
				Sweep:     &SweepDoc{Name: "h", Rows: []SweepRow{{Value: 0.1}}, Changes: []KindChange{{From: flow.Continuous, To: flow.FirstOrder, Value: 1, Bracket: [2]float64{0, 2}, PathValue: 1}}}}
			d := Critical(cd)
			return &d
		},
	}
	for name, mk := range docs {
		for _, f := range []float64{math.Inf(1), math.Inf(-1), math.NaN()} {
			doc := mk()
			fill(reflect.ValueOf(doc), f)
			b, err := json.Marshal(doc)
			if err != nil {
				t.Errorf("%s with %g: %v", name, f, err)
				continue
			}
			var back any
			if err := json.Unmarshal(b, &back); err != nil {
				t.Errorf("%s with %g: output is not valid JSON: %v", name, f, err)
			}
			s := string(b)
			for _, bad := range []string{"Inf", "NaN"} {
				if strings.Contains(s, bad) {
					t.Errorf("%s with %g: output contains %s", name, f, bad)
				}
			}
		}
	}
}

func TestSignedAndNum(t *testing.T) {
	cases := []struct {
		v    any
		want string
	}{
		{Num(1.5), "1.5"}, {Num(math.Inf(1)), "null"}, {Num(math.NaN()), "null"},
		{Signed(math.Inf(1)), `"+inf"`}, {Signed(math.Inf(-1)), `"-inf"`}, {Signed(math.NaN()), "null"}, {Signed(-2), "-2"},
	}
	for _, c := range cases {
		b, err := json.Marshal(c.v)
		if err != nil || string(b) != c.want {
			t.Errorf("marshal %v = %s (%v), want %s", c.v, b, err, c.want)
		}
	}
	if CSV(math.Inf(1)) != "+Inf" || CSV(math.Inf(-1)) != "-Inf" || CSV(math.NaN()) != "NaN" {
		t.Error("CSV must write +Inf, -Inf and NaN literally")
	}
}

// The fixed-point JSON keeps the contract's field names.
func TestFixedContract(t *testing.T) {
	m := flowtest.IsingChain2{}
	res, _ := flow.FindAll(context.Background(), m, nil)
	b, _ := json.Marshal(Fixed(Meta{Model: "ising", Scheme: "chain"}, m, res))
	var doc map[string]any
	if err := json.Unmarshal(b, &doc); err != nil {
		t.Fatal(err)
	}
	for _, k := range []string{"model", "scheme", "b", "d", "couplings", "fixed_points"} {
		if _, ok := doc[k]; !ok {
			t.Errorf("missing top-level key %q", k)
		}
	}
	fps := doc["fixed_points"].([]any)
	for _, fp := range fps {
		p := fp.(map[string]any)
		for _, k := range []string{"values", "infinite", "coordinates", "family", "kind", "discontinuity", "relevant",
			"relevant_breaking", "eigenvalues", "y", "y_err", "exponents", "notes"} {
			if _, ok := p[k]; !ok {
				t.Errorf("fixed point missing key %q", k)
			}
		}
	}
	// The K = +inf point: value null, infinite "+inf".
	var found bool
	for _, fp := range fps {
		p := fp.(map[string]any)
		if p["infinite"].(map[string]any)["K"] == "+inf" {
			found = true
			if p["values"].(map[string]any)["K"] != nil {
				t.Errorf("infinite K written as %v, want null", p["values"].(map[string]any)["K"])
			}
			if p["coordinates"].(map[string]any)["K"] != "exp(-2K)" {
				t.Errorf("coordinate %v, want exp(-2K)", p["coordinates"].(map[string]any)["K"])
			}
		}
	}
	if !found {
		t.Error("no fixed point with K = +inf in the JSON")
	}
}

func TestTraceCSV(t *testing.T) {
	m := flowtest.IsingChain2{}
	tr := flow.Trace(m, []float64{0.8, 0.1}, 4, nil)
	var buf bytes.Buffer
	if err := TraceCSV(&buf, m, tr); err != nil {
		t.Fatal(err)
	}
	rows, err := csv.NewReader(&buf).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if got := strings.Join(rows[0], ","); got != "n,K,h,g" {
		t.Errorf("header %q, want n,K,h,g", got)
	}
	if rows[1][1] != "0.8" || rows[1][2] != "0.1" {
		t.Errorf("row 0 = %v, want the start 0.8, 0.1", rows[1])
	}
	if len(rows) != len(tr.Points)+1 {
		t.Errorf("%d rows, want %d", len(rows), len(tr.Points)+1)
	}
}

func TestThermoJSONNonFinite(t *testing.T) {
	m := flowtest.IsingChain2{}
	for _, f := range []float64{math.Inf(1), math.Inf(-1), math.NaN()} {
		p := ThermoPoint{X: []float64{f, f}, F: f, U: f, C: f, M: f, Chi: f, M0: f, Xi: f, Det: f, R: f, Metric: [][]float64{{f, f}, {f, f}}}
		doc := Thermo(ThermoDoc{Meta: Meta{Model: "ising"}, Map: m, Metric: []int{0, 1}, Points: []ThermoPoint{p}, Temperature: true, T: []float64{f}})
		b, err := json.Marshal(doc)
		if err != nil || strings.Contains(string(b), "Inf") || strings.Contains(string(b), "NaN") {
			t.Errorf("thermo JSON with %g: %v %s", f, err, b)
		}
	}
}
