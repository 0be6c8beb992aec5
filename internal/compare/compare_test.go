package compare

import (
	"context"
	"math"
	"testing"
)

func find(rows []Row, method, key, val string) *Row {
	for i, r := range rows {
		if r.Method == method && (key == "" || r.Params[key] == val) && !r.Multicritical {
			return &rows[i]
		}
	}
	return nil
}

// The triangular Ising comparison: the exact row carries Houtappel's
// K_c = ln(3)/4 (Physica 16, 425 (1950)) and the 2D Ising exponents
// (Onsager 1944; Yang 1952); the first-order cumulant row has
// K_c = K* = ln(1 + 2√2)/4 (Niemeijer and van Leeuwen, PRL 31, 1411 (1973),
// from memory; the closed form follows from their recursion); the bond
// moving row has K* = 0.3047 and nu = 1.338 (Pathria and Beale,
// Statistical Mechanics, ch. 14); and the finite clusters approach the
// exact K_c as they grow.
func TestCompareTriangularIsing(t *testing.T) {
	rows, err := Rows(context.Background(), Spec{Model: "ising", Lattice: "triangular"}, nil)
	if err != nil {
		t.Fatal(err)
	}
	ex := find(rows, "exact", "", "")
	if ex == nil || math.Abs(ex.KC-math.Log(3)/4) > 1e-15 || ex.Nu != 1 || ex.YH != 15.0/8 || math.Abs(ex.Eta-0.25) > 1e-15 {
		t.Fatalf("exact row %+v", ex)
	}
	c1 := find(rows, "Niemeijer–van Leeuwen cumulant, order 1", "", "")
	if c1 == nil || math.Abs(c1.KC-math.Log(1+2*math.Sqrt2)/4) > 1e-8 || math.Abs(c1.KStar-c1.KC) > 1e-8 {
		t.Errorf("first-order cumulant row %+v", c1)
	}
	bm := find(rows, "Migdal–Kadanoff bond moving", "order", "move-first")
	if bm == nil || math.Abs(bm.KC-0.3047) > 1e-4 || math.Abs(bm.Nu-1.338) > 1e-3 {
		t.Errorf("bond moving row %+v", bm)
	}
	exact := math.Log(3) / 4
	prev := math.Inf(1)
	for _, n := range []string{"3", "4", "7"} {
		r := find(rows, "finite-cluster RG", "blocks", n)
		if r == nil || r.Skipped {
			t.Fatalf("cluster %s blocks: %+v", n, r)
		}
		e := math.Abs(r.KC - exact)
		if e >= prev {
			t.Errorf("cluster of %s blocks: |K_c - exact| = %.4g does not shrink (previous %.4g)", n, e, prev)
		}
		prev = e
		if math.IsNaN(r.YH) || r.YH <= 1 || r.YH >= 2 {
			t.Errorf("cluster of %s blocks: y_h = %g", n, r.YH)
		}
	}
	if prev > 0.01 {
		t.Errorf("the 7-block cluster is %.3g from the exact K_c", prev)
	}
}

// Spin-1: bond moving's tricritical point is set beside the tricritical
// Ising exponents y_t = 9/5, y_h = 77/40 (Friedan, Qiu and Shenker 1984,
// from memory), and no cluster or cumulant row appears.
func TestCompareSpin1(t *testing.T) {
	rows, err := Rows(context.Background(), Spec{Model: "spin1", Lattice: "square"}, nil)
	if err != nil {
		t.Fatal(err)
	}
	var tri, exTri bool
	for _, r := range rows {
		if r.Scheme == "cluster" || r.Scheme == "cumulant" {
			t.Errorf("row %+v for spin1", r)
		}
		if r.Multicritical && r.Exact {
			exTri = r.YT == 9.0/5 && r.YH == 77.0/40
		}
		if r.Multicritical && !r.Exact {
			tri = r.YT > 1 && r.YT < 2
		}
	}
	if !tri || !exTri {
		t.Errorf("tricritical rows missing or wrong: %+v", rows)
	}
}

// A lattice compare does not know is refused.
func TestCompareBadLattice(t *testing.T) {
	if _, err := Rows(context.Background(), Spec{Model: "ising", Lattice: "cubic"}, nil); err == nil {
		t.Error("cubic lattice accepted")
	}
}

// The square Ising comparison: the exact row (Kramers and Wannier, Phys.
// Rev. 60, 252 (1941); Onsager 1944), tensor rows without K* whose K_c at
// chi = 16 (Levin–Nave) lies within 1e-3 of it and whose nu within 1 % of
// 1 (Onsager), and the finite clusters within 3 %.
func TestCompareSquareIsing(t *testing.T) {
	rows, err := Rows(context.Background(), Spec{Model: "ising", Lattice: "square"}, nil)
	if err != nil {
		t.Fatal(err)
	}
	exact := math.Log(1+math.Sqrt2) / 2
	ex := find(rows, "exact", "", "")
	if ex == nil || ex.KC != exact {
		t.Fatalf("exact row %+v", ex)
	}
	tr := find(rows, "tensor renormalization (Levin–Nave TRG)", "chi", "16")
	if tr == nil || math.Abs(tr.KC-exact)/exact > 1e-3 || !math.IsNaN(tr.KStar) || math.Abs(tr.Nu-1) > 0.01 {
		t.Errorf("TRG chi=16 row %+v", tr)
	}
	for _, n := range []string{"4", "6"} {
		r := find(rows, "finite-cluster RG", "blocks", n)
		if r == nil || math.Abs(r.KC-exact)/exact > 0.03 {
			t.Errorf("cluster %s blocks: %+v", n, r)
		}
	}
}
