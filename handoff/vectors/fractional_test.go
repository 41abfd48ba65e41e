package vectors

import (
	"strings"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain/fixed"
	"github.com/stepdown-dsp/stepdown/handoff/headers"
	"github.com/stepdown-dsp/stepdown/handoff/rtl"
)

// TestFractionalRefused: the hand-off packages refuse a cascade with a
// fractional stage (they are written for integer stages only).
func TestFractionalRefused(t *testing.T) {
	c := fixed.Cascade{InputRate: 1e6, Passband: 1e4, Stages: []fixed.Stage{{R: 1, Up: 2, Down: 5, Taps: []float64{0.25, 0.5, 0.25}}}}
	w := &fixed.Widths{InputBits: 16, OutputBits: 16, Stages: []fixed.StageWidths{{R: 1, Up: 2, Down: 5, OutputBits: 16}}}
	_, err1 := Generate(c, w, Options{})
	_, err2 := headers.Files(c, w, headers.Options{})
	_, err3 := rtl.Model(c, w, rtl.Options{})
	for i, err := range []error{err1, err2, err3} {
		if err == nil || !strings.Contains(err.Error(), "fractional stage") {
			t.Errorf("package %d: %v, want the fractional refusal", i, err)
		}
	}
}
