package simulate

import (
	"context"
	"fmt"
	"math"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/fixed"
)

// Input is a recorded signal as integer codes.
type Input struct {
	// RateHz is the signal's sample rate; it must be the chain's input
	// rate.
	RateHz float64
	// Bits is the width of the codes (two's complement, a code w standing
	// for w / 2^(Bits-1) of full scale), 1 to 32 (1: the codes -1 and 0
	// of a single-bit noise-shaped converter, as the chain takes them).
	Bits int
	// Paths holds one slice of codes for a real signal, I then Q for a
	// complex one, of equal length.
	Paths [][]int64
}

// Result is a signal run through a chain.
type Result struct {
	InputRateHz, OutputRateHz float64
	// InputBits and OutputBits are the chain's words; In holds the input
	// codes as the chain takes them (in its input word).
	InputBits, OutputBits int
	In                    [][]int64
	// Rescaled says the input codes were moved to the chain's input word
	// (a wider recording rounded to nearest, halves away from zero, and
	// saturated, as an ADC of that width would; a narrower one shifted up
	// exactly); Clipped counts the samples that saturated doing so.
	Rescaled bool
	Clipped  int
	// Out holds the bit-true output codes (OutputBits wide) per path;
	// Float the float chain's output in fractions of full scale, the same
	// structure and gains with unrounded taps (fixed.RunCodes).
	Out   [][]int64
	Float [][]float64
	// Widths is the word-length plan the run used.
	Widths *fixed.Widths
}

// MaxSamples caps the input per path (2^24 samples: for an I/Q recording
// the codes take 256 MiB, and the integer and float outputs up to 512 MiB
// more).
const MaxSamples = 1 << 24

// Run plans the word lengths of the designed chain c for spec (the same
// plan as report.json's: fixed.PlanChainContext with settings s) and runs
// the input through its integer and float data paths. The input's codes
// are moved to the chain's input word in place: Run owns in.Paths, and
// Result.In is the same memory (a recording of 2^24 I/Q samples is 256 MB
// of codes, held once). A complex chain
// takes one or two paths (a real recording is run as I with Q zero), a real
// chain one. ctx stops it between blocks.
func Run(ctx context.Context, spec chain.Spec, c *chain.Chain, s fixed.Settings, in Input) (*Result, error) {
	if c == nil || !c.Designed {
		return nil, fmt.Errorf("simulate: the chain has no designed taps")
	}
	if len(in.Paths) == 0 || len(in.Paths) > 2 || len(in.Paths[0]) == 0 {
		return nil, fmt.Errorf("simulate: the input has no samples")
	}
	if len(in.Paths) == 2 && !c.Complex {
		return nil, fmt.Errorf("simulate: the input has two channels (I/Q) but the spec's signal is real; set signal = \"complex\" or give one channel")
	}
	if len(in.Paths) == 2 && len(in.Paths[1]) != len(in.Paths[0]) {
		return nil, fmt.Errorf("simulate: the I and Q channels differ in length (%d and %d samples)", len(in.Paths[0]), len(in.Paths[1]))
	}
	if n := len(in.Paths[0]); n > MaxSamples {
		return nil, fmt.Errorf("simulate: the input has %d samples per channel; at most %d are run", n, MaxSamples)
	}
	if in.Bits < 1 || in.Bits > 32 {
		return nil, fmt.Errorf("simulate: %d-bit input codes: the width must lie in [1, 32] bits", in.Bits)
	}
	if r := c.InputRate; !(math.Abs(in.RateHz-r) <= 1e-9*r) {
		return nil, fmt.Errorf("simulate: the input's sample rate is %.10g Hz, the spec's input_rate %.10g Hz", in.RateHz, r)
	}
	cas, _, err := fixed.FromChain(spec, c)
	if err != nil {
		return nil, err
	}
	w, _, err := fixed.PlanChainContext(ctx, spec, c, s)
	if err != nil {
		return nil, err
	}
	res := &Result{
		InputRateHz: c.InputRate, OutputRateHz: c.OutputRate(),
		InputBits: w.InputBits, OutputBits: w.Stages[len(w.Stages)-1].OutputBits,
		Rescaled: in.Bits != w.InputBits, Widths: w,
	}
	paths := in.Paths
	if c.Complex && len(paths) == 1 {
		paths = [][]int64{paths[0], make([]int64, len(paths[0]))}
	}
	for _, x := range paths {
		res.Clipped += toWord(x, in.Bits, w.InputBits)
		res.In = append(res.In, x)
		codes, fl, err := fixed.RunCodes(ctx, cas, w, x)
		if err != nil {
			return nil, err
		}
		res.Out, res.Float = append(res.Out, codes), append(res.Float, fl)
	}
	return res, nil
}

// toWord moves codes of from bits to the chain's to-bit input word, in
// place: exactly when the word is as wide or wider (a shift up); to a
// 1-bit word, a single-bit modulator's, by the sign (the codes 0 for the
// level at plus full scale and -1 for minus, package sigmadelta's, none
// saturated); else rounded to nearest with halves away from zero and
// saturated, which is what fixed.ADC does to the fractions of full scale
// (a power-of-two scaling, exact), in integer arithmetic. It returns the
// count of saturated samples.
func toWord(x []int64, from, to int) int {
	switch {
	case from == to:
		return 0
	case to == 1:
		for i, v := range x {
			x[i] = v >> 63 // -1 below zero, else 0
		}
		return 0
	case to > from:
		for i, v := range x {
			x[i] = v << uint(to-from)
		}
		return 0
	}
	s := uint(from - to)
	half := int64(1) << (s - 1)
	hi, lo := int64(1)<<(to-1)-1, -(int64(1) << (to - 1))
	clipped := 0
	for i, v := range x {
		var q int64
		if v >= 0 {
			q = (v + half) >> s
		} else {
			q = -((-v + half) >> s)
		}
		switch {
		case q > hi:
			q, clipped = hi, clipped+1
		case q < lo:
			q, clipped = lo, clipped+1
		}
		x[i] = q
	}
	return clipped
}
