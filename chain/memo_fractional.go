package chain

import (
	"context"
	"encoding/binary"
	"math"
)

// fracEntry is a fractional stage in a StageMemo: designed once per
// search, since the integer stages before it do not change it. The
// fractional search (package optimize) completes several integer chains
// with the same fractional stage.
type fracEntry struct {
	done    chan struct{} // closed when the fields below are set
	st      Stage
	err     error
	stopped bool // the design was stopped by its context: not remembered
}

// fractional returns the fractional stage of plan p and requirement r
// from the memo, or designs it with fn and remembers it: the design
// depends on the kind, Up, Down, every field of r, Settings.Remez and
// Settings.MaxTaps and nothing else. A nil memo, or the estimate of a
// polyphase stage (Herrmann lengths, not a design), calls fn. A Farrow
// stage is designed for its estimate too (farrowStage), the same design,
// so its estimate and its design share one entry: the fractional search
// estimates every plan before it designs the cheapest, and designed each
// Farrow structure twice. The stage returned has its own copy of the
// taps.
func (m *StageMemo) fractional(ctx context.Context, design bool, p StagePlan, r FractionalRequirement, s Settings, fn func() (Stage, error)) (Stage, error) {
	if m == nil || (!design && p.Kind != Farrow) {
		return fn()
	}
	var b []byte
	u := func(v uint64) { b = binary.LittleEndian.AppendUint64(b, v) }
	f := func(v float64) { u(math.Float64bits(v)) }
	u(uint64(p.Kind))
	u(uint64(p.Up))
	u(uint64(p.Down))
	for _, v := range []float64{r.InputRate, r.OutputRate, r.Passband, r.Keep, r.Stop, r.Dp, r.Ds, r.RippleDB, r.DroopRate, r.Hold, r.GapLimit} {
		f(v)
	}
	for _, v := range []int{r.Droop.N, r.Droop.M, r.Droop.R} {
		u(uint64(v))
	}
	key := string(appendSettingsKey(b, s))
	m.mu.Lock()
	if m.frac == nil {
		m.frac = map[string]*fracEntry{}
	}
	e, ok := m.frac[key]
	if !ok {
		e = &fracEntry{done: make(chan struct{})}
		m.frac[key] = e
	}
	m.mu.Unlock()
	if ok {
		select {
		case <-e.done:
		case <-ctx.Done():
			return nil, ctx.Err()
		}
		if e.stopped {
			return fn()
		}
		return copyFractional(e.st), e.err
	}
	st, err := fn()
	e.st, e.err = copyFractional(st), err
	if err != nil && (ctxStopped(err) || ctx.Err() != nil) {
		e.stopped = true
		m.mu.Lock()
		delete(m.frac, key)
		m.mu.Unlock()
	}
	close(e.done)
	return st, err
}

// copyFractional returns st with its own copy of its taps or
// coefficients.
func copyFractional(st Stage) Stage {
	switch s := st.(type) {
	case PolyphaseStage:
		s.Taps = append([]float64(nil), s.Taps...)
		return s
	case FarrowStage:
		coef := make([][]float64, len(s.Filter.Coef))
		for i, row := range s.Filter.Coef {
			coef[i] = append([]float64(nil), row...)
		}
		if s.Filter.Coef != nil {
			s.Filter.Coef = coef
		}
		return s
	}
	return st
}
