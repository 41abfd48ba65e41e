package chain

import (
	"errors"
	"math"
	"strings"
	"testing"
)

func goodSpec() Spec {
	return Spec{InputRate: 64e6, OutputRate: 250e3, Passband: 100e3, RippleDB: 0.1, RejectionDB: 90}
}

func TestNormalizeDefaults(t *testing.T) {
	s, err := goodSpec().Normalize()
	if err != nil {
		t.Fatal(err)
	}
	// Defaults from docs/design.md §3: fa = fp, fs = FK - fa; 16/24-bit words.
	if s.Protected != 100e3 || s.Stopband != 150e3 || s.InputBits != 16 || s.OutputBits != 24 || s.CoefBits != 0 {
		t.Errorf("defaults: %+v", s)
	}
	if d := s.Decimation(); d != 256 {
		t.Errorf("Decimation = %d, want 256", d)
	}
	// A ratio typed in decimal that is integral up to rounding is accepted.
	s2 := Spec{InputRate: 122.88e6, OutputRate: 122.88e6 / 3, Passband: 1e6, RippleDB: 1, RejectionDB: 60}
	if _, err := s2.Normalize(); err != nil {
		t.Error(err)
	}
}

func TestNormalizeErrors(t *testing.T) {
	mod := func(f func(*Spec)) Spec { s := goodSpec(); f(&s); return s }
	for _, tc := range []struct {
		spec  Spec
		field string
		rule  string
	}{
		{mod(func(s *Spec) { s.InputRate = 0 }), "InputRate", "above 0"},
		{mod(func(s *Spec) { s.InputRate = math.Inf(1) }), "InputRate", "finite"},
		{mod(func(s *Spec) { s.OutputRate = math.NaN() }), "OutputRate", "finite"},
		{mod(func(s *Spec) { s.OutputRate = s.InputRate }), "OutputRate", "must differ from InputRate"},
		// Below it, any ratio is a fraction (64 MHz / 250.5 kHz =
		// 128000/501; TestFraction), but one that rounds to 1 is refused
		// (found by FuzzNormalize: 0.30000000000000004 over 0.3).
		{mod(func(s *Spec) { s.OutputRate = s.InputRate / (1 + 1e-12) }), "OutputRate", "is taken as the ratio 1/1"},
		{mod(func(s *Spec) { s.OutputRate, s.RatioTolerancePPM = s.InputRate/1.0005, 1000 }), "OutputRate", "is taken as the ratio 1/1"},
		{mod(func(s *Spec) { s.RatioTolerancePPM = 2000 }), "RatioTolerancePPM", "[0, 1000] ppm"},
		{mod(func(s *Spec) { s.Passband = 125e3 }), "Passband", "OutputRate/2"},
		{mod(func(s *Spec) { s.Passband = -1 }), "Passband", "(0,"},
		{mod(func(s *Spec) { s.Protected = 90e3 }), "Protected", "[Passband"},
		{mod(func(s *Spec) { s.Protected = 130e3 }), "Protected", "OutputRate/2"},
		{mod(func(s *Spec) { s.Stopband = 100e3 }), "Stopband", "(Passband"},
		{mod(func(s *Spec) { s.Stopband = 151e3 }), "Stopband", "OutputRate - Protected"},
		{mod(func(s *Spec) { s.RippleDB = 0 }), "RippleDB", "(0, 10] dB"},
		{mod(func(s *Spec) { s.RippleDB = 10.5 }), "RippleDB", "(0, 10] dB"},
		{mod(func(s *Spec) { s.RejectionDB = 151 }), "RejectionDB", "(0, 150]"},
		{mod(func(s *Spec) { s.InputBits = 1 }), "InputBits", "[2, 64]"},
		{mod(func(s *Spec) { s.OutputBits = 65 }), "OutputBits", "[2, 64]"},
		{mod(func(s *Spec) { s.CoefBits = -3 }), "CoefBits", "[2, 64]"},
	} {
		_, err := tc.spec.Normalize()
		var se *SpecError
		if !errors.As(err, &se) {
			t.Errorf("%s: want a *SpecError, got %v", tc.field, err)
			continue
		}
		if se.Field != tc.field || !strings.Contains(err.Error(), tc.rule) || !strings.Contains(err.Error(), tc.field+" = ") {
			t.Errorf("%s: error %q does not name field, value and rule %q", tc.field, err, tc.rule)
		}
	}
}

func TestRippleConversion(t *testing.T) {
	// ripple_db = 20 log10((1+dp)/(1-dp)) (docs/design.md §2): dp = 0.01 gives
	// 20 log10(1.01/0.99) = 0.1737236 dB (hand computation).
	if got := DevToRipple(0.01); math.Abs(got-0.1737236) > 1e-6 {
		t.Errorf("DevToRipple(0.01) = %v", got)
	}
	for _, r := range []float64{0.001, 0.1, 1, 3} {
		if got := DevToRipple(RippleToDev(r)); math.Abs(got-r) > 1e-12*math.Max(1, r) {
			t.Errorf("round trip %v -> %v", r, got)
		}
	}
}

// FuzzNormalize: any spec either normalises to one that keeps every rule of
// docs/design.md §3, or gives a *SpecError; never a panic.
// Rates beyond what float64 arithmetic carries through every figure are
// refused naming the field and the bound (rates near 1e308 Hz used to panic
// in a grid sized from them, or give a non-finite bit-true SNR).
func TestNormalizeRateBounds(t *testing.T) {
	for _, tc := range []struct {
		s     Spec
		field string
		bound string
	}{
		{Spec{InputRate: 1e308, OutputRate: 1e306, Passband: 3e305, RippleDB: 0.2, RejectionDB: 90}, "InputRate", "at most 1e30 Hz"},
		{Spec{InputRate: 1.7e308, OutputRate: 1.7e306, Passband: 5e305, RippleDB: 0.2, RejectionDB: 90}, "InputRate", "at most 1e30 Hz"},
		{Spec{InputRate: 1e-29, OutputRate: 1e-31, Passband: 3e-32, RippleDB: 0.2, RejectionDB: 90}, "OutputRate", "at least 1e-30 Hz"},
	} {
		_, err := tc.s.Normalize()
		var se *SpecError
		if !errors.As(err, &se) || se.Field != tc.field || !strings.Contains(se.Rule, tc.bound) {
			t.Errorf("%+v: err = %v, want a SpecError on %s saying %q", tc.s, err, tc.field, tc.bound)
		}
	}
	// The bounds themselves are accepted.
	for _, s := range []Spec{
		{InputRate: 1e30, OutputRate: 1e28, Passband: 3e27, RippleDB: 0.2, RejectionDB: 90},
		{InputRate: 1e-28, OutputRate: 1e-30, Passband: 3e-31, RippleDB: 0.2, RejectionDB: 90},
	} {
		if _, err := s.Normalize(); err != nil {
			t.Errorf("%+v: %v", s, err)
		}
	}
}

func FuzzNormalize(f *testing.F) {
	f.Add(64e6, 250e3, 100e3, 0.0, 0.0, 0.1, 90.0, 0, 0, 0)
	f.Add(10e3, 100.0, 45.0, 50.0, 50.0, 0.17, 60.0, 12, 16, 18)
	f.Add(1.0, 0.3, 0.1, 0.0, 0.0, 1.0, 10.0, 2, 64, 0)
	f.Add(1.0, 6.0, 0.4, 0.0, 0.0, 1.0, 10.0, 2, 64, 0)       // an interpolation spec
	f.Add(100e6, 3.84e6, 1.5e6, 0.0, 0.0, 0.1, 80.0, 0, 0, 0) // a fractional ratio, 625/24
	f.Fuzz(func(t *testing.T, in, out, fp, fa, fs, rip, rej float64, ib, ob, cb int) {
		s := Spec{InputRate: in, OutputRate: out, Passband: fp, Protected: fa, Stopband: fs,
			RippleDB: rip, RejectionDB: rej, InputBits: ib, OutputBits: ob, CoefBits: cb}
		n, err := s.Normalize()
		if err != nil {
			var se *SpecError
			if !errors.As(err, &se) {
				t.Fatalf("not a *SpecError: %v", err)
			}
			return
		}
		// The band rules hold on the channel side in both directions: on
		// the decimation view, whose output is the channel.
		v := n.DecimationView()
		fk := v.OutputRate
		// The ratio is an integer of at least 2 (Ratio gives it) or a
		// fraction p/q above 1 (Fraction; Ratio is then 0).
		num, den := n.Fraction()
		integerOK := den == 1 && v.Decimation() >= 2 && v.Ratio() == n.Ratio() && n.Ratio() == num
		fractionOK := den > 1 && den <= MaxFractionDen && num > den && n.Ratio() == 0
		if !integerOK && !fractionOK || !(n.Passband > 0 && n.Passband < fk/2) || n.Protected < n.Passband ||
			n.Protected > fk/2 || n.Stopband <= n.Passband || n.Stopband > fk-n.Protected ||
			!(n.RippleDB > 0) || !(n.RejectionDB > 0 && n.RejectionDB <= MaxRejectionDB) ||
			n.InputBits < 2 || n.OutputBits > 64 {
			t.Fatalf("normalised spec breaks a rule: %+v", n)
		}
	})
}

// TestNormalizeInterpolation: an output rate L times the input rate makes an
// interpolation spec whose band edges are on the channel side (the input);
// its DecimationView is the decimation spec with the rates swapped, and the
// two views undo each other.
func TestNormalizeInterpolation(t *testing.T) {
	// A fractional interpolation ratio is a fraction of the rates, as a
	// decimation's: 64.1 MHz / 250 kHz = 1282/5.
	if p, q := (Spec{InputRate: 250e3, OutputRate: 64.1e6}).Fraction(); p != 1282 || q != 5 {
		t.Errorf("64.1 MHz / 250 kHz: Fraction %d/%d", p, q)
	}
	up := Spec{InputRate: 250e3, OutputRate: 64e6, Passband: 100e3, RippleDB: 0.1, RejectionDB: 90}
	s, err := up.Normalize()
	if err != nil {
		t.Fatal(err)
	}
	// The defaults of the decimation spec with the rates swapped: fa = fp,
	// fs = F_channel - fa.
	if s.Protected != 100e3 || s.Stopband != 150e3 {
		t.Errorf("defaults: %+v", s)
	}
	if s.Direction() != Interpolate || s.Interpolation() != 256 || s.Decimation() != 1 || s.Ratio() != 256 {
		t.Errorf("direction %v, L %d, D %d, ratio %d", s.Direction(), s.Interpolation(), s.Decimation(), s.Ratio())
	}
	v := s.DecimationView()
	if v.InputRate != 64e6 || v.OutputRate != 250e3 || v.Direction() != Interpolate || v.Decimation() != 256 || v.Interpolation() != 256 {
		t.Errorf("view: %+v, D %d", v, v.Decimation())
	}
	if v.DecimationView() != v || v.SignalView() != s || s.SignalView() != s {
		t.Error("the views do not undo each other")
	}
	if nv, err := v.Normalize(); err != nil || nv != v {
		t.Errorf("a view normalises to itself: %+v, %v", nv, err)
	}
	if d, _ := goodSpec().Normalize(); d.Direction() != Decimate || d.DecimationView() != d || d.Interpolation() != 1 {
		t.Error("a decimation spec is its own view")
	}
	// The band rules hold on the channel side: the passband below half the
	// input rate, the stopband at most F_in - fa.
	for _, tc := range []struct {
		mod   func(*Spec)
		field string
		rule  string
	}{
		{func(s *Spec) { s.Passband = 130e3 }, "Passband", "InputRate/2 = 125000 Hz"},
		{func(s *Spec) { s.Stopband = 160e3 }, "Stopband", "InputRate - Protected = 150000 Hz"},
	} {
		in := up
		tc.mod(&in)
		_, err := in.Normalize()
		var se *SpecError
		if !errors.As(err, &se) || se.Field != tc.field || !strings.Contains(err.Error(), tc.rule) {
			t.Errorf("%s: error %v, want field %s and %q", tc.field, err, tc.field, tc.rule)
		}
	}
}

// MaxRejectionDB bounds the caller's target; a target raised inside the
// search (RejectionRaised) may pass it by up to RaiseHeadroomDB, flat or
// as a mask. A real interpolator's 6.02 dB for the images of DC at a
// 148 dB target was refused ("spec rejection = 154.02: must lie in (0,
// 150] dB"), which dropped every chain of a 148 dB transmit spec.
func TestRejectionRaisedPastCap(t *testing.T) {
	base := Spec{InputRate: 16e6, OutputRate: 1e6, Passband: 300e3, RippleDB: 0.1, RejectionDB: MaxRejectionDB}
	for _, db := range []float64{0.05, 6.02, RaiseHeadroomDB} {
		if _, err := base.RejectionRaised(db).Normalize(); err != nil {
			t.Errorf("150 dB raised by %g dB: %v", db, err)
		}
	}
	_, err := base.RejectionRaised(RaiseHeadroomDB + 0.01).Normalize()
	if err == nil || !strings.Contains(err.Error(), "raised by 30.01 dB inside the search to 180.01 dB") {
		t.Errorf("raised past the headroom: %v", err)
	}
	over := base
	over.RejectionDB = MaxRejectionDB + 0.01
	if _, err := over.RejectionRaised(-1).Normalize(); err == nil || !strings.Contains(err.Error(), "150.01") {
		t.Errorf("a caller's 150.01 dB lowered by 1 dB inside: %v (the caller's own value is refused)", err)
	}
	m, err := NewMask([]MaskPoint{{Hz: 0, DB: 120}, {Hz: 4e6, DB: 150}})
	if err != nil {
		t.Fatal(err)
	}
	masked := base
	masked.RejectionDB, masked.RejectionMask = 0, m
	r := masked.RejectionRaised(6.02)
	if got := r.RejectionMask.Max(); math.Abs(got-156.02) > 1e-12 || r.RejectionDB != got {
		t.Errorf("mask raised by 6.02 dB: largest point %g dB, RejectionDB %g", got, r.RejectionDB)
	}
	if _, err := r.Normalize(); err != nil {
		t.Errorf("mask raised by 6.02 dB: %v", err)
	}
	if _, err := m.Shifted(1); err == nil {
		t.Error("Mask.Shifted, the callers' rule, let a point pass 150 dB")
	}
}
