// Package sigmadelta models a noise-shaped converter (a sigma-delta
// modulator) feeding a decimation chain: its noise transfer function
// (NTF), a simulated modulator that makes its codes, the SNR a chain
// leaves it (PredictedSNR), and the rejection each alias needs for an SNR
// target (Mask, a chain.Mask).
//
// # Conventions
//
// Frequencies are in Hz, or relative to the modulator's rate (cycles per
// sample) where a name or a comment says so; the modulator runs at the
// chain's input rate F0. Full scale is the quantiser's outermost level:
// a Bits-bit quantiser has 2^Bits mid-rise levels, uniformly spaced, the
// outermost at +-1, so its step is 2/(2^Bits - 1) (2 for one bit, whose
// levels are +-1). Its error is modelled as white and uniform over one
// step, variance step^2/12 (the linear model, common practice). Every SNR
// is a tone at ToneDBFS (-6 dBFS) over the noise in [0, passband] at the
// chain's output, in dB; the tone is referred to the chain's gain at 0 Hz.
//
// # The NTF
//
// NTF(z) = prod (z - z_i) / prod (z - p_i), monic above and below so that
// its impulse response starts with 1. The zeros lie on the unit circle:
// all at DC by default, or at Modulator.Zeros (OptimalZeros gives the
// in-band noise's minimisers, the Legendre roots). The poles are a
// Butterworth highpass's (bilinear transform), the corner found by
// bisection so that |NTF| at F0/2 equals the out-of-band gain OBG
// (default 1.5, Lee's rule for a stable single-bit loop, common
// practice); |NTF| then rises monotonically to OBG there (checked on a
// dense grid for every order and the OBGs the tests use). The poles are
// held to scipy.signal.butter and |NTF| to scipy.signal.freqz
// (testdata/gen_golden.py).
//
// # Noise, SNR and mask
//
// The noise density at input frequency g is |NTF(g/F0)|^2 sigma^2/(F0/2)
// (one-sided). Noise integrates it times the chain's |H(g)/H(0)|^2 over
// every g that lands in [0, fp] at the output, [k FK - fp, k FK + fp]
// within [0, F0/2] for k = 0, 1, ..., each band by 8-point Gauss-Legendre
// panels doubled until the band's integral moves by less than
// IntegrationTol (1e-7) of itself. PredictedSNR is the tone over it.
// Mask splits what an SNR target leaves after the modulator's own in-band
// noise among the alias bands in proportion to their width (a constant
// folded-noise density), so the alias at g needs 10 log10(S(g) W/budget)
// dB; a chain that meets the mask has a predicted SNR at or above the
// target (see Mask).
//
// The predicted SNR counts the modulator's noise only: the chain's own
// roundings (its output word, its FIR accumulators' rounding) are not in
// it; with a 24-bit output they lie far below. The tests measure how far
// the linear model is from the simulated modulator: within a few dB for
// multi-bit quantisers, and conservative (the simulation 2 to 9 dB better
// in band) for single-bit ones, whose quantiser's effective gain the
// model does not capture.
//
// # The simulated modulator
//
// NewEncoder realises the NTF in the error-feedback structure: the
// quantiser's error e is fed back through NTF - 1, v = u + (NTF - 1) e,
// y = Q(v), so that y = u + NTF e exactly (the textbook error-feedback
// modulator, from memory); the NTF runs as a cascade of second-order
// sections. Its codes are Bits-bit two's complement: code c stands for
// the level (2c + 1)/(2^Bits - 1), so the input word's full scale is
// 2^Bits/(2^Bits - 1) of the modulator's and the codes carry a constant
// offset of half a code (a 1-bit modulator's codes are -1 and 0). A loop
// whose filter output passes 1000 full scales is called unstable and is an
// error. Shaper wraps the modulator for package chain/fixed's bit-true run
// (fixed.Shaper), which then feeds the chain with its codes and measures
// the SNR in band beside PredictedSNR's figure.
package sigmadelta
