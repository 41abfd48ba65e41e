package sigmadelta

import (
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"strconv"
	"strings"
)

// Limits of a Modulator.
const (
	MaxOrder = 8
	MaxBits  = 5
	// DefaultOBG is the out-of-band gain when Modulator.OBG is zero: 1.5,
	// Lee's rule for a stable single-bit modulator (common practice).
	DefaultOBG = 1.5
	// MaxOBG bounds the out-of-band gain (and 2^Order does too: the
	// gain of (1 - z^-1)^Order at half the rate).
	MaxOBG = 8
	// ToneDBFS is the level of the test tone every SNR here refers to,
	// relative to the modulator's full scale (its outermost quantiser
	// level): -6 dBFS, within the stable input range of the usual
	// single-bit modulators (common practice).
	ToneDBFS = -6
)

// Modulator is a noise-shaped converter (a sigma-delta modulator) at the
// chain's input rate: its quantiser of Bits bits and its noise transfer
// function (NTF) of order Order. The zero value is not valid; see Check.
type Modulator struct {
	// Order is the NTF's order, 1..MaxOrder.
	Order int
	// Bits is the quantiser's width, 1..MaxBits: 2^Bits levels, mid-rise,
	// uniformly spaced, the outermost at +-1 (full scale).
	Bits int
	// SNRDB is the in-band target: a ToneDBFS tone over the noise in
	// [0, passband] at the chain's output (Mask).
	SNRDB float64
	// Zeros are the NTF's zeros as frequencies relative to the modulator
	// rate, in [0, 1/2): each above 0 a conjugate pair on the unit circle,
	// each 0 one zero at DC; together they make Order zeros. Nil puts
	// every zero at DC.
	Zeros []float64
	// OBG is |NTF| at half the modulator rate, in (1, min(MaxOBG,
	// 2^Order)]; zero means DefaultOBG.
	OBG float64
}

// Check returns an error naming the field and the rule a value breaks.
func (m Modulator) Check() error {
	switch {
	case m.Order < 1 || m.Order > MaxOrder:
		return fmt.Errorf("sigmadelta: Order = %d: must lie in [1, %d]", m.Order, MaxOrder)
	case m.Bits < 1 || m.Bits > MaxBits:
		return fmt.Errorf("sigmadelta: Bits = %d: must lie in [1, %d]", m.Bits, MaxBits)
	case !(m.SNRDB > 0) || m.SNRDB > 300:
		return fmt.Errorf("sigmadelta: SNRDB = %g: must lie in (0, 300] dB", m.SNRDB)
	}
	obg := m.obg()
	if !(obg > 1) || obg > math.Min(MaxOBG, math.Ldexp(1, m.Order)) {
		return fmt.Errorf("sigmadelta: OBG = %g: must lie in (1, %g] (at most 2^Order and %d)", obg, math.Min(MaxOBG, math.Ldexp(1, m.Order)), MaxOBG)
	}
	if m.Zeros != nil {
		n := 0
		for i, f := range m.Zeros {
			if !(f >= 0 && f < 0.5) {
				return fmt.Errorf("sigmadelta: Zeros[%d] = %g: must lie in [0, 1/2) of the modulator rate", i, f)
			}
			n++
			if f > 0 {
				n++
			}
		}
		if n != m.Order {
			return fmt.Errorf("sigmadelta: Zeros make %d NTF zeros (a frequency above 0 a conjugate pair, 0 one zero at DC); Order is %d", n, m.Order)
		}
	}
	return nil
}

func (m Modulator) obg() float64 {
	if m.OBG == 0 {
		return DefaultOBG
	}
	return m.OBG
}

// NTF returns the modulator's noise transfer function: the zeros at
// Zeros (or DC) and a Butterworth highpass denominator whose corner makes
// |NTF| at half the rate equal OBG (see designNTF).
func (m Modulator) NTF() (NTF, error) {
	if err := m.Check(); err != nil {
		return NTF{}, err
	}
	n, err := designNTF(m.Order, m.Zeros, m.obg())
	if err != nil {
		return NTF{}, fmt.Errorf("sigmadelta: %w", err)
	}
	return n, nil
}

// Levels returns the number of quantiser levels less one, 2^Bits - 1: the
// outermost level is +-1 and the step 2/Levels.
func (m Modulator) Levels() int { return 1<<m.Bits - 1 }

// Step returns the quantiser's step in full-scale units, 2/(2^Bits - 1).
func (m Modulator) Step() float64 { return 2 / float64(m.Levels()) }

// NoiseVariance returns the quantisation noise's variance in full-scale
// units squared, step^2/12: the quantiser's error taken as white and
// uniform over one step (the linear model, common practice; a single-bit
// quantiser's gain is not defined by its levels, and simulations of such
// modulators depart from the model by a dB or two, which the tests state).
func (m Modulator) NoiseVariance() float64 { s := m.Step(); return s * s / 12 }

// ToneAmplitude returns the test tone's amplitude in full-scale units,
// 10^(ToneDBFS/20).
func ToneAmplitude() float64 { return math.Pow(10, ToneDBFS/20.0) }

// WordScale is the factor from the modulator's full scale to the input
// word's: the codes c of a Bits-bit two's-complement word stand for the
// levels (2c + 1)/(2^Bits - 1), so the word's full scale, 2^(Bits-1)
// codes, is 2^Bits/(2^Bits - 1) of the modulator's, and an input u (in the
// modulator's full scale) is u (2^Bits - 1)/2^Bits of the word's, offset
// by -1/2^Bits (half a code: the mid-rise levels sit between codes).
func (m Modulator) WordScale() float64 {
	return float64(m.Levels()) / math.Ldexp(1, m.Bits)
}

// ToneWordDBFS returns the test tone's level relative to the input word's
// full scale: ToneDBFS + 20 log10(WordScale()).
func (m Modulator) ToneWordDBFS() float64 {
	return ToneDBFS + 20*math.Log10(m.WordScale())
}

// String describes the modulator in a few words, for reports.
func (m Modulator) String() string {
	var b strings.Builder
	fmt.Fprintf(&b, "order-%d %d-bit error-feedback sigma-delta modulator, NTF zeros ", m.Order, m.Bits)
	if m.Zeros == nil {
		b.WriteString("at DC")
	} else {
		var fs []string
		for _, f := range m.Zeros {
			fs = append(fs, strconv.FormatFloat(f, 'g', 6, 64))
		}
		b.WriteString("at " + strings.Join(fs, ", ") + " of the rate")
	}
	fmt.Fprintf(&b, ", out-of-band gain %g", m.obg())
	return b.String()
}

// Encoder is a simulated modulator: an error-feedback structure realising
// the NTF with a Bits-bit quantiser (see NewEncoder). It holds the loop's
// state between calls of Encode, so a signal may be encoded in blocks.
type Encoder struct {
	m    Modulator
	lev  float64 // 2^Bits - 1
	in   float64 // word full scale to modulator full scale, 1/WordScale
	secs []section
}

// section is one first- or second-order section of the NTF, with monic
// numerator and denominator, in transposed direct form II.
type section struct {
	b1, b2, a1, a2 float64
	s1, s2         float64
}

// unstableBound is the loop-filter output, in full-scale units, beyond
// which the simulation calls the modulator unstable: a stable one keeps it
// within a few full scales.
const unstableBound = 1e3

// NewEncoder returns a simulated modulator in its initial state: the
// error-feedback structure (the quantiser's error e fed back through
// NTF - 1, v = u + (NTF - 1) e, y = Q(v), so that y = u + NTF e exactly;
// the textbook error-feedback modulator, from memory), its NTF as a
// cascade of second-order sections (first-order for an odd order's last)
// so that high orders stay well conditioned. seed sets a random initial
// quantisation error (uniform over one step) that the loop starts from;
// the same seed gives the same codes.
func (m Modulator) NewEncoder(seed uint64) (*Encoder, error) {
	ntf, err := m.NTF()
	if err != nil {
		return nil, err
	}
	e := &Encoder{m: m, lev: float64(m.Levels()), in: 1 / m.WordScale(), secs: sections(ntf)}
	rng := rand.New(rand.NewPCG(seed, 0x5d))
	e.feed((rng.Float64() - 0.5) * m.Step())
	return e, nil
}

// sections pairs the NTF's zeros and poles into real sections.
func sections(n NTF) []section {
	zq, zl := quadratics(n.Zeros)
	pq, pl := quadratics(n.Poles)
	var out []section
	for i := range zq {
		out = append(out, section{b1: zq[i][0], b2: zq[i][1], a1: pq[i][0], a2: pq[i][1]})
	}
	if zl != nil {
		out = append(out, section{b1: *zl, a1: *pl})
	}
	return out
}

// quadratics groups roots into real quadratics 1 + c1 z^-1 + c2 z^-2
// (conjugate pairs, then real roots two at a time) and, for an odd count,
// one linear factor 1 + c1 z^-1.
func quadratics(roots []complex128) (q [][2]float64, lin *float64) {
	var reals []float64
	for _, r := range roots {
		switch {
		case math.Abs(imag(r)) <= 1e-12*math.Max(1, cmplx.Abs(r)):
			reals = append(reals, real(r))
		case imag(r) > 0:
			q = append(q, [2]float64{-2 * real(r), real(r)*real(r) + imag(r)*imag(r)})
		}
	}
	for len(reals) >= 2 {
		a, b := reals[0], reals[1]
		q = append(q, [2]float64{-(a + b), a * b})
		reals = reals[2:]
	}
	if len(reals) == 1 {
		c := -reals[0]
		lin = &c
	}
	return q, lin
}

// feed passes one quantisation error e through the NTF's sections.
func (e *Encoder) feed(x float64) {
	for i := range e.secs {
		s := &e.secs[i]
		y := x + s.s1
		s.s1 = s.b1*x - s.a1*y + s.s2
		s.s2 = s.b2*x - s.a2*y
		x = y
	}
}

// Encode turns the input x, in fractions of the input word's full scale,
// into the modulator's codes, Bits-bit two's complement, in dst (at least
// len(x) long): the modulator's input is x/WordScale(), and code c stands
// for the level (2c + 1)/(2^Bits - 1), so c/2^(Bits-1) is x plus the
// shaped noise less half a code. It returns an error, and leaves the
// encoder unusable, when the loop goes unstable (its filter output beyond
// unstableBound full scales).
func (e *Encoder) Encode(dst []int64, x []float64) error {
	if len(dst) < len(x) {
		return fmt.Errorf("sigmadelta: Encode: %d codes for %d samples", len(dst), len(x))
	}
	for n, xv := range x {
		w := 0.0
		for i := range e.secs {
			w += e.secs[i].s1
		}
		v := xv*e.in + w
		if !(math.Abs(v) <= unstableBound) {
			return fmt.Errorf("sigmadelta: the simulated %s went unstable at sample %d (its loop filter's output reached %.3g full scales)", e.m, n, v)
		}
		// The nearest odd multiple of 1/lev, within +-1.
		l := 2*math.Floor(v*e.lev/2) + 1
		l = math.Max(-e.lev, math.Min(e.lev, l))
		dst[n] = int64(l-1) / 2
		e.feed(l/e.lev - v)
	}
	return nil
}

// Simulate encodes u, in the modulator's full scale, from a new encoder
// seeded with seed, and returns the output levels (in full scale, each
// (2c + 1)/(2^Bits - 1)) and the codes.
func (m Modulator) Simulate(u []float64, seed uint64) (levels []float64, codes []int64, err error) {
	e, err := m.NewEncoder(seed)
	if err != nil {
		return nil, nil, err
	}
	x := make([]float64, len(u))
	ws := m.WordScale()
	for i, v := range u {
		x[i] = v * ws
	}
	codes = make([]int64, len(u))
	if err := e.Encode(codes, x); err != nil {
		return nil, nil, err
	}
	levels = make([]float64, len(u))
	lev := float64(m.Levels())
	for i, c := range codes {
		levels[i] = float64(2*c+1) / lev
	}
	return levels, codes, nil
}
