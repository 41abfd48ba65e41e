package chain

import (
	"fmt"
	"slices"
	"strconv"
	"strings"
)

// Notation limits: numbers above these are refused by ParseNotation so that
// every parsed plan is one the rest of the package can work with.
const (
	maxNotationFactor = 1 << 20
	maxCICOrder       = 16
	maxCICDelay       = 16
	maxNotationDown   = 1 << 30
)

// MaxStageFactor is the largest factor of one stage (a CIC's R, a FIR's or
// half-band's decimation): ParseNotation and Design refuse larger ones.
const MaxStageFactor = maxNotationFactor

// Notation returns the chain's compact notation, accepted back by ParseNotation.
//
// Stages are joined by " > " in signal order. A CIC is "cic<N>m<M>r<R>",
// followed by "nr" when it is built non-recursively (CICForm NonRecursive:
// M = 1 and R a power of two, "cic5m1r16nr"), a half-band is "hb", a
// multiband FIR decimating by D is "fir<D>" and the plain lowpass variant
// is "fir<D>L". A fractional stage that changes the rate by L/M (up L,
// down M, in lowest terms) is "poly<L>/<M>" (PolyphaseStage) or
// "farrow<L>/<M>" (FarrowStage). For example
//
//	cic5m1r16 > hb > hb > fir8 > fir2L
//	cic4m1r5 > fir5 > poly24/25
//
// A stage with an unknown kind is written "?" (which ParseNotation refuses).
func Notation(plan []StagePlan) string {
	var b strings.Builder
	for i, p := range plan {
		if i > 0 {
			b.WriteString(" > ")
		}
		switch p.Kind {
		case CIC:
			fmt.Fprintf(&b, "cic%dm%dr%d", p.CICOrder, p.CICDelay, p.Factor)
			if p.CICForm == NonRecursive {
				b.WriteString("nr")
			}
		case HalfBand:
			b.WriteString("hb")
		case FIR:
			fmt.Fprintf(&b, "fir%d", p.Factor)
			if p.Variant == Lowpass {
				b.WriteByte('L')
			}
		case Polyphase:
			fmt.Fprintf(&b, "poly%d/%d", p.Up, p.Down)
		case Farrow:
			fmt.Fprintf(&b, "farrow%d/%d", p.Up, p.Down)
		default:
			b.WriteByte('?')
		}
	}
	return b.String()
}

// NotationError is a syntax error in a chain's notation.
type NotationError struct {
	Input    string
	Pos      int    // byte offset of the problem
	Expected string // what the parser wanted there
}

func (e *NotationError) Error() string {
	found := "end of input"
	if e.Pos < len(e.Input) {
		r := e.Input[e.Pos:]
		if len(r) > 8 {
			r = r[:8] + "..."
		}
		found = strconv.Quote(r)
	}
	return fmt.Sprintf("chain: notation %q: at byte %d: expected %s, found %s", e.Input, e.Pos, e.Expected, found)
}

type notationParser struct {
	s   string
	pos int
}

func (p *notationParser) fail(expected string) error {
	return &NotationError{Input: p.s, Pos: p.pos, Expected: expected}
}

func (p *notationParser) skipSpaces() {
	for p.pos < len(p.s) && (p.s[p.pos] == ' ' || p.s[p.pos] == '\t') {
		p.pos++
	}
}

func (p *notationParser) lit(w string) bool {
	if strings.HasPrefix(p.s[p.pos:], w) {
		p.pos += len(w)
		return true
	}
	return false
}

// number reads a decimal integer in [lo, hi] without sign or leading zeros,
// so that every accepted string is the canonical one.
func (p *notationParser) number(what string, lo, hi int) (int, error) {
	start := p.pos
	for p.pos < len(p.s) && p.s[p.pos] >= '0' && p.s[p.pos] <= '9' {
		p.pos++
	}
	rule := fmt.Sprintf("%s (an integer from %d to %d)", what, lo, hi)
	if p.pos == start {
		return 0, p.fail(rule)
	}
	digits := p.s[start:p.pos]
	if len(digits) > 1 && digits[0] == '0' {
		p.pos = start
		return 0, p.fail(rule + " without leading zeros")
	}
	v, err := strconv.Atoi(digits)
	if err != nil || v < lo || v > hi {
		p.pos = start
		return 0, p.fail(rule)
	}
	return v, nil
}

// ParseNotation parses a chain's notation (see Notation). Spaces and tabs
// around ">" are optional. Errors are *NotationError and give the byte
// position and what was expected there.
func ParseNotation(s string) ([]StagePlan, error) {
	p := &notationParser{s: s}
	var plan []StagePlan
	for {
		p.skipSpaces()
		var st StagePlan
		switch {
		case p.lit("cic"):
			n, err := p.number("CIC order", 1, maxCICOrder)
			if err != nil {
				return nil, err
			}
			if !p.lit("m") {
				return nil, p.fail(`"m" and the CIC differential delay`)
			}
			m, err := p.number("CIC differential delay", 1, maxCICDelay)
			if err != nil {
				return nil, err
			}
			if !p.lit("r") {
				return nil, p.fail(`"r" and the CIC decimation factor`)
			}
			r, err := p.number("CIC decimation factor", 2, maxNotationFactor)
			if err != nil {
				return nil, err
			}
			st = StagePlan{Kind: CIC, Factor: r, CICOrder: n, CICDelay: m}
			if at := p.pos; p.lit("nr") {
				if err := NonRecursiveOK(m, r); err != nil {
					p.pos = at
					return nil, p.fail(fmt.Sprintf("the end of the CIC: %v", err))
				}
				st.CICForm = NonRecursive
			}
		case p.lit("hb"):
			st = StagePlan{Kind: HalfBand, Factor: 2}
		case p.lit("fir"):
			d, err := p.number("FIR decimation factor", 2, maxNotationFactor)
			if err != nil {
				return nil, err
			}
			st = StagePlan{Kind: FIR, Factor: d, Variant: Multiband}
			if p.lit("L") {
				st.Variant = Lowpass
			}
		case p.lit("poly"), p.lit("farrow"):
			kind := Polyphase
			if strings.HasSuffix(p.s[:p.pos], "farrow") {
				kind = Farrow
			}
			up, err := p.number("rate change's numerator (up)", 1, MaxFractionDen)
			if err != nil {
				return nil, err
			}
			if !p.lit("/") {
				return nil, p.fail(`"/" and the rate change's denominator (down)`)
			}
			down, err := p.number("rate change's denominator (down)", 1, maxNotationDown)
			if err != nil {
				return nil, err
			}
			st = StagePlan{Kind: kind, Factor: 1, Up: up, Down: down}
		default:
			return nil, p.fail(`a stage ("cic<N>m<M>r<R>", "cic<N>m1r<R>nr", "hb", "fir<D>", "fir<D>L", "poly<L>/<M>" or "farrow<L>/<M>")`)
		}
		plan = append(plan, st)
		p.skipSpaces()
		if p.pos == len(p.s) {
			return plan, nil
		}
		if !p.lit(">") {
			return nil, p.fail(`" > " before the next stage or the end of the chain`)
		}
	}
}

// Notation writes plan, in decimation order as Chain.Plan holds it, in
// signal order for direction d: as Notation does for Decimate, the stages
// reversed for Interpolate, so that an interpolation chain reads from the
// channel to the DAC, "fir2 > hb > cic4m1r16". The stage names are the same
// in both directions; each stage's factor is its decimation or its
// interpolation.
//
// A fractional stage's L/M is its own rate change in signal order: the
// transpose of a stage that changes the rate by Up/Down changes it by
// Down/Up, so an interpolation chain writes "poly<Down>/<Up>".
func (d Direction) Notation(plan []StagePlan) string {
	if d == Interpolate {
		plan = transposePlan(plan)
	}
	return Notation(plan)
}

// transposePlan reverses plan and turns each fractional stage's Up/Down
// round: its own inverse.
func transposePlan(plan []StagePlan) []StagePlan {
	plan = slices.Clone(plan)
	slices.Reverse(plan)
	for i := range plan {
		if plan[i].Kind.Fractional() {
			plan[i].Up, plan[i].Down = plan[i].Down, plan[i].Up
		}
	}
	return plan
}

// ParseNotation reads a chain written in signal order for direction d and
// returns its plan in decimation order (see Direction.Notation).
func (d Direction) ParseNotation(s string) ([]StagePlan, error) {
	plan, err := ParseNotation(s)
	if err == nil && d == Interpolate {
		plan = transposePlan(plan)
	}
	return plan, err
}
