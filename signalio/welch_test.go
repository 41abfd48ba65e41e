package signalio

import (
	"context"
	"errors"
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// TestWelchScipy compares Welch with scipy.signal.welch (testdata/welch.json,
// made by gen_golden.py): Blackman-Harris and Hann, even and odd segment
// lengths, a real signal's one-sided and an I/Q signal's two-sided
// spectrum. Bins within 0.001 dB wherever scipy's level is above -200 dBFS
// (deeper bins hold rounding noise of the FFTs).
func TestWelchScipy(t *testing.T) {
	var w struct {
		Bits  int     `json:"bits"`
		Rate  float64 `json:"rate"`
		I     []int64 `json:"i"`
		Q     []int64 `json:"q"`
		Cases []struct {
			Window   string    `json:"window"`
			Nperseg  int       `json:"nperseg"`
			Channels int       `json:"channels"`
			Hz       []float64 `json:"hz"`
			DB       []float64 `json:"db"`
		} `json:"cases"`
	}
	loadJSON(t, "welch.json", &w)
	if len(w.Cases) != 6 {
		t.Fatalf("welch.json has %d cases, want 6", len(w.Cases))
	}
	for _, c := range w.Cases {
		s := &Signal{RateHz: w.Rate, Bits: w.Bits, Samples: [][]int64{w.I}}
		if c.Channels == 2 {
			s.Samples = append(s.Samples, w.Q)
		}
		win := map[string]Window{"blackmanharris": BlackmanHarris, "hann": Hann}[c.Window]
		sp, err := Welch(s, WelchOptions{Segment: c.Nperseg, Window: win})
		if err != nil {
			t.Fatal(err)
		}
		if len(sp.DB) != len(c.DB) {
			t.Fatalf("%s %d, %d ch: %d bins, scipy %d", c.Window, c.Nperseg, c.Channels, len(sp.DB), len(c.DB))
		}
		var worst float64
		for i := range c.DB {
			if math.Abs(sp.Hz[i]-c.Hz[i]) > 1e-6 {
				t.Fatalf("%s %d: bin %d at %v Hz, scipy %v", c.Window, c.Nperseg, i, sp.Hz[i], c.Hz[i])
			}
			if c.DB[i] > -200 {
				worst = math.Max(worst, math.Abs(sp.DB[i]-c.DB[i]))
			}
		}
		t.Logf("%s, segment %d, %d channels: worst %.2g dB from scipy", c.Window, c.Nperseg, c.Channels, worst)
		if worst > 1e-3 {
			t.Errorf("%s, segment %d, %d channels: %.2g dB from scipy.signal.welch, want under 0.001", c.Window, c.Nperseg, c.Channels, worst)
		}
		if want := (len(w.I)-c.Nperseg)/(c.Nperseg-c.Nperseg/2) + 1; sp.Averages != want {
			t.Errorf("%s %d: %d averages, want %d", c.Window, c.Nperseg, sp.Averages, want)
		}
	}
}

// TestWelchFullScale checks the scaling: a full-scale sine (real) or
// complex tone (I/Q) on a bin centre reads 0 dBFS in its peak bin within
// 0.1 dB, for both windows, 16- and 24-bit codes, even at the cap on
// segment counts; off a bin centre it reads no more than the window's
// scalloping loss low (0.83 dB Blackman-Harris, 1.42 dB Hann; Harris
// 1978, from memory). Noise bandwidth: 2.00 and 1.50 bins (same source).
func TestWelchFullScale(t *testing.T) {
	for _, tc := range []struct {
		win       Window
		scallop   float64
		enbwBins  float64
		bits, seg int
		complex   bool
	}{
		{BlackmanHarris, 0.83, 2.004, 16, 1024, false},
		{BlackmanHarris, 0.83, 2.004, 24, 4096, true},
		{Hann, 1.42, 1.5, 16, 512, false},
		{Hann, 1.42, 1.5, 24, 256, true},
	} {
		const n, rate = 1 << 15, 1e6
		for _, offBin := range []float64{0, 0.5} {
			bin := 37.0 + offBin
			f0 := bin * rate / float64(tc.seg)
			fs := math.Ldexp(1, tc.bits-1)
			s := &Signal{RateHz: rate, Bits: tc.bits, Samples: [][]int64{make([]int64, n)}}
			if tc.complex {
				s.Samples = append(s.Samples, make([]int64, n))
			}
			for i := range n {
				ph := 2 * math.Pi * f0 * float64(i) / rate
				// Round to codes; +fs does not fit, so clip at fs-1
				// (a 0.0003 dB error at 16 bits).
				s.Samples[0][i] = int64(math.Min(math.Round(fs*math.Cos(ph)), fs-1))
				if tc.complex {
					s.Samples[1][i] = int64(math.Min(math.Round(fs*math.Sin(ph)), fs-1))
				}
			}
			sp, err := Welch(s, WelchOptions{Segment: tc.seg, Window: tc.win})
			if err != nil {
				t.Fatal(err)
			}
			peak, at := math.Inf(-1), 0.0
			for i, v := range sp.DB {
				if v > peak {
					peak, at = v, sp.Hz[i]
				}
			}
			t.Logf("%v, %d bits, segment %d, complex %v, %.1f bins: peak %.4f dBFS", tc.win, tc.bits, tc.seg, tc.complex, bin, peak)
			want, tol := 0.0, 0.1
			if offBin != 0 {
				want, tol = -tc.scallop, 0.02
			}
			if math.Abs(peak-want) > tol || math.Abs(at-f0) > rate/float64(tc.seg) {
				t.Errorf("%v, %d bits, segment %d, complex %v, %.1f bins: peak %.4f dBFS at %v Hz, want %.2f ± %.2f at %v", tc.win, tc.bits, tc.seg, tc.complex, bin, peak, at, want, tol, f0)
			}
			if got := sp.RBWHz / (rate / float64(tc.seg)); math.Abs(got-tc.enbwBins) > 0.01 {
				t.Errorf("%v: noise bandwidth %.4f bins, want %.3f", tc.win, got, tc.enbwBins)
			}
		}
	}
}

// TestWelchNoise checks the noise level against the quantisation-noise
// formula: uniform noise of one code step has power 1/12 of a code^2
// (common practice), so its level per bin is that over the full-scale
// sine's power times the bin's share, RBW / (rate / 2) for a real signal.
func TestWelchNoise(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 5))
	const n, bits, rate, seg = 1 << 18, 16, 1e6, 2048
	s := &Signal{RateHz: rate, Bits: bits, Samples: [][]int64{make([]int64, n)}}
	// White noise of standard deviation 100 codes.
	for i := range s.Samples[0] {
		s.Samples[0][i] = int64(math.Round(100 * r.NormFloat64()))
	}
	sp, err := Welch(s, WelchOptions{Segment: seg})
	if err != nil {
		t.Fatal(err)
	}
	var mean float64
	for _, v := range sp.DB[10 : len(sp.DB)-10] {
		mean += math.Pow(10, v/10)
	}
	mean /= float64(len(sp.DB) - 20)
	fs := math.Ldexp(1, bits-1)
	power := (100*100 + 1.0/12) / (fs * fs / 2) // relative to a full-scale sine
	want := 10 * math.Log10(power*sp.RBWHz/(rate/2))
	t.Logf("white noise: %.3f dBFS per bin, formula %.3f", 10*math.Log10(mean), want)
	if got := 10 * math.Log10(mean); math.Abs(got-want) > 0.1 {
		t.Errorf("white noise reads %.3f dBFS per bin, want %.3f", got, want)
	}
}

func TestWelchErrors(t *testing.T) {
	ok := &Signal{RateHz: 1, Bits: 16, Samples: [][]int64{make([]int64, 100)}}
	tests := []struct {
		s    *Signal
		opt  WelchOptions
		want string
	}{
		{ok, WelchOptions{Segment: 4}, "segment of 4 points"},
		{ok, WelchOptions{Segment: MaxSegment + 1}, "segment of 1048577"},
		{ok, WelchOptions{Window: 7}, "window Window(7)"},
		{&Signal{RateHz: 1, Bits: 16, Samples: [][]int64{make([]int64, 7)}}, WelchOptions{}, "7 samples: too short"},
		{&Signal{RateHz: 0, Bits: 16, Samples: [][]int64{make([]int64, 70)}}, WelchOptions{}, "sample rate 0"},
	}
	for _, tt := range tests {
		if _, err := Welch(tt.s, tt.opt); err == nil || !strings.Contains(err.Error(), tt.want) {
			t.Errorf("Welch(%+v) error %v, want %q", tt.opt, err, tt.want)
		}
	}
	// A short signal is analysed in one segment of its own length, and
	// an all-zero one gives -Inf, never NaN.
	sp, err := Welch(ok, WelchOptions{})
	if err != nil || sp.Segment != 100 || sp.Averages != 1 || !math.IsInf(sp.DB[3], -1) {
		t.Errorf("100 zeros: %+v, %v; want one 100-point segment of -Inf", sp, err)
	}
}

// BenchmarkWelchCap measures Welch at the reader's cap: 2^24 frames,
// real and I/Q, 4096-point segments.
func BenchmarkWelchCap(b *testing.B) {
	for _, ch := range []int{1, 2} {
		r := rand.New(rand.NewPCG(1, 1))
		s := randomSignal(r, 16, ch, MaxFrames)
		b.Run([]string{"", "real", "iq"}[ch], func(b *testing.B) {
			for range b.N {
				if _, err := Welch(s, WelchOptions{}); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// WelchContext stops on its context: a cancelled one returns its error at
// once, for real and I/Q signals (Welch, which TestWelchScipy checks, is
// WelchContext with a context that is never done).
func TestWelchContext(t *testing.T) {
	for _, ch := range []int{1, 2} {
		s := &Signal{RateHz: 1e6, Bits: 16}
		for c := 0; c < ch; c++ {
			x := make([]int64, 1<<16)
			for i := range x {
				x[i] = int64((i*7919+c*104729)%2001 - 1000)
			}
			s.Samples = append(s.Samples, x)
		}
		ctx, cancel := context.WithCancel(context.Background())
		cancel()
		if _, err := WelchContext(ctx, s, WelchOptions{Segment: 256}); !errors.Is(err, context.Canceled) {
			t.Errorf("%d channels, cancelled: err = %v", ch, err)
		}
	}
}
