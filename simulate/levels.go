package simulate

import (
	"context"
	"fmt"
	"math"

	"github.com/stepdown-dsp/stepdown/chain/units"
	"github.com/stepdown-dsp/stepdown/signalio"
)

// Levels are a run's measured levels in dBFS (0 dBFS: a full-scale sine
// of a real signal, a full-scale complex tone of an I/Q one; signalio.Welch's
// scale), each the power of the spectrum's bins in a band (see BandDBFS).
// An empty band reads -Inf; the JSON writer prints it as null.
type Levels struct {
	// The input, as run (in the chain's input word): all of it, its
	// passband [0, fp] and its alias bands, the input frequencies that
	// fold onto the protected band [0, fa] at the output ([k F_out - fa,
	// k F_out + fa], k >= 1, and their mirror images for I/Q; Bands.InAlias).
	InputDBFS, InputPassbandDBFS, InputAliasDBFS float64
	// The bit-true output: all of it, its passband and its protected band.
	OutputDBFS, OutputPassbandDBFS, OutputProtectedDBFS float64
	// BitTrueErrorDBFS is the power of the bit-true output less the float
	// chain's (same structure and gains, unrounded taps), in dBFS of the
	// output word; BitTrueSNRDB the float output's power over it (+Inf
	// when they agree exactly).
	BitTrueErrorDBFS, BitTrueSNRDB float64
}

// Bands are the frequencies a run's levels are measured in, Hz.
type Bands struct {
	PassbandHz, ProtectedHz float64
	// OutputRateHz is the rate the alias bands fold to.
	OutputRateHz float64
}

// InAlias reports whether input frequency f (Hz, negative for the lower
// half of an I/Q spectrum) folds onto the protected band: its distance to
// the nearest nonzero multiple of the output rate is at most fa.
//
// A chain that ends in a fractional stage (L/M) is held to the same bands.
// Its images of every input frequency (f + j Fm, j = 1..L-1, package
// chain's paths) reach the protected band for some j whatever f is, in
// the passband too, but only through its prototype's stopband: they are
// the stage's rejection, which the output levels show, not a property of
// the input (counted, they would make every input frequency an alias).
func (b Bands) InAlias(f float64) bool {
	k := math.Round(f / b.OutputRateHz)
	return k != 0 && math.Abs(f-k*b.OutputRateHz) <= b.ProtectedHz
}

// BandDBFS is the power in dBFS of the bins of sp whose frequency satisfies
// in: the sum of their powers times the bin spacing over the bin's noise
// bandwidth (RBWHz), so that a full-scale tone inside the band reads 0 dBFS
// whatever the window, and noise reads its power in the band.
func BandDBFS(sp *signalio.Spectrum, in func(f float64) bool) float64 {
	if len(sp.Hz) < 2 || !(sp.RBWHz > 0) {
		return math.Inf(-1)
	}
	step := sp.Hz[1] - sp.Hz[0]
	sum := 0.0
	for i, f := range sp.Hz {
		if in(f) {
			sum += math.Pow(10, sp.DB[i]/10)
		}
	}
	return 10 * math.Log10(sum*step/sp.RBWHz)
}

// Spectra returns the Welch spectra of the run's input (as run, in the
// chain's input word) and bit-true output, with segments of up to
// signalio.DefaultSegment points, at most a quarter of the shorter signal
// so that several segments average (at least 16 points).
func (r *Result) Spectra() (in, out *signalio.Spectrum, err error) {
	return r.SpectraContext(context.Background())
}

// SpectraContext is Spectra stopped by ctx (signalio.WelchContext).
func (r *Result) SpectraContext(ctx context.Context) (in, out *signalio.Spectrum, err error) {
	seg := func(n int) int {
		s := signalio.DefaultSegment
		for s > 16 && s > n/4 {
			s /= 2
		}
		return s
	}
	inSig := &signalio.Signal{RateHz: r.InputRateHz, Bits: r.InputBits, Samples: r.In}
	outSig := &signalio.Signal{RateHz: r.OutputRateHz, Bits: r.OutputBits, Samples: r.Out}
	if n := outSig.Frames(); n < 16 {
		return nil, nil, fmt.Errorf("simulate: the output has %s; a spectrum needs at least 16 (give a longer recording)", units.Count(n, "sample", "samples"))
	}
	if in, err = signalio.WelchContext(ctx, inSig, signalio.WelchOptions{Segment: seg(inSig.Frames())}); err != nil {
		return nil, nil, err
	}
	if out, err = signalio.WelchContext(ctx, outSig, signalio.WelchOptions{Segment: seg(outSig.Frames())}); err != nil {
		return nil, nil, err
	}
	return in, out, nil
}

// Measure returns the run's levels from its spectra (Spectra) in the bands b.
func (r *Result) Measure(in, out *signalio.Spectrum, b Bands) Levels {
	all := func(float64) bool { return true }
	pass := func(f float64) bool { return math.Abs(f) <= b.PassbandHz }
	prot := func(f float64) bool { return math.Abs(f) <= b.ProtectedHz }
	l := Levels{
		InputDBFS: BandDBFS(in, all), InputPassbandDBFS: BandDBFS(in, pass), InputAliasDBFS: BandDBFS(in, b.InAlias),
		OutputDBFS: BandDBFS(out, all), OutputPassbandDBFS: BandDBFS(out, pass), OutputProtectedDBFS: BandDBFS(out, prot),
	}
	// The error against the float chain, in the time domain: mean square
	// over every output sample and path, relative to a full-scale sine
	// (power 1/2) of a real signal or complex tone (power 1) of an I/Q one.
	var pe, pf float64
	n := 0
	lsb := math.Ldexp(1, -(r.OutputBits - 1))
	for p := range r.Out {
		for i, v := range r.Out[p] {
			d := float64(v)*lsb - r.Float[p][i]
			pe += d * d
			pf += r.Float[p][i] * r.Float[p][i]
			n++
		}
	}
	fs := 0.5 * float64(len(r.Out)) // full-scale power summed over paths
	if len(r.Out) == 2 {
		fs = 1
	}
	pe, pf = pe/float64(n), pf/float64(n)
	l.BitTrueErrorDBFS = 10 * math.Log10(pe/fs)
	l.BitTrueSNRDB = 10 * math.Log10(pf/pe)
	return l
}
