package flow

import "math"

// Exponent is a named critical exponent with the relation that gave it.
type Exponent struct {
	Name     string  // y_t, y_h, nu, eta, alpha, beta, gamma, delta, phi
	Value    float64 // may be ±Inf (e.g. δ when y_h = d)
	Relation string  // e.g. "nu = 1/y_t"
}

// ScalingExponents returns the exponents that follow from y_t, y_h in
// dimension d by the scaling and hyperscaling relations (see the package
// doc). Pass NaN for an exponent that is not identified; only the
// exponents that can be formed are returned, in the order y_t, y_h, nu,
// eta, alpha, beta, gamma, delta.
//
// Special cases are:
//
//	y_t = NaN: only y_h and eta are returned (if y_h is known)
//	|y_h − d| ≤ tolH: y_h is taken as d, and delta = +Inf (a discontinuity
//	in the field)
func ScalingExponents(yt, yh, d, tolH float64) []Exponent {
	var out []Exponent
	haveT := !math.IsNaN(yt)
	haveH := !math.IsNaN(yh)
	if haveH && math.Abs(yh-d) <= tolH {
		yh = d // equal within its error: the relations then hold exactly
	}
	if haveT {
		out = append(out, Exponent{"y_t", yt, "leading symmetric eigenvalue: y_t = ln|lambda_t| / ln b"})
	}
	if haveH {
		out = append(out, Exponent{"y_h", yh, "leading symmetry-breaking eigenvalue: y_h = ln|lambda_h| / ln b"})
	}
	if haveT {
		out = append(out, Exponent{"nu", 1 / yt, "nu = 1/y_t"})
	}
	if haveH {
		out = append(out, Exponent{"eta", d + 2 - 2*yh, "eta = d + 2 - 2 y_h"})
	}
	if haveT {
		out = append(out, Exponent{"alpha", 2 - d/yt, "alpha = 2 - d/y_t (hyperscaling)"})
	}
	if haveT && haveH {
		out = append(out,
			Exponent{"beta", (d - yh) / yt, "beta = (d - y_h)/y_t"},
			Exponent{"gamma", (2*yh - d) / yt, "gamma = (2 y_h - d)/y_t"},
		)
		delta := yh / (d - yh)
		if math.Abs(d-yh) <= tolH {
			delta = math.Inf(1)
		}
		out = append(out, Exponent{"delta", delta, "delta = y_h/(d - y_h)"})
	}
	return out
}

// Lookup returns the value of the exponent called name, and whether it is
// among es.
func Lookup(es []Exponent, name string) (float64, bool) {
	for _, e := range es {
		if e.Name == name {
			return e.Value, true
		}
	}
	return math.NaN(), false
}
