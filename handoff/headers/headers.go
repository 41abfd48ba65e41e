package headers

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"github.com/stepdown-dsp/stepdown/chain/fixed"
	"github.com/stepdown-dsp/stepdown/handoff"
)

// Options names what the files declare. The zero value is the default: the
// prefix "stepdown" (names STEPDOWN_..., files stepdown_chain.h,
// stepdown_chain_pkg.vhd and stepdown_chain.svh) and no notation line.
type Options struct {
	// Prefix begins every name the files declare, written in upper case
	// (STEPDOWN_S1_R), and, in lower case, the file names and the VHDL
	// package (stepdown_chain_pkg). It must start with a letter, hold only
	// ASCII letters, digits and single underscores, not end with an
	// underscore (VHDL's rule for identifiers) and be at most MaxPrefix
	// characters long. Empty means "stepdown".
	Prefix string
	// Notation is the chain's notation ("cic5m1r16 > hb > fir2"), written
	// in each file's header comment; empty writes none. Printable ASCII
	// without a backslash or "*/", at most MaxNotation characters.
	Notation string
}

// DefaultPrefix is the prefix of the zero Options.
const DefaultPrefix = "stepdown"

// MaxPrefix and MaxNotation bound Options.Prefix and Options.Notation.
const (
	MaxPrefix   = 32
	MaxNotation = 256
)

// Stage kinds as the files number them (PREFIX_KIND_CIC and so on).
const (
	KindCIC      = 0
	KindFIR      = 1
	KindHalfBand = 2
	// KindCICNonRecursive is a CIC built non-recursively
	// (chain.NonRecursive): log2 R sub-stages (1 + z^-1)^N decimating by 2.
	KindCICNonRecursive = 3
)

// FieldBits is the width of one element of a Verilog flat vector of small
// integers (a CIC's REG_BITS and REG_DROPPED): 8 bits, unsigned.
const FieldBits = 8

// maxBits bounds the widths the files carry: a coefficient word is an
// int64_t at most, and every CIC register width and dropped count must fit
// a FieldBits-bit field.
const (
	maxCoefBits  = 64
	maxFieldBits = 1<<FieldBits - 1
)

// item is one constant: a scalar, or an array of integers (coefficients
// when coef is set, with elemBits their word width).
type item struct {
	name     string // after the prefix, e.g. "S1_R"
	doc      string // what it means, with its unit
	array    bool
	value    int64   // a scalar's value
	values   []int64 // an array's elements, index 0 first
	coef     bool    // a coefficient array: int32_t/int64_t, signed in HDL
	elemBits int     // a coefficient array's word width
	length   string  // an array's length constant, after the prefix
}

// section is a group of constants under a heading comment.
type section struct {
	title string
	notes []string // comment lines (already one line each)
	items []item
}

// model is everything the three writers render, in the order they render it.
type model struct {
	prefix   string // upper case
	lower    string // lower case, for file and package names
	notation string
	interp   bool // an interpolation chain
	sections []section
}

// FileNames returns the names C, VHDL and Verilog write under Options o:
// PREFIX_chain.h, PREFIX_chain_pkg.vhd and PREFIX_chain.svh with the prefix
// in lower case. It returns an error when o.Prefix is invalid.
func FileNames(o Options) (c, vhdl, verilog string, err error) {
	_, lower, err := prefixOf(o)
	if err != nil {
		return "", "", "", err
	}
	return lower + "_chain.h", lower + "_chain_pkg.vhd", lower + "_chain.svh", nil
}

// Files returns the three files, C header, VHDL package and Verilog
// include, in that order, under the folder "headers/" with their names
// (FileNames).
func Files(c fixed.Cascade, w *fixed.Widths, o Options) ([]handoff.File, error) {
	m, err := build(c, w, o)
	if err != nil {
		return nil, err
	}
	return []handoff.File{
		{Name: "headers/" + m.lower + "_chain.h", Data: m.c()},
		{Name: "headers/" + m.lower + "_chain_pkg.vhd", Data: m.vhdl()},
		{Name: "headers/" + m.lower + "_chain.svh", Data: m.verilog()},
	}, nil
}

// C returns the C header (PREFIX_chain.h) of the planned chain w of cascade c.
func C(c fixed.Cascade, w *fixed.Widths, o Options) ([]byte, error) {
	m, err := build(c, w, o)
	if err != nil {
		return nil, err
	}
	return m.c(), nil
}

// VHDL returns the VHDL package (PREFIX_chain_pkg.vhd) of the planned chain
// w of cascade c.
func VHDL(c fixed.Cascade, w *fixed.Widths, o Options) ([]byte, error) {
	m, err := build(c, w, o)
	if err != nil {
		return nil, err
	}
	return m.vhdl(), nil
}

// Verilog returns the Verilog/SystemVerilog include (PREFIX_chain.svh) of the
// planned chain w of cascade c.
func Verilog(c fixed.Cascade, w *fixed.Widths, o Options) ([]byte, error) {
	m, err := build(c, w, o)
	if err != nil {
		return nil, err
	}
	return m.verilog(), nil
}

func prefixOf(o Options) (upper, lower string, err error) {
	p := o.Prefix
	if p == "" {
		p = DefaultPrefix
	}
	bad := func(rule string) error {
		return fmt.Errorf("headers: Options.Prefix %s: %s", quote(p, 40), rule)
	}
	if len(p) > MaxPrefix {
		return "", "", bad(fmt.Sprintf("must be at most %d characters", MaxPrefix))
	}
	if c := p[0]; !(c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z') {
		return "", "", bad("must start with an ASCII letter")
	}
	for i := 0; i < len(p); i++ {
		c := p[i]
		if !(c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || c >= '0' && c <= '9' || c == '_') {
			return "", "", bad("must hold only ASCII letters, digits and underscores")
		}
	}
	if strings.Contains(p, "__") || strings.HasSuffix(p, "_") {
		return "", "", bad("must not hold two underscores in a row or end with one (VHDL identifiers)")
	}
	return strings.ToUpper(p), strings.ToLower(p), nil
}

// quote returns s quoted, cut to n bytes.
func quote(s string, n int) string {
	if len(s) > n {
		return strconv.Quote(s[:n]) + "..."
	}
	return strconv.Quote(s)
}

func checkNotation(s string) error {
	bad := func(rule string) error {
		return fmt.Errorf("headers: Options.Notation %s: %s", quote(s, 60), rule)
	}
	if len(s) > MaxNotation {
		return bad(fmt.Sprintf("must be at most %d characters", MaxNotation))
	}
	for i := 0; i < len(s); i++ {
		if s[i] < ' ' || s[i] > '~' || s[i] == '\\' {
			return bad("must be printable ASCII without a backslash (it goes into comments)")
		}
	}
	if strings.Contains(s, "*/") {
		return bad(`must not hold "*/" (it goes into a C comment)`)
	}
	return nil
}

// comment returns s as one line safe in a C block comment and in VHDL and
// Verilog line comments: printable ASCII, no backslash, no "*/".
func comment(s string) string {
	b := []byte(s)
	for i, c := range b {
		if c < ' ' || c > '~' || c == '\\' {
			b[i] = '?'
		}
	}
	return strings.ReplaceAll(string(b), "*/", "* /")
}

func g(v float64) string { return strconv.FormatFloat(v, 'g', 9, 64) }

// hz writes a rate in Hz in full, without an exponent (2400000000, not
// 2.4e+09).
func hz(v float64) string { return strconv.FormatFloat(v, 'f', -1, 64) }

// build checks the plan against its cascade and lays out the constants.
func build(c fixed.Cascade, w *fixed.Widths, o Options) (*model, error) {
	if c.Fractional() {
		return nil, fmt.Errorf("headers: the chain has a fractional stage (polyphase or farrow); the hand-off is written for chains of integer stages only")
	}
	upper, lower, err := prefixOf(o)
	if err != nil {
		return nil, err
	}
	if err := checkNotation(o.Notation); err != nil {
		return nil, err
	}
	if w == nil {
		return nil, fmt.Errorf("headers: no widths: plan the cascade first (fixed.Plan)")
	}
	if len(c.Stages) == 0 {
		return nil, fmt.Errorf("headers: the cascade has no stages")
	}
	if len(w.Stages) != len(c.Stages) {
		return nil, fmt.Errorf("headers: the cascade has %d stages but the widths %d: give the widths fixed.Plan returned for this cascade", len(c.Stages), len(w.Stages))
	}
	for _, f := range []struct {
		name string
		v    int
	}{{"InputBits", w.InputBits}, {"OutputBits", w.OutputBits}} {
		if f.v < 1 || f.v > maxFieldBits {
			return nil, fmt.Errorf("headers: widths %s = %d: must lie in [1, %d] bits", f.name, f.v, maxFieldBits)
		}
	}
	m := &model{prefix: upper, lower: lower, notation: o.Notation, interp: c.Interpolate}
	cplx := int64(0)
	if c.Complex {
		cplx = 1
	}
	interpL := int64(1)
	for i, st := range c.Stages {
		if st.Interpolate != c.Interpolate || w.Stages[i].Interpolate != c.Interpolate {
			return nil, fmt.Errorf("headers: stage %d: Interpolate is %v in the cascade's stage and %v in its widths, but the cascade's is %v: a chain runs in one direction", i+1, st.Interpolate, w.Stages[i].Interpolate, c.Interpolate)
		}
		if c.Interpolate {
			if st.R < 1 || st.R > math.MaxInt32 || interpL > math.MaxInt32/int64(st.R) {
				return nil, fmt.Errorf("headers: stage %d: interpolation factor %d makes the chain's interpolation over %d, the largest a VHDL integer surely holds", i+1, st.R, math.MaxInt32)
			}
			interpL *= int64(st.R)
		}
	}
	chainNotes := []string{fmt.Sprintf("Input rate %s Hz, %d stage(s), %s data.", hz(c.InputRate), len(c.Stages), map[bool]string{false: "real", true: "complex (I/Q: two identical real data paths)"}[c.Complex])}
	if c.Interpolate {
		chainNotes = append(chainNotes, fmt.Sprintf("Interpolation chain: output rate %s Hz, interpolation %d; each stage raises the rate by its L.", hz(c.InputRate*float64(interpL)), interpL))
	}
	chainNotes = append(chainNotes, fmt.Sprintf("Chain DC gain %s (input full scale to output full scale).", g(w.DCGain)))
	if w.CorrectedStage >= 0 && w.CorrectedStage < len(w.Stages) {
		chainNotes = append(chainNotes, fmt.Sprintf("Gain correction %s folded into the taps of stage %d.", g(w.GainCorrection), w.CorrectedStage+1))
	}
	items := []item{
		{name: "NUM_STAGES", doc: "number of stages, numbered 1.. in signal order", value: int64(len(c.Stages))},
		{name: "INPUT_BITS", doc: "chain input word (ADC), bits, two's complement", value: int64(w.InputBits)},
		{name: "OUTPUT_BITS", doc: "chain output word, bits, two's complement", value: int64(w.OutputBits)},
		{name: "COMPLEX", doc: "1: complex (I/Q) data, two identical real data paths; 0: real", value: cplx},
	}
	if c.Interpolate {
		items[1].doc = "chain input word (the channel's samples), bits, two's complement"
		items[2].doc = "chain output word (DAC), bits, two's complement"
		items = append(items,
			item{name: "INTERPOLATE", doc: "1: an interpolation chain, each stage raising the rate by its Sn_L (declared by interpolation chains only)", value: 1},
			item{name: "INTERPOLATION", doc: "the chain's interpolation: output rate / input rate, the product of the Sn_L", value: interpL})
	}
	items = append(items,
		item{name: "KIND_CIC", doc: "stage kind code: CIC", value: KindCIC},
		item{name: "KIND_FIR", doc: "stage kind code: FIR", value: KindFIR},
		item{name: "KIND_HALFBAND", doc: "stage kind code: half-band FIR", value: KindHalfBand},
		item{name: "KIND_CIC_NONRECURSIVE", doc: "stage kind code: non-recursive CIC, log2 R sub-stages (1 + z^-1)^N decimating by 2", value: KindCICNonRecursive})
	m.sections = append(m.sections, section{title: "Chain", notes: chainNotes, items: items})
	for i := range c.Stages {
		if c.Interpolate {
			s, err := m.interpStage(i, c.Stages[i], &w.Stages[i])
			if err != nil {
				return nil, fmt.Errorf("headers: stage %d: %w", i+1, err)
			}
			m.sections = append(m.sections, s)
			continue
		}
		s, err := m.stage(i, c.Stages[i], &w.Stages[i])
		if err != nil {
			return nil, fmt.Errorf("headers: stage %d: %w", i+1, err)
		}
		m.sections = append(m.sections, s)
	}
	return m, nil
}

func (m *model) stage(i int, st fixed.Stage, sw *fixed.StageWidths) (section, error) {
	if st.CIC != sw.CIC || (!st.CIC && st.HalfBand != sw.HalfBand) || (st.CIC && st.NonRecursive != sw.NonRecursive) {
		return section{}, fmt.Errorf("the cascade's stage is a %s but the widths' a %s: give the widths fixed.Plan returned for this cascade", kindName(st.CIC, st.HalfBand, st.NonRecursive), kindName(sw.CIC, sw.HalfBand, sw.NonRecursive))
	}
	if st.R != sw.R || sw.R < 1 || sw.R > math.MaxInt32 {
		return section{}, fmt.Errorf("factor R = %d in the cascade, %d in the widths: they must agree and lie in [1, %d]", st.R, sw.R, math.MaxInt32)
	}
	for _, f := range []struct {
		name string
		v    int
	}{{"InputBits", sw.InputBits}, {"OutputBits", sw.OutputBits}, {"AccumulatorBits", sw.AccumulatorBits}} {
		if f.v < 1 || f.v > maxFieldBits {
			return section{}, fmt.Errorf("%s = %d: must lie in [1, %d] bits", f.name, f.v, maxFieldBits)
		}
	}
	if sw.OutputShift < -maxFieldBits || sw.OutputShift > maxFieldBits {
		return section{}, fmt.Errorf("OutputShift = %d: must lie in [%d, %d] bits", sw.OutputShift, -maxFieldBits, maxFieldBits)
	}
	n := fmt.Sprintf("S%d_", i+1)
	kind := int64(KindFIR)
	switch {
	case sw.CIC && sw.NonRecursive:
		kind = KindCICNonRecursive
	case sw.CIC:
		kind = KindCIC
	case sw.HalfBand:
		kind = KindHalfBand
	}
	sec := section{title: fmt.Sprintf("Stage %d: %s", i+1, kindName(sw.CIC, sw.HalfBand, sw.NonRecursive))}
	if sw.InputRate > 0 {
		sec.notes = append(sec.notes, fmt.Sprintf("Input rate %s Hz, output rate %s Hz.", hz(sw.InputRate), hz(sw.InputRate/float64(sw.R))))
	}
	sec.notes = append(sec.notes, fmt.Sprintf("DC gain %s (input full scale to output full scale).", g(sw.Gain)))
	if sw.GainCorrection != 0 && sw.GainCorrection != 1 {
		sec.notes = append(sec.notes, fmt.Sprintf("Taps scaled by %s before quantisation (gain correction).", g(sw.GainCorrection)))
	}
	for _, p := range sw.Points {
		sec.notes = append(sec.notes, comment(p))
	}
	sec.items = []item{
		{name: n + "KIND", doc: "stage kind (KIND_CIC, KIND_FIR, KIND_HALFBAND, KIND_CIC_NONRECURSIVE)", value: kind},
		{name: n + "R", doc: "decimation factor", value: int64(sw.R)},
		{name: n + "INPUT_BITS", doc: "input word, bits", value: int64(sw.InputBits)},
		{name: n + "OUTPUT_BITS", doc: "output word, bits", value: int64(sw.OutputBits)},
	}
	if sw.CIC && sw.NonRecursive {
		return nonRecursive(sec, n, st, sw)
	}
	if sw.CIC {
		p := sw.Pruning
		if p == nil {
			return section{}, fmt.Errorf("a CIC without its register plan (Pruning is nil)")
		}
		if p.N != st.N || p.M != st.M || p.R != st.R {
			return section{}, fmt.Errorf("CIC N=%d M=%d R=%d in the cascade but N=%d M=%d R=%d in its register plan", st.N, st.M, st.R, p.N, p.M, p.R)
		}
		if p.N < 1 || p.N > 64 || p.M < 1 || p.M > math.MaxInt32 {
			return section{}, fmt.Errorf("CIC order N = %d, delay M = %d: N must lie in [1, 64], M in [1, %d]", p.N, p.M, math.MaxInt32)
		}
		if len(p.RegisterBits) != 2*p.N || len(p.Dropped) != 2*p.N+1 {
			return section{}, fmt.Errorf("CIC of order %d: its plan has %d register widths and %d dropped counts; want %d and %d", p.N, len(p.RegisterBits), len(p.Dropped), 2*p.N, 2*p.N+1)
		}
		if p.FullBits != sw.AccumulatorBits || p.Dropped[2*p.N] != sw.OutputShift {
			return section{}, fmt.Errorf("CIC full width %d and output truncation %d in its plan, but AccumulatorBits %d and OutputShift %d in the widths", p.FullBits, p.Dropped[2*p.N], sw.AccumulatorBits, sw.OutputShift)
		}
		if p.GuardBits < 0 || p.GuardBits > p.FullBits {
			return section{}, fmt.Errorf("CIC GuardBits = %d: must lie in [0, %d]", p.GuardBits, p.FullBits)
		}
		regs := make([]int64, 2*p.N)
		drops := make([]int64, 2*p.N)
		for j := range regs {
			if p.RegisterBits[j] < 1 || p.RegisterBits[j] > maxFieldBits || p.Dropped[j] < 0 || p.Dropped[j] > maxFieldBits {
				return section{}, fmt.Errorf("CIC register %d: width %d, %d LSBs dropped: the width must lie in [1, %d], the drop in [0, %d]", j+1, p.RegisterBits[j], p.Dropped[j], maxFieldBits, maxFieldBits)
			}
			regs[j], drops[j] = int64(p.RegisterBits[j]), int64(p.Dropped[j])
		}
		sec.items = append(sec.items,
			item{name: n + "OUTPUT_SHIFT", doc: "LSBs truncated (floor) from the full register to make the output", value: int64(sw.OutputShift)},
			item{name: n + "ACC_BITS", doc: "full register width (Hogenauer's Bmax + 1 plus guard bits), bits", value: int64(sw.AccumulatorBits)},
			item{name: n + "ORDER", doc: "CIC order N (integrators, combs)", value: int64(p.N)},
			item{name: n + "DELAY", doc: "comb differential delay M, samples", value: int64(p.M)},
			item{name: n + "GUARD_BITS", doc: "guard bits included in ACC_BITS", value: int64(p.GuardBits)},
			item{name: n + "NUM_REGS", doc: "registers: 2 N, integrators 1..N then combs 1..N", value: int64(2 * p.N)},
			item{name: n + "REG_BITS", doc: "width of each register, bits (index 0: integrator 1)", array: true, values: regs, length: n + "NUM_REGS"},
			item{name: n + "REG_DROPPED", doc: "LSBs truncated (floor) at each register's input", array: true, values: drops, length: n + "NUM_REGS"},
		)
		return sec, nil
	}
	cf := sw.Coefficients
	if err := checkCoefs(st, sw); err != nil {
		return section{}, err
	}
	sec.notes = append(sec.notes, fmt.Sprintf("Tap k is COEFS[k] / 2^COEF_FRAC; %d taps, %d bits.", len(cf.Ints), cf.Bits))
	sec.items = append(sec.items,
		item{name: n + "OUTPUT_SHIFT", doc: "LSBs rounded (half up) off the accumulator to make the output; negative: shift left", value: int64(sw.OutputShift)},
		item{name: n + "ACC_BITS", doc: "accumulator width (worst case, exact sum of products), bits", value: int64(sw.AccumulatorBits)},
		item{name: n + "NUM_TAPS", doc: "coefficients, the full impulse response, zeros included", value: int64(len(cf.Ints))},
		item{name: n + "COEF_BITS", doc: "coefficient word, bits, two's complement", value: int64(cf.Bits)},
		item{name: n + "COEF_FRAC", doc: "coefficient fractional bits: tap = COEFS[k] / 2^COEF_FRAC", value: int64(cf.Frac)},
		item{name: n + "COEFS", doc: "quantised coefficients, integers, index 0 first", array: true, values: cf.Ints, coef: true, elemBits: cf.Bits, length: n + "NUM_TAPS"},
	)
	return sec, nil
}

// checkCoefs checks an FIR's quantised coefficients against its stage and
// what the files can carry.
func checkCoefs(st fixed.Stage, sw *fixed.StageWidths) error {
	cf := sw.Coefficients
	if len(cf.Ints) == 0 {
		return fmt.Errorf("an FIR without coefficients")
	}
	if len(st.Taps) != 0 && len(st.Taps) != len(cf.Ints) {
		return fmt.Errorf("%d taps in the cascade but %d coefficients in the widths", len(st.Taps), len(cf.Ints))
	}
	if len(cf.Ints) > math.MaxInt32 {
		return fmt.Errorf("%d coefficients: at most %d are supported", len(cf.Ints), math.MaxInt32)
	}
	if cf.Bits < 2 || cf.Bits > maxCoefBits {
		return fmt.Errorf("coefficient width Bits = %d: must lie in [2, %d]", cf.Bits, maxCoefBits)
	}
	if cf.Frac < -maxFieldBits || cf.Frac > maxFieldBits {
		return fmt.Errorf("coefficient scale Frac = %d: must lie in [%d, %d]", cf.Frac, -maxFieldBits, maxFieldBits)
	}
	lim := int64(math.MaxInt64)
	if cf.Bits < 64 {
		lim = int64(1)<<(cf.Bits-1) - 1
	}
	for k, v := range cf.Ints {
		if v > lim || v < -lim {
			return fmt.Errorf("coefficient %d = %d does not fit %d bits (|h| <= %d)", k, v, cf.Bits, lim)
		}
	}
	return nil
}

// nonRecursive adds a non-recursive CIC's constants to sec: its order, its
// sub-stages and their widths, and the output truncation from the last.
func nonRecursive(sec section, n string, st fixed.Stage, sw *fixed.StageWidths) (section, error) {
	if st.N < 1 || st.N > 64 || st.M != 1 || st.R < 2 || st.R&(st.R-1) != 0 {
		return section{}, fmt.Errorf("non-recursive CIC N = %d, M = %d, R = %d: it needs N in [1, 64], M = 1 and R a power of two, at least 2", st.N, st.M, st.R)
	}
	k := 0
	for 1<<k < st.R {
		k++
	}
	if len(sw.SubStageBits) != k {
		return section{}, fmt.Errorf("non-recursive CIC of R = %d: its plan has %d sub-stage widths; want %d", st.R, len(sw.SubStageBits), k)
	}
	subs := make([]int64, k)
	for i, b := range sw.SubStageBits {
		if b < 1 || b > maxFieldBits {
			return section{}, fmt.Errorf("non-recursive CIC sub-stage %d: width %d must lie in [1, %d]", i+1, b, maxFieldBits)
		}
		subs[i] = int64(b)
	}
	if full := sw.SubStageBits[k-1]; full != sw.AccumulatorBits || sw.OutputShift != full-sw.OutputBits {
		return section{}, fmt.Errorf("non-recursive CIC: last sub-stage %d bits, but AccumulatorBits %d and OutputShift %d (want %d) in the widths", full, sw.AccumulatorBits, sw.OutputShift, full-sw.OutputBits)
	}
	sec.items = append(sec.items,
		item{name: n + "OUTPUT_SHIFT", doc: "LSBs truncated (floor) from the last sub-stage to make the output", value: int64(sw.OutputShift)},
		item{name: n + "ACC_BITS", doc: "the last sub-stage's width (full precision, Bin + N log2 R), bits", value: int64(sw.AccumulatorBits)},
		item{name: n + "ORDER", doc: "CIC order N: each sub-stage is (1 + z^-1)^N", value: int64(st.N)},
		item{name: n + "NUM_SUBSTAGES", doc: "sub-stages, each decimating by 2: log2 R", value: int64(k)},
		item{name: n + "SUBSTAGE_BITS", doc: "each sub-stage's output width, exact, Bin + N i bits (index 0: sub-stage 1)", array: true, values: subs, length: n + "NUM_SUBSTAGES"},
	)
	return sec, nil
}

func kindName(cic, hb, nr bool) string {
	switch {
	case cic && nr:
		return "non-recursive CIC"
	case cic:
		return "CIC"
	case hb:
		return "half-band FIR"
	}
	return "FIR"
}

// headerLines are the opening comment's lines, shared by the three files.
func (m *model) headerLines(file string) []string {
	dir := "a decimation"
	if m.interp {
		dir = "an interpolation"
	}
	l := []string{file + ": the fixed-point plan of " + dir + " chain, generated by stepdown."}
	if m.notation != "" {
		l = append(l, "Chain: "+m.notation)
	}
	return append(l,
		"",
		"Planning data for hardware, ahead of RTL: the team's bit-true",
		"simulation of the RTL and its sign-off remain the reference.",
		"Regenerate rather than edit. Conventions (names, numbering, units):",
		"the documentation of stepdown's package handoff/headers.",
		"Stages are numbered from 1 in signal order; widths are in bits;",
		"data and coefficients are two's complement.",
	)
}
