package decimation

import (
	"context"
	"testing"
	"time"

	"scalewalk/flow"
)

func TestScratchBond(t *testing.T) {
	for _, tc := range []struct {
		m *Model
		d float64
		b int
	}{{NewIsing(), 2, 2}, {NewIsing(), 3, 3}, {NewIsing(), 2.58, 3}, {mustPotts(t, 2.5), 2, 2}, {mustPotts(t, 3), 2, 2}, {mustPotts(t, 3), 3, 3}, {mustPotts(t, 2), 2, 2}} {
		for _, o := range []Order{MoveFirst, DecimateFirst} {
			bm, _ := NewBondMove(tc.m, tc.d, tc.b, o)
			t0 := time.Now()
			r, err := flow.FindAll(context.Background(), bm, nil)
			if err != nil {
				t.Fatal(err)
			}
			t.Logf("%s d=%g b=%d %v: %d points in %v", tc.m.Name(), tc.d, tc.b, o, len(r.Points), time.Since(t0))
			for _, p := range r.Points {
				t.Logf("   X=%v inf=%v kind=%v", p.X, p.Inf, p.Kind)
			}
		}
	}
	for _, o := range []Order{MoveFirst, DecimateFirst} {
		for _, d := range []float64{1, 2, 3} {
			bm, _ := NewBondMove(NewIsing(), d, 2, o)
			dst := make([]float64, 2)
			g := bm.Step(dst, []float64{0, 0})
			bd := 1.0
			for i := 0; i < 10; i++ {
				bd *= 2
			}
			t.Logf("%v d=%g: g(0)=%v sum=%v ln2=0.693147", o, d, g, g/(1-1/float64(pow(2, d))))
		}
	}
}

func pow(b int, d float64) float64 {
	r := 1.0
	for i := 0; i < int(d); i++ {
		r *= float64(b)
	}
	return r
}
