package optimize

import (
	"context"
	"sync"
	"sync/atomic"
)

// runAll calls work(i) for i in [0, n) on jobs goroutines. Each call writes
// only its own slot of the caller's result slices, so the outcome does not
// depend on the interleaving. Before starting an index a worker checks ctx;
// after cancellation no new index starts, and runAll returns at once: a
// call still running is abandoned (it finishes in the background and its
// slot is not read; see runUnit). done[i] reports whether work(i) ran to
// completion before the cancellation. progress, when not nil,
// is called with the number of finished calls by the worker that finished
// the last of them, one worker at a time, before that worker checks ctx
// again: a progress function that cancels ctx lets no more than the calls
// already running finish after it.
func runAll(ctx context.Context, jobs, n int, work func(i int), progress func(done, total int)) (done []bool) {
	done = make([]bool, n)
	if n == 0 {
		return done
	}
	if jobs < 1 {
		jobs = 1
	}
	if jobs > n {
		jobs = n
	}
	var next atomic.Int64
	var mu sync.Mutex
	count := 0
	var wg sync.WaitGroup
	for w := 0; w < jobs; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for {
				if ctx.Err() != nil {
					return
				}
				i := int(next.Add(1) - 1)
				if i >= n {
					return
				}
				if !runUnit(ctx, func() { work(i) }) {
					return
				}
				done[i] = true
				mu.Lock()
				count++
				if progress != nil {
					progress(count, n)
				}
				mu.Unlock()
			}
		}()
	}
	wg.Wait()
	return done
}

// runUnit runs fn and reports whether it finished before ctx was
// cancelled. A design cannot be interrupted (package chain takes no
// context) and the longest the work budget admits takes seconds, so on
// cancellation fn is left to finish on its own goroutine, its result
// unread, and runUnit returns at once: Plan stops promptly.
func runUnit(ctx context.Context, fn func()) bool {
	if ctx.Done() == nil {
		fn()
		return true
	}
	fin := make(chan struct{})
	go func() {
		defer close(fin)
		fn()
	}()
	select {
	case <-fin:
		return true
	case <-ctx.Done():
		select {
		case <-fin:
			// Finished as the context was cancelled: keep it, so that a
			// Progress that cancels sees the unit it counted recorded.
			return true
		default:
			return false
		}
	}
}
