package chain

import (
	"context"
	"errors"
	"testing"
	"time"
)

// A single FIR stage decimating by a prime with a narrow transition needs
// a few thousand taps: its design takes seconds, so a cancellation after
// 50 ms lands inside the length search.
func TestDesignContextCancel(t *testing.T) {
	sp := Spec{InputRate: 101e3, OutputRate: 1e3, Passband: 400, Protected: 490, RippleDB: 0.1, RejectionDB: 100}
	plan, err := ParseNotation("fir101")
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	go func() {
		time.Sleep(50 * time.Millisecond)
		cancel()
	}()
	start := time.Now()
	c, err := DesignContext(ctx, sp, plan, Settings{})
	if !errors.Is(err, context.Canceled) {
		t.Fatalf("DesignContext(fir101) cancelled after 50 ms: err = %v, want one wrapping context.Canceled", err)
	}
	if c != nil {
		t.Errorf("DesignContext cancelled: got a chain, want none")
	}
	t.Logf("returned %v after the start: %v", time.Since(start), err)
}
