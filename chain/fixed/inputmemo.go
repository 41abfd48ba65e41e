package fixed

import (
	"context"
	"math"
	"math/rand/v2"
	"slices"
	"sync"
)

// InputMemo keeps the input of decimation bit-true runs, the test signal's
// samples and their ADC codes, for the runs of other cascades on the same
// signal, which then neither generate nor quantise it again. A report's
// front, whose chains share the spec's input word and test signal, shares
// one (Settings.Inputs).
//
// What a run measures is the same with a memo as without, bit for bit: the
// samples, the codes, the input's error sums and clip count, and the noise
// generator's state after the run (from which the alias run draws) are
// those the run would make itself. Only the first run (the tones plus
// noise) is kept; the alias run's tone is the cascade's own. A memo holds
// at most memoSamples samples over all signals (64 MiB); a run that would
// pass that, an interpolation cascade and a noise-shaped input make their
// own input as without one.
//
// The zero value is an empty memo; it is safe for concurrent use.
type InputMemo struct {
	mu      sync.Mutex
	signals []*memoSignal
	held    int // samples' room over all signals
}

// memoSamples bounds an InputMemo: room for samples over all its signals,
// each a float64 and an int64 code.
const memoSamples = 1 << 22

// memoSignal is one signal an InputMemo holds: its samples from 0 on, in
// whole blocks of blockSamples, and at the start of each block the noise
// generator's state and the input's running sums, as chainState.run would
// have them there.
type memoSignal struct {
	// The signal: the generator's state before the first noise draw, the
	// tones, the noise RMS, the input rate and the ADC word.
	start []byte
	tones []toneGen
	sigma float64
	rate  float64
	bits  int

	pcg   *rand.PCG // the generator after the samples held
	gen   func(x []float64, n0 int)
	x     []float64
	codes []int64
	// blocks[k] is the state at sample k blockSamples; sums are those after
	// every sample held.
	blocks       []memoBlock
	inPow, inErr float64
	clipped      int
}

type memoBlock struct {
	pcg          []byte
	inPow, inErr float64
	clipped      int
}

// memoInput is a run's view of a memoSignal: its first n samples and codes,
// and what the run would have left after them.
type memoInput struct {
	x     []float64
	codes []int64
	// inPow and inErr are the sums of the squared samples and of the squared
	// quantisation errors, clipped the count of clipped codes, state the
	// noise generator's state after the n samples' draws.
	inPow, inErr float64
	clipped      int
	state        []byte
}

// input returns the first n samples of the signal whose noise generator
// is pcg (in its state before the first noise draw), tones plus white
// noise of RMS sigma at rate, quantised to a bits-bit word, generating
// what the memo does not hold yet; or nil when m is nil or the memo would
// pass its bound, or ctx ends while it generates (a block, a few
// milliseconds, at a time: the run then stops on its own).
func (m *InputMemo) input(ctx context.Context, pcg *rand.PCG, tones []toneGen, sigma, rate float64, bits, n int) *memoInput {
	if m == nil || n <= 0 {
		return nil
	}
	start, err := pcg.MarshalBinary()
	if err != nil {
		return nil
	}
	m.mu.Lock()
	defer m.mu.Unlock()
	var s *memoSignal
	for _, t := range m.signals {
		if slices.Equal(t.start, start) && slices.Equal(t.tones, tones) && sameFloat(t.sigma, sigma) && sameFloat(t.rate, rate) && t.bits == bits {
			s = t
			break
		}
	}
	// Samples are held in whole blocks, with room for runs a little longer
	// than this one (their transients differ) without copying what is held.
	need := (n + blockSamples - 1) / blockSamples * blockSamples
	room := max(need, min(memoSamples, (n+n/8+blockSamples-1)/blockSamples*blockSamples))
	more := 0
	if c := cap(s.held()); c < need {
		more = room - c
	}
	if m.held+more > memoSamples {
		return nil
	}
	if s == nil {
		p := new(rand.PCG)
		if p.UnmarshalBinary(start) != nil {
			return nil
		}
		s = &memoSignal{start: start, tones: slices.Clone(tones), sigma: sigma, rate: rate, bits: bits, pcg: p}
		s.gen = signalGen(s.tones, sigma, rand.New(p), rate)
		m.signals = append(m.signals, s)
	}
	if more > 0 {
		m.held += more
		x, codes := make([]float64, len(s.x), room), make([]int64, len(s.codes), room)
		copy(x, s.x)
		copy(codes, s.codes)
		s.x, s.codes = x, codes
	}
	for len(s.x) < n {
		if ctx.Err() != nil {
			return nil
		}
		s.extend()
	}
	return s.view(n)
}

// held is the samples s holds (none for a nil s).
func (s *memoSignal) held() []float64 {
	if s == nil {
		return nil
	}
	return s.x
}

// extend generates the next block, as chainState.run would take it, in
// the room input made.
func (s *memoSignal) extend() {
	state, _ := s.pcg.MarshalBinary()
	s.blocks = append(s.blocks, memoBlock{pcg: state, inPow: s.inPow, inErr: s.inErr, clipped: s.clipped})
	n0 := len(s.x)
	s.x, s.codes = s.x[:n0+blockSamples], s.codes[:n0+blockSamples] // input made room
	x, codes := s.x[n0:], s.codes[n0:]
	s.gen(x, n0)
	s.clipped += ADC(codes, x, s.bits)
	s.inPow, s.inErr = inputSums(s.inPow, s.inErr, x, codes, s.bits)
}

// view is the run's view of s's first n samples: the sums and the
// generator's state are those at the start of the block holding sample
// n-1, carried on to sample n-1 as the run would.
func (s *memoSignal) view(n int) *memoInput {
	k := (n - 1) / blockSamples
	b := s.blocks[k]
	n0 := k * blockSamples
	in := &memoInput{x: s.x[:n:n], codes: s.codes[:n:n]}
	tail := in.x[n0:]
	codes := make([]int64, len(tail))
	in.clipped = b.clipped + ADC(codes, tail, s.bits)
	in.inPow, in.inErr = inputSums(b.inPow, b.inErr, tail, in.codes[n0:], s.bits)
	p := new(rand.PCG)
	_ = p.UnmarshalBinary(b.pcg) // made by MarshalBinary
	if s.sigma > 0 {
		// addNoise's draws for the tail, in order.
		r := rand.New(p)
		for range tail {
			r.NormFloat64()
		}
	}
	in.state, _ = p.MarshalBinary()
	return in
}

// inputSums carries the running sums of the squared samples and of the
// squared quantisation errors of a bits-bit ADC over x and its codes, in
// order (chainState.run's sums).
func inputSums(pow, errSum float64, x []float64, codes []int64, bits int) (float64, float64) {
	lsb := math.Ldexp(1, -(bits - 1)) // exact scaling, as Ldexp
	for n, q := range codes[:len(x)] {
		e := float64(q)*lsb - x[n]
		errSum += e * e
		pow += x[n] * x[n]
	}
	return pow, errSum
}

// sameFloat reports whether a and b are the same float64, bit for bit.
func sameFloat(a, b float64) bool { return math.Float64bits(a) == math.Float64bits(b) }
