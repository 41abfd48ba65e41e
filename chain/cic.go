package chain

import (
	"math"
	"math/big"
)

// CICStage is a CIC decimator of order N, differential delay M, factor R.
type CICStage struct {
	N, M, R int
	// RegisterBits is the width of each of the 2N registers (integrators then
	// combs) after Hogenauer's pruning for the spec's output width.
	RegisterBits []int

	// InputBits is the width of the samples entering the CIC.
	InputBits int
	// OutputBits is the width of the samples it delivers: the full register
	// width or the spec's OutputBits, whichever is smaller.
	OutputBits int
}

// Kind returns CIC.
func (c CICStage) Kind() Kind { return CIC }

// Factor returns R.
func (c CICStage) Factor() int { return c.R }

// Gain returns |H(f)| = |sin(pi f R M / F) / (R M sin(pi f / F))|^N with F = rate
// (DESIGN §4), normalised to 1 at DC.
func (c CICStage) Gain(f, rate float64) float64 {
	return cicGain(c.N, c.R*c.M, f, rate)
}

// cicGain is the unit-DC-gain magnitude of N cascaded length-rm boxcars.
func cicGain(n, rm int, f, rate float64) float64 {
	x := math.Mod(math.Abs(f)/rate, 1)
	if x > 0.5 {
		x = 1 - x
	}
	if x == 0 {
		return 1
	}
	// sin(pi x rm) loses accuracy for large arguments; reduce rm*x mod 2 first.
	y := math.Mod(x*float64(rm), 2)
	r := math.Abs(math.Sin(math.Pi*y) / (float64(rm) * math.Sin(math.Pi*x)))
	if r > 1 {
		r = 1 // rounding just off DC
	}
	return math.Pow(r, float64(n))
}

// CICGrowth returns ceil(N log2(R M)), the bit growth of a CIC, exactly.
func CICGrowth(n, m, r int) int {
	p := new(big.Int).Exp(big.NewInt(int64(r)*int64(m)), big.NewInt(int64(n)), nil)
	return p.Sub(p, big.NewInt(1)).BitLen()
}

// CICRegisterWidth returns Bin + ceil(N log2(R M)), the unpruned register
// width (Hogenauer 1981, eq. 11; his Bmax is this minus one).
func CICRegisterWidth(n, m, r, inBits int) int { return inBits + CICGrowth(n, m, r) }

// CICVarianceFactors returns Hogenauer's F_j^2, j = 1..2N: the sum of squares
// of the impulse response from register j to the CIC's output. Integrator j
// (j <= N) sees H_j(z) = (1 - z^-RM)^N / (1 - z^-1)^(N-j+1) at the input rate,
// comb j (j > N) sees (1 - z^-1)^(2N+1-j) at the output rate, so its factor is
// the central binomial coefficient C(2(2N+1-j), 2N+1-j).
func CICVarianceFactors(n, m, r int) []float64 {
	rm := r * m
	out := make([]float64, 2*n)
	for j := 1; j <= n; j++ {
		// (boxcar of length rm)^(n-j+1) convolved with (1 - z^-rm)^(j-1).
		h := []float64{1}
		for b := 0; b < n-j+1; b++ {
			h = convBoxcar(h, rm)
		}
		for d := 0; d < j-1; d++ {
			g := make([]float64, len(h)+rm)
			copy(g, h)
			for k, v := range h {
				g[k+rm] -= v
			}
			h = g
		}
		s := 0.0
		for _, v := range h {
			s += v * v
		}
		out[j-1] = s
	}
	for j := n + 1; j <= 2*n; j++ {
		c := 2*n + 1 - j
		out[j-1] = binom(2*c, c)
	}
	return out
}

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

func binom(n, k int) float64 {
	r := 1.0
	for i := 1; i <= k; i++ {
		r = r * float64(n-k+i) / float64(i)
	}
	return math.Round(r)
}

// CICPruning returns the least significant bits Hogenauer's method drops at
// each of the 2N registers (integrators then combs) and at the output, for
// inBits-wide input and outBits-wide output (Hogenauer 1981, eqs. 16-21):
// the output truncation is B_{2N+1} = Bmax - Bout + 1 with Bmax the MSB index
// of the full register, its noise variance sigma_T^2 = 2^(2 B_{2N+1})/12, and
// register j drops
//
//	B_j = floor(-log2 F_j + log2 sigma_T + 0.5 log2(6/N))
//
// bits, so that the 2N truncations together add no more noise than the
// output truncation. Negative counts are clamped to 0; when outBits covers
// the full register nothing is dropped anywhere.
func CICPruning(n, m, r, inBits, outBits int) (dropped []int, outputDropped int) {
	width := CICRegisterWidth(n, m, r, inBits)
	dropped = make([]int, 2*n)
	outputDropped = width - outBits
	if outputDropped <= 0 {
		return dropped, 0
	}
	logSigmaT := 0.5 * (2*float64(outputDropped) - math.Log2(12))
	f2 := CICVarianceFactors(n, m, r)
	for j, v := range f2 {
		b := math.Floor(-0.5*math.Log2(v) + logSigmaT + 0.5*math.Log2(6/float64(n)))
		if b < 0 {
			b = 0
		}
		if int(b) > outputDropped {
			b = float64(outputDropped)
		}
		dropped[j] = int(b)
	}
	return dropped, outputDropped
}

// NewCICStage returns the CIC stage with its registers pruned by Hogenauer's
// method for outBits-wide output (no pruning when outBits >= the full width).
func NewCICStage(n, m, r, inBits, outBits int) CICStage {
	width := CICRegisterWidth(n, m, r, inBits)
	dropped, _ := CICPruning(n, m, r, inBits, outBits)
	regs := make([]int, len(dropped))
	for j, d := range dropped {
		regs[j] = width - d
	}
	ob := width
	if outBits < ob {
		ob = outBits
	}
	return CICStage{N: n, M: m, R: r, RegisterBits: regs, InputBits: inBits, OutputBits: ob}
}

// Width returns the full (unpruned) register width.
func (c CICStage) Width() int { return CICRegisterWidth(c.N, c.M, c.R, c.InputBits) }

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
