package signalio

import (
	"context"
	"errors"
	"strings"
	"testing"
)

// A CSV read stops once its context is done, comment lines included: a
// stream of comment lines that never ends is read only until the stop.
func TestReadCSVStops(t *testing.T) {
	ctx, cancel := context.WithCancel(context.Background())
	lines := 0
	r := readerFunc(func(p []byte) (int, error) {
		n := 0
		for n+8 <= len(p) {
			n += copy(p[n:], "# note\n\n")
			lines += 2
			if lines >= 3*csvCheckLines {
				cancel()
			}
		}
		return n, nil
	})
	_, _, err := ReadCSVContext(ctx, "endless.csv", r, Options{Format: Format{Bits: 16}, RateHz: 1e6})
	if !errors.Is(err, context.Canceled) || !strings.Contains(err.Error(), "endless.csv: reading stopped") {
		t.Fatalf("err = %v, want the read stopped, naming the file", err)
	}
	if lines > 3*csvCheckLines+2*csvCheckLines+8192 {
		t.Errorf("read %d lines after a stop at %d", lines, 3*csvCheckLines)
	}
}

type readerFunc func(p []byte) (int, error)

func (f readerFunc) Read(p []byte) (int, error) { return f(p) }
