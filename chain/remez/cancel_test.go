package remez

import (
	"context"
	"errors"
	"math"
	"runtime"
	"testing"
	"time"
)

// longBands is a lowpass whose optimum is a few thousand taps long: a long
// design takes seconds, so a cancellation after 50 ms lands mid-exchange.
var longBands = []Band{
	{Lo: 0, Hi: 0.05, Gain: 1, Weight: 1, MaxError: 0.01},
	{Lo: 0.0506, Hi: 0.5, Gain: 0, Weight: 100, MaxError: 1e-4},
}

// cancelAfter runs fn with a context cancelled after d from another
// goroutine and returns fn's error and the time from the cancellation to
// fn's return.
func cancelAfter(d time.Duration, fn func(ctx context.Context) error) (time.Duration, error) {
	ctx, cancel := context.WithCancel(context.Background())
	var at time.Time
	done := make(chan struct{})
	go func() {
		defer close(done)
		time.Sleep(d)
		at = time.Now()
		cancel()
	}()
	err := fn(ctx)
	end := time.Now()
	<-done
	cancel()
	lat := end.Sub(at)
	if lat < 0 {
		lat = 0 // returned before the cancellation
	}
	return lat, err
}

func TestDesignContextCancel(t *testing.T) {
	var res *Result
	lat, err := cancelAfter(50*time.Millisecond, func(ctx context.Context) error {
		var err error
		res, err = DesignContext(ctx, 8000, 1, longBands, Settings{})
		return err
	})
	if !errors.Is(err, context.Canceled) {
		t.Fatalf("DesignContext(8000 taps) cancelled after 50 ms: err = %v, want one wrapping context.Canceled", err)
	}
	if res != nil {
		t.Errorf("DesignContext cancelled: got a Result, want none")
	}
	t.Logf("8000 taps: returned %v after the cancellation: %v", lat, err)
}

func TestMinLengthContextCancel(t *testing.T) {
	lat, err := cancelAfter(50*time.Millisecond, func(ctx context.Context) error {
		_, err := MinLengthContext(ctx, 1, longBands, 0, 0, Settings{})
		return err
	})
	if !errors.Is(err, context.Canceled) {
		t.Fatalf("MinLengthContext cancelled after 50 ms: err = %v, want one wrapping context.Canceled", err)
	}
	t.Logf("MinLength: returned %v after the cancellation: %v", lat, err)
}

func TestContextDoneBefore(t *testing.T) {
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	bands := []Band{{Lo: 0, Hi: 0.1, Gain: 1, MaxError: 0.01}, {Lo: 0.2, Hi: 0.5, MaxError: 0.001}}
	if _, err := DesignContext(ctx, 31, 1, bands, Settings{}); !errors.Is(err, context.Canceled) {
		t.Errorf("DesignContext: err = %v, want context.Canceled", err)
	}
	if _, err := MinLengthContext(ctx, 1, bands, 0, 0, Settings{}); !errors.Is(err, context.Canceled) {
		t.Errorf("MinLengthContext: err = %v, want context.Canceled", err)
	}
	if _, err := MinHalfBandContext(ctx, 0.1, 1, 1e-4, Settings{}); !errors.Is(err, context.Canceled) {
		t.Errorf("MinHalfBandContext: err = %v, want context.Canceled", err)
	}
	if _, err := HalfBandContext(ctx, 20, 0.1, 1, Settings{}); !errors.Is(err, context.Canceled) {
		t.Errorf("HalfBandContext: err = %v, want context.Canceled", err)
	}
}

// BenchmarkCancelLatency measures the time from cancelling an 8000-tap
// design 50 ms in to its return (reported as ns/op of latency, not of the
// design).
func BenchmarkCancelLatency(b *testing.B) {
	var total time.Duration
	for i := 0; i < b.N; i++ {
		lat, _ := cancelAfter(50*time.Millisecond, func(ctx context.Context) error {
			_, err := DesignContext(ctx, 8000, 1, longBands, Settings{})
			return err
		})
		total += lat
	}
	b.ReportMetric(float64(total.Microseconds())/float64(b.N)/1000, "ms-latency/op")
}

// The steps after the exchange (the taps from the polynomial, O(r^2), and
// the deviations, O(n r)) take seconds at tens of thousands of taps, so
// they look at the context too: once it is done they return its error and
// no filter, wherever they are.
func TestTapsAndDeviationsStop(t *testing.T) {
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	e, err := newEngine(1001, 1, longBands, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	e.ctx = ctx
	if _, err := e.design(); err != nil && !errors.Is(err, ErrNotConverged) {
		t.Fatal(err)
	}
	cancel()
	if h, err := e.taps(); !errors.Is(err, context.Canceled) || h != nil {
		t.Errorf("taps after the cancellation: %d taps, err = %v; want none and context.Canceled", len(h), err)
	}
}

// The taps are spread over the cores when the filter is long, each sample
// computed alone: the same taps, bit for bit, on one core as on four.
func TestTapsSameOnAnyCores(t *testing.T) {
	bands := []Band{{Lo: 0, Hi: 0.1, Gain: 1, Weight: 1, MaxError: 0.01}, {Lo: 0.102, Hi: 0.5, Weight: 10, MaxError: 1e-3}}
	design := func(procs int) []float64 {
		defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(procs))
		res, err := Design(1201, 1, bands, Settings{})
		if err != nil {
			t.Fatal(err)
		}
		return res.Taps
	}
	one, four := design(1), design(4)
	for k := range one {
		if math.Float64bits(one[k]) != math.Float64bits(four[k]) {
			t.Fatalf("tap %d: %v on one core, %v on four", k, one[k], four[k])
		}
	}
}
