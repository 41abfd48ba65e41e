package chain

import (
	"math"
	"math/big"
	"slices"
)

// CICStage is a CIC decimator of order N, differential delay M, factor R.
// Its zero Form is the recursive CIC (integrators and combs).
type CICStage struct {
	N, M, R int
	// Form is how it is built: Recursive (the zero value) or NonRecursive
	// (see CICForm). The response is the same.
	Form CICForm
	// RegisterBits is, for the recursive form, the width of each of the 2N
	// registers (integrators then combs) as PruneCIC plans them for the
	// spec's output width: Hogenauer's (1981) pruning, each register keeping
	// the MSB of the full width Width. For the non-recursive form it is the
	// output width of each of its log2 R sub-stages (NonRecursiveBits).
	RegisterBits []int
	// GuardBits is how many bits PruneCIC put above Hogenauer's full width
	// Bin + ceil(N log2(R M)) so that no input can wrap the output (0 when
	// nothing is pruned).
	GuardBits int

	// InputBits is the width of the samples entering the CIC.
	InputBits int
	// OutputBits is the width of the samples it delivers: the full register
	// width or the spec's OutputBits, whichever is smaller (guard bits never
	// change it: they are added only when the output is the narrower).
	OutputBits int

	// Interpolator is true for a CIC interpolator (NewCICInterpolator):
	// combs at its input rate, integrators at its output rate, R times
	// higher. RegisterBits then holds the combs' widths and then the
	// integrators', in signal order, unpruned (InterpolatorCICBits).
	Interpolator bool
}

// Kind returns CIC.
func (c CICStage) Kind() Kind { return CIC }

func (CICStage) isStage() {}

// Factor returns R.
func (c CICStage) Factor() int { return c.R }

// Gain returns |H(f)| = |sin(pi f R M / F) / (R M sin(pi f / F))|^N with F = rate
// (docs/design.md §4), normalised to 1 at DC.
func (c CICStage) Gain(f, rate float64) float64 {
	return cicGain(c.N, c.R*c.M, f, rate)
}

// cicGain is the unit-DC-gain magnitude of N cascaded length-rm boxcars.
func cicGain(n, rm int, f, rate float64) float64 {
	x := math.Abs(f) / rate
	if !(x < 1) {
		x = math.Mod(x, 1)
	}
	if x > 0.5 {
		x = 1 - x
	}
	if x == 0 {
		return 1
	}
	// sin(pi x rm) loses accuracy for large arguments; reduce rm*x mod 2
	// first (mod2, exact as math.Mod is, without its loop).
	y := mod2(x * float64(rm))
	r := math.Abs(math.Sin(math.Pi*y) / (float64(rm) * math.Sin(math.Pi*x)))
	if r > 1 {
		r = 1 // rounding just off DC
	}
	return math.Pow(r, float64(n))
}

// mod2 is math.Mod(v, 2) for finite v >= 0, exactly: v - 2 floor(v/2)
// is a multiple of ulp(v) (or 0 when ulp(v) > 2) below 2, so it is
// representable and the subtraction exact.
func mod2(v float64) float64 {
	return v - 2*math.Floor(v/2)
}

// CICGrowth returns ceil(N log2(R M)), the bit growth of a CIC, exactly.
func CICGrowth(n, m, r int) int {
	p := new(big.Int).Exp(big.NewInt(int64(r)*int64(m)), big.NewInt(int64(n)), nil)
	return p.Sub(p, big.NewInt(1)).BitLen()
}

// CICRegisterWidth returns Bin + ceil(N log2(R M)), the unpruned register
// width (Hogenauer 1981, eq. 11; his Bmax is this minus one).
func CICRegisterWidth(n, m, r, inBits int) int { return inBits + CICGrowth(n, m, r) }

// NewCICStage returns the CIC stage of order n, differential delay m and
// factor r on inBits-wide input, its registers planned by PruneCIC for an
// outBits-wide output: Hogenauer's (1981) pruning plus the guard bits that
// keep the truncations from wrapping the output, the widths package fixed
// plans and runs bit-true (no pruning when outBits >= Bin + ceil(N log2 RM)).
// It returns no error: for a CIC PruneCIC refuses (registers over
// MaxCICBits, a word under 2 bits, N or M over 16, R over 2^20) every
// register is left at the unpruned width Bin + ceil(N log2 RM), which no
// input can wrap, and when N, M or R is below 1 RegisterBits is nil.
func NewCICStage(n, m, r, inBits, outBits int) CICStage {
	st := CICStage{N: n, M: m, R: r, InputBits: inBits}
	p, err := PruneCIC(n, m, r, inBits, outBits)
	if err != nil {
		if n < 1 || m < 1 || r < 1 {
			return st
		}
		width := CICRegisterWidth(n, m, r, inBits)
		st.RegisterBits = make([]int, 2*n)
		for j := range st.RegisterBits {
			st.RegisterBits[j] = width
		}
		st.OutputBits = min(width, outBits)
		return st
	}
	st.RegisterBits, st.GuardBits, st.OutputBits = p.RegisterBits, p.GuardBits, p.OutputBits
	return st
}

// Width returns the full register width, the MSB every register keeps:
// Bin + ceil(N log2(R M)) + GuardBits.
// The non-recursive form has no guard bits: its width is Bin + N log2 R.
// An interpolator's is its widest register.
func (c CICStage) Width() int {
	if c.Interpolator && len(c.RegisterBits) > 0 {
		return slices.Max(c.RegisterBits)
	}
	return CICRegisterWidth(c.N, c.M, c.R, c.InputBits) + c.GuardBits
}

// DroopDB returns the CIC's peak-to-peak droop over [0, fp] in dB for input
// rate rate, and false when a null of the CIC lies in [0, fp] (the droop
// cannot be corrected then).
func (c CICStage) DroopDB(fp, rate float64) (float64, bool) {
	firstNull := rate / float64(c.R*c.M)
	if fp >= firstNull {
		return 0, false
	}
	// Inside the main lobe the response falls monotonically from 1.
	return -20 * math.Log10(c.Gain(fp, rate)), true
}

// RejectionDB returns the CIC's rejection -20 log10 max|H| over bands (Hz
// at its input rate rate, within [0, rate/2]; Requirement.Stopbands of a CIC
// stage are its alias bands) and the frequency of the maximum. Each band is
// sampled at 16 points per lobe (nulls every output rate over M) and the
// best peaks are refined; bands that |H| <= (R M sin(pi f/rate))^-N shows
// cannot matter are skipped.
func (c CICStage) RejectionDB(bands []Interval, rate float64) (db, worstHz float64) {
	f := func(x float64) float64 { return c.Gain(x, rate) }
	out := rate / float64(c.R)
	per := func(b Interval) int {
		return 16 * (int(math.Ceil((b.Hi-b.Lo)*float64(c.M)/out)) + 1)
	}
	bound := func(b Interval) float64 {
		return math.Pow(float64(c.R*c.M)*math.Sin(math.Pi*b.Lo/rate), -float64(c.N))
	}
	at, g := maximizeBands(f, bands, per, bound)
	return -toDB(g), at
}

// convBoxcar returns h convolved with a boxcar of l ones.
func convBoxcar(h []float64, l int) []float64 {
	g := make([]float64, len(h)+l-1)
	run := 0.0
	for k := range g {
		if k < len(h) {
			run += h[k]
		}
		if k-l >= 0 && k-l < len(h) {
			run -= h[k-l]
		}
		g[k] = run
	}
	return g
}
