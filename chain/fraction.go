package chain

import (
	"math"
	"strconv"
)

// Fractional ratios (package documentation, Fractional stages).
const (
	// MaxFractionDen bounds the denominator q of a fractional ratio p/q:
	// the polyphase stage that realises it exactly has up to q phases.
	MaxFractionDen = 1 << 16
	// MaxRatioTolerancePPM bounds Spec.RatioTolerancePPM: 0.1 %.
	MaxRatioTolerancePPM = 1000
)

// ratioTolerance is the relative tolerance within which the ratio of the
// spec's rates must be met: RatioTolerancePPM, or ratioTol (rates typed in
// decimal rarely divide exactly in binary).
func (s Spec) ratioTolerance() float64 {
	if s.RatioTolerancePPM > 0 {
		return s.RatioTolerancePPM * 1e-6
	}
	return ratioTol
}

// fractionOf returns the fraction p/q with the smallest denominator
// q <= MaxFractionDen within rel x of x > 0 (the simplest fraction in the
// interval, by continued fractions), and false when there is none.
func fractionOf(x, rel float64) (p, q int, ok bool) {
	if !(x > 0) || !finite(x) || x > math.MaxInt32 {
		return 0, 0, false
	}
	lo, hi := x*(1-rel), x*(1+rel)
	p, q, ok = simplest(lo, hi, 0)
	if !ok || q > MaxFractionDen || q < 1 {
		return 0, 0, false
	}
	if math.Abs(float64(p)/float64(q)-x) > rel*x*(1+1e-12) {
		return 0, 0, false
	}
	return p, q, true
}

// simplest returns the fraction with the smallest denominator in [lo, hi],
// 0 < lo <= hi, by the continued-fraction recursion: an integer when one
// lies in the interval, else fl + 1/y with y the simplest in
// [1/(hi-fl), 1/(lo-fl)]. The depth is bounded: a denominator beyond
// MaxFractionDen is reported as none.
func simplest(lo, hi float64, depth int) (p, q int, ok bool) {
	if depth > 64 || !(lo > 0) || hi < lo {
		return 0, 0, false
	}
	fl := math.Floor(lo)
	if fl == lo {
		return int(fl), 1, true
	}
	if fl+1 <= hi {
		return int(fl) + 1, 1, true
	}
	pp, qq, ok := simplest(1/(hi-fl), 1/(lo-fl), depth+1)
	if !ok || pp > MaxFractionDen {
		return 0, 0, false
	}
	// x = fl + qq/pp = (fl pp + qq)/pp
	return int(fl)*pp + qq, pp, true
}

// Fraction returns the spec's ratio, the high rate over the channel rate,
// as a reduced fraction num/den: (D, 1) for an integer ratio, and for any
// other the fraction with the smallest denominator within the ratio
// tolerance (RatioTolerancePPM, or 1e-9 of the ratio when it is zero):
// 100 MHz over 3.84 MHz is 625/24. It returns (0, 0) for a spec Normalize
// refuses for its rates.
func (s Spec) Fraction() (num, den int) {
	v := s.DecimationView()
	if !(v.OutputRate > 0) || !finite(v.InputRate) || !(v.InputRate > 0) {
		return 0, 0
	}
	ratio := v.InputRate / v.OutputRate
	if d := math.Round(ratio); math.Abs(ratio-d) <= ratioTol*ratio && d >= 1 && d <= math.MaxInt32 {
		return int(d), 1
	}
	p, q, ok := fractionOf(ratio, s.ratioTolerance())
	if !ok {
		return 0, 0
	}
	return p, q
}

// RealisedOutputRate returns the output rate the spec's ratio (Fraction)
// gives from its input rate: OutputRate itself, to within 1e-9, unless
// RatioTolerancePPM let the ratio move; 0 for a spec Normalize refuses
// for its rates.
func (s Spec) RealisedOutputRate() float64 {
	p, q := s.Fraction()
	if p == 0 || q == 0 {
		return 0
	}
	if s.Direction() == Interpolate {
		return s.SignalView().InputRate * float64(p) / float64(q)
	}
	return s.SignalView().InputRate * float64(q) / float64(p)
}

// Fractional says whether the spec's ratio is not an integer (Fraction's
// denominator is above 1): its chain then ends in a fractional stage.
func (s Spec) Fractional() bool {
	_, q := s.Fraction()
	return q > 1
}

// RatioString returns the ratio as report.json writes it: "D" for an
// integer ratio, "p/q" for a fractional one.
func (s Spec) RatioString() string {
	p, q := s.Fraction()
	if q <= 1 {
		return strconv.Itoa(p)
	}
	return strconv.Itoa(p) + "/" + strconv.Itoa(q)
}

// GCD returns the greatest common divisor of a and b (non-negative; 0 for
// two zeros): the one owner of the rule for the packages that reduce rate
// fractions.
func GCD(a, b int) int { return gcd(a, b) }

func gcd(a, b int) int {
	for b != 0 {
		a, b = b, a%b
	}
	if a < 0 {
		return -a
	}
	return a
}
