package decimation

import (
	"context"
	"fmt"
	"math"
	"os"
	"strings"
	"testing"
)

// BenchmarkTensorRun times 30 coarse-graining steps (2^30 sites) of the
// square Ising model at K_c, for both methods and chi = 8, 16, 24, 32.
func BenchmarkTensorRun(b *testing.B) {
	kc := math.Log(1+math.Sqrt2) / 2
	for _, method := range []string{"trg", "hotrg"} {
		for _, chi := range []int{8, 16, 24, 32} {
			b.Run(fmt.Sprintf("%s/chi=%d", method, chi), func(b *testing.B) {
				tr := mustTensor(b, NewIsing(), method, chi)
				b.ReportAllocs()
				for b.Loop() {
					if _, err := tr.FreeEnergy(context.Background(), []float64{kc, 0}); err != nil {
						b.Fatal(err)
					}
				}
			})
		}
	}
}

// TestTensorPeakMemory runs Levin–Nave at chi = 32 and then HOTRG at
// chi = 32 and reads the process's peak resident memory after each (Linux
// /proc/self/status VmHWM): <= 300 MB and <= 1 GB, the targets. Long test.
func TestTensorPeakMemory(t *testing.T) {
	if !longTests() {
		t.Skip("long test: SCALEWALK_LONG=1")
	}
	kc := math.Log(1+math.Sqrt2) / 2
	for _, c := range []struct {
		method string
		limit  float64
	}{{"trg", 300e6}, {"hotrg", 1e9}} {
		tr := mustTensor(t, NewIsing(), c.method, 32)
		if _, err := tr.FreeEnergy(context.Background(), []float64{kc, 0}); err != nil {
			t.Fatal(err)
		}
		hwm := peakRSS()
		t.Logf("%s chi=32: peak resident memory %.0f MB", c.method, hwm/1e6)
		if hwm > c.limit {
			t.Errorf("%s chi=32: peak %.0f MB over %.0f MB", c.method, hwm/1e6, c.limit/1e6)
		}
	}
}

func peakRSS() float64 {
	b, err := os.ReadFile("/proc/self/status")
	if err != nil {
		return math.NaN()
	}
	for _, line := range strings.Split(string(b), "\n") {
		if strings.HasPrefix(line, "VmHWM:") {
			var kb float64
			fmt.Sscan(strings.TrimSpace(strings.TrimPrefix(line, "VmHWM:")), &kb)
			return kb * 1024
		}
	}
	return math.NaN()
}
