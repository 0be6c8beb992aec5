package decimation

import (
	"math"
	"sync"
	"testing"
)

// TestConcurrentStep runs the pooled path (q = 5 > 4) from several
// goroutines and checks every result against the Potts closed form
// t(K′) = t(K)² (F. Y. Wu, Rev. Mod. Phys. 54, 235 (1982)). Run with -race.
func TestConcurrentStep(t *testing.T) {
	const q = 5
	c := mustChain(t, mustPotts(t, q), 2)
	var wg sync.WaitGroup
	errs := make(chan string, 64)
	for w := 0; w < 8; w++ {
		wg.Add(1)
		go func(w int) {
			defer wg.Done()
			for i := 0; i < 200; i++ {
				K := 0.1 + 0.01*float64(i) + 0.001*float64(w)
				xp, _ := step(c, []float64{K, 0, 0})
				tb := math.Pow(pottsT(K, q), 2)
				if want := math.Log((1 + (q-1)*tb) / (1 - tb)); !near(xp[0], want, tolExact) {
					select {
					case errs <- "mismatch":
					default:
					}
					return
				}
			}
		}(w)
	}
	wg.Wait()
	close(errs)
	for e := range errs {
		t.Errorf("concurrent Step: %s against Wu 1982", e)
	}
}
