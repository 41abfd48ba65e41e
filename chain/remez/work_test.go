package remez

import (
	"fmt"
	"testing"
)

func TestWork(t *testing.T) {
	if !debugRemez {
		t.Skip()
	}
	for _, n := range []int{255, 1023, 2047, 4095} {
		workCount.Store(0)
		res, _ := Design(n, 1, shrinking(n), Settings{})
		r := float64((n + 1) / 2)
		fmt.Printf("WORK n=%d work/r^2=%.1f (dense iteration = %d) iters %d\n", n, float64(workCount.Load())/(r*r), 16, res.Iterations)
	}
}
