package optimize

import (
	"context"
	"sync"
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
	return runApart(ctx, jobs, n, nil, work, progress)
}

// apartWindow is how far past the lowest index not started runApart looks
// for one whose stages no running call is designing.
const apartWindow = 32

// runApart is runAll that keeps apart the calls that would design the same
// stage: keys[i] are the FIR and half-band stages of call i (nil keys: in
// index order, as runAll). A worker takes the lowest index not started
// whose stages are neither being designed by a running call nor unknown
// (a finished call has designed all of its own), looking at most
// apartWindow indices ahead, and else the lowest. Two calls that share a
// stage not designed yet would otherwise run side by side, one waiting on
// the other's design (chain.StageMemo) while its processor idles. Only the
// order of the calls changes: each writes its own slot, and a stage's
// design is the same whichever call makes it.
func runApart(ctx context.Context, jobs, n int, keys [][]realKey, work func(i int), progress func(done, total int)) (done []bool) {
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
	pk := picker{n: n, keys: keys, started: make([]bool, n), busy: map[realKey]int{}, fin: map[realKey]bool{}}
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
				i := pk.take()
				if i < 0 {
					return
				}
				if !runUnit(ctx, func() { work(i) }) {
					return
				}
				pk.finish(i)
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

// picker hands out runApart's indices.
type picker struct {
	mu      sync.Mutex
	n, next int // next: lowest index perhaps not started
	keys    [][]realKey
	started []bool
	busy    map[realKey]int  // running calls per stage
	fin     map[realKey]bool // stages of finished calls: designed
}

// take returns the index to run next, or -1 when all have started.
func (p *picker) take() int {
	p.mu.Lock()
	defer p.mu.Unlock()
	for p.next < p.n && p.started[p.next] {
		p.next++
	}
	if p.next >= p.n {
		return -1
	}
	i := p.next
	if p.keys != nil {
		for j := p.next; j < p.n && j < p.next+apartWindow; j++ {
			if !p.started[j] && !p.clash(j) {
				i = j
				break
			}
		}
		for _, k := range p.keys[i] {
			p.busy[k]++
		}
	}
	p.started[i] = true
	return i
}

// clash reports whether call j shares a stage not designed yet with a
// running call.
func (p *picker) clash(j int) bool {
	for _, k := range p.keys[j] {
		if p.busy[k] > 0 && !p.fin[k] {
			return true
		}
	}
	return false
}

// finish records that call i has run to completion.
func (p *picker) finish(i int) {
	if p.keys == nil {
		return
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	for _, k := range p.keys[i] {
		p.busy[k]--
		p.fin[k] = true
	}
}
