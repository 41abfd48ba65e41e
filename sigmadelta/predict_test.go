package sigmadelta

import (
	"errors"
	"math"
	"testing"
)

// rates at oversampling ratio osr (F0/(2 fb)) for a modulator at 1 Hz and
// an ideal brick-wall chain.
func osrRates(osr float64) Rates {
	fb := 0.5 / osr
	return Rates{InputRate: 1, OutputRate: 2.5 * fb, Passband: fb}
}

// The in-band noise of (1 - z^-1)^N against the textbook's closed form,
// s2 pi^2N / ((2N+1) OSR^(2N+1)) (Schreier and Temes, ch. 2, from memory):
// the closed form is the small-angle approximation, so the two agree
// within (pi/OSR)^2-sized terms: 0.02 dB at OSR 64, 0.002 dB at OSR 256.
func TestDifferentiatorInBandNoise(t *testing.T) {
	for _, osr := range []float64{64, 256} {
		tol := 0.02
		if osr == 256 {
			tol = 0.002
		}
		for order := 1; order <= 6; order++ {
			got, err := noise(Differentiator(order), 1.0/3, nil, osrRates(osr))
			if err != nil {
				t.Fatal(err)
			}
			want := InBandNoiseDifferentiator(order, osr, 1.0/3)
			if d := 10 * math.Log10(got.InBand/want); math.Abs(d) > tol {
				t.Errorf("order %d OSR %g: in-band noise %.6g, closed form %.6g (%.4f dB apart, want within %g)", order, osr, got.InBand, want, d, tol)
			}
		}
	}
}

// The textbook SQNR of an order-N modulator with a B-bit quantiser and the
// NTF (1 - z^-1)^N, SQNR = 6.02 B + 1.76 - 10 log10(pi^2N/(2N+1)) +
// (2N+1) 10 log10(OSR) for a full-scale sine of amplitude 2^(B-1) steps
// (from memory; the 6.02 and 1.76 written exactly, 20 log10 2 and
// 10 log10 1.5), against the package's conventions: the step 2/(2^B - 1),
// full scale at the outermost level, the tone ToneDBFS below it. The
// formula's tone is 20 log10(2^B / (2^B - 1)) - ToneDBFS dB louder.
func TestTextbookSQNR(t *testing.T) {
	const osr = 128
	for bits := 1; bits <= MaxBits; bits++ {
		for order := 1; order <= 5; order++ {
			m := Modulator{Order: order, Bits: bits, SNRDB: 1}
			n, err := noise(Differentiator(order), m.NoiseVariance(), nil, osrRates(osr))
			if err != nil {
				t.Fatal(err)
			}
			got := snrDB(n.InBand)
			l := float64(order)
			book := 20*math.Log10(2)*float64(bits) + 10*math.Log10(1.5) - 10*math.Log10(math.Pow(math.Pi, 2*l)/(2*l+1)) + (2*l+1)*10*math.Log10(osr)
			want := book - 20*math.Log10(math.Ldexp(1, bits)/float64(m.Levels())) + ToneDBFS
			if math.Abs(got-want) > 0.01 {
				t.Errorf("order %d, %d bits, OSR %d: SNR %.4f dB, textbook %.4f dB", order, bits, osr, got, want)
			}
		}
	}
}

// Noise integrates to IntegrationTol: against a midpoint sum on 2^16
// points per band (an independent dense evaluation) through a chain-like
// response with ripples (a sinc^5 CIC and a cosine ripple).
func TestNoiseDense(t *testing.T) {
	m := Modulator{Order: 4, Bits: 1, SNRDB: 80}
	r := Rates{InputRate: 64, OutputRate: 1, Passband: 0.45}
	gain := func(g float64) float64 {
		x := math.Pi * g / 64 * 16
		h := 1.0
		if x != 0 {
			h = math.Pow(math.Sin(x)/(16*math.Sin(x/16)), 5)
		}
		return math.Abs(h) * (1.1 + math.Cos(37*g))
	}
	got, err := m.Noise(gain, r)
	if err != nil {
		t.Fatal(err)
	}
	ntf, _ := m.NTF()
	var in, al float64
	for k, b := range r.bands() {
		const n = 1 << 16
		h := (b[1] - b[0]) / n
		var s float64
		for i := range n {
			g := b[0] + (float64(i)+0.5)*h
			v := ntf.Gain(g/64) * gain(g) / gain(0)
			s += v * v
		}
		s *= h * m.NoiseVariance() / 32
		if k == 0 {
			in = s
		} else {
			al += s
		}
	}
	for _, c := range []struct {
		name      string
		got, want float64
	}{{"in band", got.InBand, in}, {"aliases", got.Aliases, al}} {
		if math.Abs(c.got/c.want-1) > 1e-6 {
			t.Errorf("%s: %.10g, dense sum %.10g", c.name, c.got, c.want)
		}
	}
}

// The mask: never below the requirement it states (checked densely), and
// a chain whose alias gain is exactly the mask's everywhere (in band 1)
// has a predicted SNR at or above the target, within 1 dB of it (the
// margins the mask adds: its floor, its raise over the chords).
func TestMaskMeetsTarget(t *testing.T) {
	for _, c := range []struct {
		m         Modulator
		r         Rates
		protected float64
	}{
		{Modulator{Order: 4, Bits: 1, SNRDB: 88}, Rates{3.072e6, 48e3, 20e3}, 20e3},
		{Modulator{Order: 2, Bits: 3, SNRDB: 70}, Rates{1.024e6, 32e3, 10e3}, 12e3},
		{Modulator{Order: 5, Bits: 1, SNRDB: 95, Zeros: OptimalZeros(5, 20e3/6.144e6)}, Rates{6.144e6, 48e3, 20e3}, 20e3},
	} {
		mask, err := c.m.Mask(c.r, c.protected, 0.1)
		if err != nil {
			t.Fatal(err)
		}
		gain := func(g float64) float64 {
			if g <= c.r.Passband {
				return 1
			}
			return math.Pow(10, -mask.At(g)/20)
		}
		snr, err := c.m.PredictedSNR(gain, c.r)
		if err != nil {
			t.Fatal(err)
		}
		if snr < c.m.SNRDB-0.01 || snr > c.m.SNRDB+1 {
			t.Errorf("%v: a chain on the mask predicts %.3f dB for a target of %g dB", c.m, snr, c.m.SNRDB)
		}
		// Below the mask nowhere: the requirement, recomputed.
		ntf, _ := c.m.NTF()
		in, _ := c.m.Noise(func(g float64) float64 { return b2f(g <= c.r.Passband) }, c.r)
		a := ToneAmplitude()
		budget := a*a/2*math.Pow(10, -c.m.SNRDB/10) - in.InBand*math.Pow(10, 0.01)
		var w float64
		for k, b := range c.r.bands() {
			if k > 0 {
				w += b[1] - b[0]
			}
		}
		for g := c.r.OutputRate - c.protected; g <= c.r.InputRate/2; g += c.r.InputRate / 2 / 20000 {
			v := ntf.Gain(g / c.r.InputRate)
			need := 10 * math.Log10(v*v*c.m.NoiseVariance()/(c.r.InputRate/2)*w/budget)
			if mask.At(g) < need {
				t.Errorf("%v: mask(%g) = %.4f dB, below the %.4f dB needed", c.m, g, mask.At(g), need)
				break
			}
		}
	}
}

func b2f(b bool) float64 {
	if b {
		return 1
	}
	return 0
}

// A target beyond the modulator says what it can reach.
func TestMaskUnreachable(t *testing.T) {
	m := Modulator{Order: 4, Bits: 1, SNRDB: 120}
	r := Rates{3.072e6, 48e3, 20e3}
	_, err := m.Mask(r, 20e3, 0.1)
	var me *MaskError
	if !errors.As(err, &me) {
		t.Fatalf("got %v, want a *MaskError", err)
	}
	ach, _ := m.AchievableSNR(r)
	if math.Abs(me.AchievableDB-(ach-0.1)) > 0.01 || me.Needed != 0 {
		t.Errorf("achievable %.3f dB (with the 0.1 dB ripple's lift), want %.3f; error %v", me.AchievableDB, ach-0.1, err)
	}
}
