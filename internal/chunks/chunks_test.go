package chunks

import (
	"runtime"
	"testing"
)

// Every index is visited once, in chunks that cover [0, n) without
// overlap, with any number of processors and any amount of work.
func TestRunCoversOnce(t *testing.T) {
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	for _, procs := range []int{1, 2, 3, 7} {
		runtime.GOMAXPROCS(procs)
		for _, n := range []int{0, 1, 2, 5, 100, 1001} {
			for _, work := range []int{0, MinWork - 1, MinWork, 1 << 30} {
				seen := make([]int, n)
				Run(n, work, func(lo, hi int) {
					for i := lo; i < hi; i++ {
						seen[i]++
					}
				})
				for i, s := range seen {
					if s != 1 {
						t.Fatalf("procs %d, n %d, work %d: index %d visited %d times", procs, n, work, i, s)
					}
				}
			}
		}
	}
}
