package fixed

import (
	"testing"
	"time"
)

// TestCacheWaiterStops: a caller waiting for another caller's measurement
// of the same filter stops waiting once its own stop channel closes, and
// what it then computes (stopped, not to be kept) is not stored; the
// other's result is, once it ends.
func TestCacheWaiterStops(t *testing.T) {
	var c measureCache
	h, key := []float64{1, 2, 3}, []float64{4}
	release := make(chan struct{})
	first := make(chan any)
	go func() {
		first <- c.do(nil, h, key, func() (any, bool) {
			<-release
			return "first", true
		})
	}()
	// Wait until the first caller's measurement is pending.
	for {
		c.mu.Lock()
		n := len(c.pending)
		c.mu.Unlock()
		if n == 1 {
			break
		}
		time.Sleep(time.Millisecond)
	}
	stop := make(chan struct{})
	close(stop)
	second := make(chan any)
	go func() {
		second <- c.do(stop, h, key, func() (any, bool) { return "stopped", false })
	}()
	select {
	case v := <-second:
		if v != "stopped" {
			t.Errorf("the stopped waiter got %v, want its own stopped value", v)
		}
	case <-time.After(time.Minute):
		close(release)
		t.Fatal("a waiter whose stop channel had closed still waited for the other caller")
	}
	close(release)
	if v := <-first; v != "first" {
		t.Errorf("the first caller got %v, want first", v)
	}
	got := c.do(nil, h, key, func() (any, bool) { return "computed again", true })
	if got != "first" {
		t.Errorf("after both: %v, want the first caller's stored result", got)
	}
}
