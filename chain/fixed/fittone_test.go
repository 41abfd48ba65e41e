package fixed

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"

	"github.com/stepdown-dsp/stepdown/chain"
)

// fitTone is checked against gonum's least-squares solver (mat.Dense.Solve
// on the tall system of a constant, a cosine and a sine: QR) on seeded
// random windows that hold no whole number of cycles, with a DC offset and
// noise, and against the construction itself without noise.
func TestFitToneAgainstLeastSquares(t *testing.T) {
	rng := rand.New(rand.NewPCG(31, 7))
	for trial := 0; trial < 200; trial++ {
		n := 32 + rng.IntN(4000)
		lo := float64(minAliasCycles) / float64(n)
		nu := lo + (0.5-2*lo)*rng.Float64()
		amp := math.Pow(10, -6*rng.Float64())
		phase := 2 * math.Pi * rng.Float64()
		dc := (rng.Float64() - 0.5) * amp
		sigma := 0.0
		if trial%2 == 1 {
			sigma = amp * math.Pow(10, -1-3*rng.Float64())
		}
		y := make([]float64, n)
		a := mat.NewDense(n, 3, nil)
		for i := range y {
			c, s := math.Cos(2*math.Pi*nu*float64(i)), math.Sin(2*math.Pi*nu*float64(i))
			y[i] = dc + amp*math.Cos(2*math.Pi*nu*float64(i)+phase) + sigma*rng.NormFloat64()
			a.Set(i, 0, 1)
			a.Set(i, 1, c)
			a.Set(i, 2, s)
		}
		got, resid := fitTone(y, nu)
		var x mat.Dense
		if err := x.Solve(a, mat.NewVecDense(n, y)); err != nil {
			t.Fatal(err)
		}
		want := math.Hypot(x.At(1, 0), x.At(2, 0))
		var r2 float64
		for i, v := range y {
			e := v - x.At(0, 0) - x.At(1, 0)*a.At(i, 1) - x.At(2, 0)*a.At(i, 2)
			r2 += e * e
		}
		wantResid := math.Sqrt(r2 / float64(n))
		if math.Abs(got-want) > 1e-9*amp {
			t.Errorf("trial %d (n %d, nu %.6g): amplitude %.12g, least squares %.12g", trial, n, nu, got, want)
		}
		if math.Abs(resid-wantResid) > 1e-9*amp+1e-6*wantResid {
			t.Errorf("trial %d: residual %.6g, least squares %.6g", trial, resid, wantResid)
		}
		if sigma == 0 && math.Abs(got-amp) > 1e-9*amp {
			t.Errorf("trial %d: noise-free amplitude %.12g, built with %.12g", trial, got, amp)
		}
	}
}

// The alias run of an integer chain puts its tone at the quantised
// cascade's worst alias itself, inside its alias band (a move to whole
// cycles of the window can take it out of the band, to where the chain
// rejects less), and the bit-true figure agrees with the response there.
// Seeded random CIC + FIR chains.
func TestBitTrueAliasAtWorst(t *testing.T) {
	rng := rand.New(rand.NewPCG(17, 3))
	exact := 0
	const trials = 24
	for trial := 0; trial < trials; trial++ {
		c, words := randomAliasChain(rng)
		fk, fp := c.InputRate/float64(c.Stages[0].R)/2, c.Passband
		w, err := Plan(c, words, Settings{})
		if err != nil {
			t.Fatal(err)
		}
		res, err := BitTrue(c, w, Signal{Seed: uint64(trial + 1), Samples: 1024})
		if err != nil {
			t.Fatal(err)
		}
		q, qspec := cascadeChain(c, w, true)
		an, err := chain.Analyze(q, qspec)
		if err != nil {
			t.Fatal(err)
		}
		fold := math.Mod(an.WorstAliasHz, fk)
		fold = math.Min(fold, fk-fold)
		if aliasWindow(fold/fk, res.Samples, 16*res.Samples, res.Skip) == 0 {
			continue
		}
		exact++
		if res.AliasHz != an.WorstAliasHz {
			t.Errorf("trial %d: alias tone at %.6f Hz, the worst alias at %.6f Hz", trial, res.AliasHz, an.WorstAliasHz)
		}
		if res.AliasOutHz > fp*(1+1e-12) {
			t.Errorf("trial %d: the alias lands at %.6f Hz, outside the passband [0, %.6f Hz]", trial, res.AliasOutHz, fp)
		}
		if d := math.Abs(res.AliasResponseDB - an.AliasRejectionDB); d > 0.01 {
			t.Errorf("trial %d: response %.4f dB at the tone, worst %.4f dB", trial, res.AliasResponseDB, an.AliasRejectionDB)
		}
		// The noise in the bin (AliasNoiseDB, an RMS level) moves the
		// figure: by more than three times that level only rarely. A
		// window shorter than the SNR's is kept only with the noise
		// shortAliasMargin (40) dB below the alias, so there the figure
		// lies within 20 log10(1 + 3 10^-2) = 0.26 dB of the response.
		limit := 20 * math.Log10(1+3*math.Pow(10, -(res.AliasNoiseDB-res.AliasRejectionDB)/20))
		if d := math.Abs(res.AliasRejectionDB - res.AliasResponseDB); res.AliasValid && d > limit {
			t.Errorf("trial %d: bit-true %.3f dB, response %.3f dB (%d samples, noise %.1f dB): differ by more than %.2f dB", trial, res.AliasRejectionDB, res.AliasResponseDB, res.AliasSamples, res.AliasNoiseDB, limit)
		}
		if res.AliasSamples < res.Samples && res.AliasNoiseDB-res.AliasRejectionDB < shortAliasMargin {
			t.Errorf("trial %d: a %d-sample window kept with the noise %.1f dB below the alias", trial, res.AliasSamples, res.AliasNoiseDB-res.AliasRejectionDB)
		}
		t.Logf("trial %d: %d of %d samples, alias %.3f dB bit-true, %.3f response, noise %.1f dB", trial, res.AliasSamples, res.Samples, res.AliasRejectionDB, res.AliasResponseDB, res.AliasNoiseDB)
	}
	if exact < trials*3/4 {
		t.Errorf("only %d of %d chains measured at the exact frequency", exact, trials)
	}
}

// wholeCycles stays within one bin of the tone, and a tone within the
// protected band stays within it: seeded random tones, windows and edges.
func TestWholeCyclesKeepsTheBand(t *testing.T) {
	rng := rand.New(rand.NewPCG(23, 5))
	for trial := 0; trial < 20000; trial++ {
		win := 8 + rng.IntN(1<<14)
		rate := 1e3 + 1e8*rng.Float64()
		bin := rate / float64(win)
		fa := rate / 2 * rng.Float64()
		f := rate / 2 * rng.Float64()
		if trial%2 == 0 {
			f = fa * (1 - 1e-3*rng.Float64()) // at the band's edge, the worst alias's usual place
		}
		m := wholeCycles(f, rate, win, fa)
		got := float64(m) * bin
		if m < 1 || m > win/2-1 {
			t.Fatalf("trial %d: %d cycles outside [1, %d]", trial, m, win/2-1)
		}
		if f >= bin && f <= rate/2-bin && math.Abs(got-f) > bin*(1+1e-9) {
			t.Errorf("trial %d: tone %.6g Hz moved to %.6g Hz, more than a bin (%.6g Hz)", trial, f, got, bin)
		}
		if f <= fa && fa >= bin && got > fa*(1+1e-12) {
			t.Errorf("trial %d: tone %.6g Hz within the band [0, %.6g Hz] moved out of it, to %.6g Hz", trial, f, fa, got)
		}
	}
}

// A protected band narrower than a bin of the SNR's window: the alias run
// either keeps its tone within the band (a longer window, or the fit at
// the tone's own frequency) or does not call its figure valid. 10 MHz in,
// a CIC by 8 and a FIR by 2, 625 kHz out, bands of 100 Hz to 2 kHz (a bin
// of 2048 output samples is 305 Hz).
func TestBitTrueAliasNarrowBand(t *testing.T) {
	f1 := 10e6 / 8
	fk := f1 / 2
	for _, fp := range []float64{100, 250, 2000} {
		taps := kaiserLowpass(61, fk/2, f1, 8)
		c := Cascade{InputRate: 10e6, Passband: fp, Stages: []Stage{
			{CIC: true, N: 4, M: 1, R: 8},
			{R: 2, Taps: taps, Bands: lowpassBands(fp, fk-fp, f1, 0.05, 1e-3)},
		}}
		w, err := Plan(c, Words{InputBits: 14, OutputBits: 20, CoefBits: 16}, Settings{})
		if err != nil {
			t.Fatal(err)
		}
		res, err := BitTrue(c, w, Signal{})
		if err != nil {
			t.Fatal(err)
		}
		if res.AliasOutHz > fp*(1+1e-12) && res.AliasValid {
			t.Errorf("band %g Hz: the alias tone lands at %.2f Hz, outside it, and the run is called valid", fp, res.AliasOutHz)
		}
		t.Logf("band %g Hz: tone at %.2f Hz lands at %.2f Hz, %d samples, bit-true %.2f dB, response %.2f dB, worst %.2f dB, valid %v", fp, res.AliasHz, res.AliasOutHz, res.AliasSamples, res.AliasRejectionDB, res.AliasResponseDB, res.WorstAliasResponseDB, res.AliasValid)
	}
}
