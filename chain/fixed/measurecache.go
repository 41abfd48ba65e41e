package fixed

import (
	"math"
	"slices"
	"sync"

	"github.com/stepdown-dsp/stepdown/chain/remez"
)

// measureCache remembers the results of pure measurements of long filters
// (Deviations, tryWidth) by their whole input, so that the chains of a
// front that share a stage measure its taps once. A hit returns exactly
// what the measurement would, so output does not depend on what was
// measured before, nor on the order of concurrent callers. It holds at most
// cacheTaps taps in all, oldest dropped first.
type measureCache struct {
	mu      sync.Mutex
	entries []*cacheEntry // stored, oldest first
	pending []*cacheEntry // being computed
	taps    int           // taps held in entries
}

type cacheEntry struct {
	h   []float64 // the filter, copied
	key []float64 // everything else the result depends on
	val any
	// done is closed when the computation of a pending entry ends.
	done chan struct{}
}

// cacheTaps bounds the taps a measureCache keeps (16 MiB of float64).
const cacheTaps = 1 << 21

var (
	devCache   measureCache
	widthCache measureCache
)

// do returns the value stored for (h, key), or else computes it, stores it
// when compute says it may (a stopped search may not), and returns it. A
// caller that finds the same input being computed by another waits for
// that result instead of computing it again (the chains of a front are
// planned concurrently), and computes it itself when the other could not
// store it. A caller whose own stop channel closes while it waits stops
// waiting and calls compute itself, which, stopped, returns at once
// with nothing to store: another plan's long measurement must not hold
// up a plan that was told to stop (a nil channel never closes). key is
// kept; h is copied.
func (c *measureCache) do(stop <-chan struct{}, h, key []float64, compute func() (any, bool)) any {
	c.mu.Lock()
	for {
		if e := c.find(c.entries, h, key); e != nil {
			v := e.val
			c.mu.Unlock()
			return v
		}
		p := c.find(c.pending, h, key)
		if p == nil {
			break
		}
		ch := p.done
		c.mu.Unlock()
		select {
		case <-ch:
		case <-stop:
			v, _ := compute()
			return v
		}
		c.mu.Lock()
		if c.find(c.entries, h, key) == nil && c.find(c.pending, h, key) == nil {
			break // the other could not store it: compute it here
		}
	}
	if len(h) > cacheTaps {
		c.mu.Unlock()
		v, _ := compute()
		return v
	}
	me := &cacheEntry{h: slices.Clone(h), key: key, done: make(chan struct{})}
	c.pending = append(c.pending, me)
	c.mu.Unlock()

	v, keep := compute()

	c.mu.Lock()
	c.pending = slices.DeleteFunc(c.pending, func(e *cacheEntry) bool { return e == me })
	if keep {
		for c.taps+len(h) > cacheTaps && len(c.entries) > 0 {
			c.taps -= len(c.entries[0].h)
			c.entries = slices.Delete(c.entries, 0, 1)
		}
		me.val = v
		c.entries = append(c.entries, me)
		c.taps += len(h)
	}
	close(me.done)
	c.mu.Unlock()
	return v
}

// find returns the entry of es for (h, key), or nil.
func (c *measureCache) find(es []*cacheEntry, h, key []float64) *cacheEntry {
	for _, e := range es {
		if sameBits(e.key, key) && sameBits(e.h, h) {
			return e
		}
	}
	return nil
}

// sameBits compares two slices bit for bit (so NaN and -0 are told apart
// as the measurement would see them).
func sameBits(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if math.Float64bits(a[i]) != math.Float64bits(b[i]) {
			return false
		}
	}
	return true
}

// bandsKey appends to key what a measurement reads of bands: edges, gain
// and MaxError. It reports false when a band has a GainFunc or WeightFunc,
// which cannot be compared, so its measurement is not cached.
func bandsKey(key []float64, bands []remez.Band) ([]float64, bool) {
	for _, b := range bands {
		if b.GainFunc != nil || b.WeightFunc != nil {
			return nil, false
		}
		key = append(key, b.Lo, b.Hi, b.Gain, b.Weight, b.MaxError)
	}
	return key, true
}
