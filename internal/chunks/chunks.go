package chunks

import (
	"runtime"
	"sync"
)

// MinWork is the work (in inner-loop steps) below which Run stays on the
// calling goroutine: less than that costs less than starting the others.
const MinWork = 1 << 17

// Run calls fn over [0, n) in contiguous chunks, one per processor, when
// the work (work, in inner-loop steps over the whole range) is at least
// MinWork; otherwise, or with one processor, it calls fn(0, n) itself. It
// returns when every chunk is done.
func Run(n, work int, fn func(lo, hi int)) {
	nw := runtime.GOMAXPROCS(0)
	if work < MinWork || nw < 2 || n < 2 {
		fn(0, n)
		return
	}
	nw = min(nw, n)
	chunk := (n + nw - 1) / nw
	var wg sync.WaitGroup
	for lo := 0; lo < n; lo += chunk {
		wg.Add(1)
		go func(lo, hi int) {
			defer wg.Done()
			fn(lo, hi)
		}(lo, min(lo+chunk, n))
	}
	wg.Wait()
}
