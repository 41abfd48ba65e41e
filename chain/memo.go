package chain

import (
	"context"
	"encoding/binary"
	"errors"
	"math"
	"sync"
)

// StageMemo remembers FIR and half-band stage designs by exactly what a
// design depends on, so that a stage met again, in another chain or
// another call of Design, is not designed again. A search that designs
// many chains sharing stages (package optimize) hands one to every Design
// through Settings.Memo. The designs, and their failures, are the same
// with or without it: a stage is keyed on its kind, factor and layout,
// input rate, passband edge, deviations and stopbands, on the order,
// delay times factor and input rate of every CIC whose droop it corrects
// (the compensator's desired gain), on Settings.Remez and MaxTaps, and,
// under the cascade rule, on the credit's base limit and every earlier
// stage as designed (a FIR's taps by their SHA-256). It remembers
// fractional stages too, keyed on their kind, rate change, requirement,
// Settings.Remez and MaxTaps: the integer stages before one do not change
// its design, and the fractional search completes several integer chains
// with the same fractional stage.
// The stage returned carries the requirement of the chain being designed
// and its own copy of the taps. A StageMemo is safe for concurrent use:
// a stage asked for while another goroutine designs it waits for that
// design (or for its own context to be done). The zero value is not
// usable; use NewStageMemo. A design stopped by its context is not
// remembered. The memo also holds what the cascade rule's credit tables
// of its chains share (the bounds of the earlier stages, per prefix of
// them: creditShare), which changes no table's values.
type StageMemo struct {
	mu sync.Mutex
	m  map[string]*memoEntry
	// frac remembers fractional stages (memo_fractional.go).
	frac map[string]*fracEntry
	// credit is shared by the cascade rule's credit tables of the chains
	// designed with the memo (creditShare).
	credit *creditShare
}

type memoEntry struct {
	done    chan struct{} // closed when the fields below are set
	st      FIRStage
	err     error
	stopped bool // the design was stopped by its context: not remembered
}

// NewStageMemo returns an empty memo.
func NewStageMemo() *StageMemo {
	return &StageMemo{m: map[string]*memoEntry{}, credit: newCreditShare()}
}

// Len returns the number of stages remembered or being designed.
func (m *StageMemo) Len() int {
	m.mu.Lock()
	defer m.mu.Unlock()
	return len(m.m)
}

// stage returns the stage of requirement r (prev: the stages before it)
// from the memo, or designs it with fn and remembers it. A nil memo, or
// an estimate (design false), calls fn. Waiting for another goroutine's
// design of the stage ends when ctx is done.
func (m *StageMemo) stage(ctx context.Context, design bool, r Requirement, prev []Stage, s Settings, fn func() (FIRStage, error)) (FIRStage, error) {
	if m == nil || !design {
		return fn()
	}
	key := stageKey(r, prev, s)
	m.mu.Lock()
	e, ok := m.m[key]
	if !ok {
		e = &memoEntry{done: make(chan struct{})}
		m.m[key] = e
	}
	m.mu.Unlock()
	if ok {
		select {
		case <-e.done:
		case <-ctx.Done():
			return FIRStage{}, ctx.Err()
		}
		if e.stopped {
			// The design that held the key was stopped by its context:
			// this caller designs the stage itself.
			return fn()
		}
		st := e.st
		st.Req = r
		st.Taps = append([]float64(nil), e.st.Taps...)
		return st, e.err
	}
	st, err := fn()
	e.st, e.err = st, err
	e.st.Taps = append([]float64(nil), st.Taps...)
	if err != nil && (ctxStopped(err) || ctx.Err() != nil) {
		e.stopped = true
		m.mu.Lock()
		delete(m.m, key)
		m.mu.Unlock()
	}
	close(e.done)
	return st, err
}

// creditShare is the memo's share of the credit tables, nil for a nil
// memo.
func (m *StageMemo) creditShare() *creditShare {
	if m == nil {
		return nil
	}
	return m.credit
}

// ctxStopped reports whether err is that of a design stopped by its
// context.
func ctxStopped(err error) bool {
	return errors.Is(err, context.Canceled) || errors.Is(err, context.DeadlineExceeded)
}

// stageKey encodes what the design of requirement r's stage depends on
// (see StageMemo).
func stageKey(r Requirement, prev []Stage, s Settings) string {
	b := make([]byte, 0, 128)
	u := func(v uint64) { b = binary.LittleEndian.AppendUint64(b, v) }
	f := func(v float64) { u(math.Float64bits(v)) }
	u(uint64(r.Kind))
	u(uint64(r.Factor))
	u(uint64(r.Variant))
	f(r.InputRate)
	f(r.Passband)
	f(r.Dp)
	f(r.Ds)
	f(r.GapLimit)
	u(uint64(len(r.Stopbands)))
	for _, sb := range r.Stopbands {
		f(sb.Lo)
		f(sb.Hi)
	}
	u(uint64(len(r.Compensates)))
	for _, j := range r.Compensates {
		// compGain's view of the CIC: its order, R M and input rate.
		cs, _ := prev[j].(CICStage)
		rate := r.InputRate
		for k := j; k < len(prev); k++ {
			rate *= float64(prev[k].Factor())
		}
		u(uint64(cs.N))
		u(uint64(cs.R * cs.M))
		f(rate)
	}
	b = appendSettingsKey(b, s)
	// The cascade rule's credit: the earlier stages as designed.
	for _, c := range []*stopCredit{r.credit, r.protect} {
		if c != nil {
			u(1)
			b = c.key(b)
		} else {
			u(0)
		}
	}
	return string(b)
}

// appendSettingsKey appends to a memo key what of Settings a stage's
// design depends on: Remez and MaxTaps.
func appendSettingsKey(b []byte, s Settings) []byte {
	grid := uint64(0)
	if s.Remez.GridOnly {
		grid = 1
	}
	for _, v := range []uint64{uint64(s.Remez.Density), uint64(s.Remez.MaxIterations), grid, uint64(s.MaxTaps)} {
		b = binary.LittleEndian.AppendUint64(b, v)
	}
	return b
}
