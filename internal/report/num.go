// Package report turns the plain results of package flow into the
// documents scalewalk writes: JSON objects with a stable contract, CSV
// tables and aligned text tables. It does no physics.
package report

import (
	"math"
	"strconv"
)

// Num is a float64 that JSON-encodes as a number when finite and as null
// otherwise (Go's encoder refuses NaN and ±Inf).
type Num float64

// MarshalJSON implements json.Marshaler.
func (v Num) MarshalJSON() ([]byte, error) {
	f := float64(v)
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return []byte("null"), nil
	}
	return strconv.AppendFloat(nil, f, 'g', -1, 64), nil
}

// Signed is a float64 whose sign at infinity matters: it JSON-encodes as a
// number when finite, as "+inf" or "-inf" when infinite and as null for NaN.
type Signed float64

// MarshalJSON implements json.Marshaler.
func (v Signed) MarshalJSON() ([]byte, error) {
	f := float64(v)
	switch {
	case math.IsNaN(f):
		return []byte("null"), nil
	case math.IsInf(f, 1):
		return []byte(`"+inf"`), nil
	case math.IsInf(f, -1):
		return []byte(`"-inf"`), nil
	}
	return strconv.AppendFloat(nil, f, 'g', -1, 64), nil
}

// CSV formats a float for CSV: +Inf, -Inf and NaN literally, else the
// shortest representation that round-trips.
func CSV(f float64) string {
	switch {
	case math.IsNaN(f):
		return "NaN"
	case math.IsInf(f, 1):
		return "+Inf"
	case math.IsInf(f, -1):
		return "-Inf"
	}
	return strconv.FormatFloat(f, 'g', -1, 64)
}

// Text formats a float for a table with the given significant digits.
func Text(f float64, digits int) string {
	switch {
	case math.IsNaN(f):
		return "NaN"
	case math.IsInf(f, 1):
		return "+inf"
	case math.IsInf(f, -1):
		return "-inf"
	}
	s := strconv.FormatFloat(f, 'g', digits, 64)
	if s == "-0" {
		s = "0"
	}
	return s
}

// Snap formats like Text but writes values below 1e-9 in magnitude as 0:
// for fitted and extrapolated quantities (eigenvalues, exponents) whose
// error bars are far larger than such residues.
func Snap(f float64, digits int) string {
	if math.Abs(f) < 1e-9 {
		return "0"
	}
	return Text(f, digits)
}
