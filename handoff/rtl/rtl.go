package rtl

import (
	"bytes"
	"fmt"
	"strings"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/fixed"
)

// Options tunes the generated files. The zero value is the default: modules
// named stepdown_chain, stepdown_s<k>_<kind> and stepdown_tb, and a
// testbench that puts 0 to 3 idle cycles between valid inputs.
type Options struct {
	// Prefix begins every module's name: <Prefix>_chain, <Prefix>_s<k>_cic
	// (or _hb, _fir) and <Prefix>_tb. It must be a Verilog identifier of
	// letters, digits and underscores that starts with a letter, at most 40
	// characters; "" means "stepdown".
	Prefix string
	// MaxIdle is the most idle cycles (in_valid low) the testbench puts
	// before each valid input, drawn from a 16-bit LFSR restarted for every
	// signal, so the pattern is the same on every run: 0 means 3, a negative
	// value none (one input every cycle). At most 255. An interpolation
	// chain's testbench also stalls its output (out_ready low) for up to
	// MaxIdle cycles before each output sample, from a second LFSR.
	MaxIdle int
}

// Limits of the generator: beyond them the file would be unreasonably large
// or the integer model that checks it (fixed.Model) would not hold the
// values.
const (
	// MaxTaps bounds an FIR stage's length.
	MaxTaps = 1 << 16
	// MaxBits bounds every FIR accumulator and data word (int64 in
	// fixed.Model).
	MaxBits = 63
	// MaxCICBits bounds a CIC's registers: fixed.MaxModelBits (127), which
	// fixed.Model runs in 128-bit arithmetic.
	MaxCICBits = fixed.MaxModelBits
)

func (o Options) prefix() (string, error) {
	p := o.Prefix
	if p == "" {
		return "stepdown", nil
	}
	ok := len(p) <= 40 && (p[0] >= 'a' && p[0] <= 'z' || p[0] >= 'A' && p[0] <= 'Z')
	for i := 0; ok && i < len(p); i++ {
		ch := p[i]
		ok = ch >= 'a' && ch <= 'z' || ch >= 'A' && ch <= 'Z' || ch >= '0' && ch <= '9' || ch == '_'
	}
	if !ok {
		return "", fmt.Errorf("rtl: options Prefix %q: must be a Verilog name of letters, digits and underscores starting with a letter, at most 40 characters", cut(p))
	}
	return p, nil
}

func (o Options) maxIdle() (int, error) {
	switch {
	case o.MaxIdle == 0:
		return 3, nil
	case o.MaxIdle < 0:
		return 0, nil
	case o.MaxIdle > 255:
		return 0, fmt.Errorf("rtl: options MaxIdle = %d: must be at most 255 idle cycles (0: 3, negative: none)", o.MaxIdle)
	}
	return o.MaxIdle, nil
}

// cut shortens s to a readable length for a message.
func cut(s string) string {
	if len(s) > 40 {
		return s[:37] + "..."
	}
	return s
}

// stage is one stage as the generator writes it, checked against its widths.
type stage struct {
	k      int    // 1-based
	kind   string // "cic", "hb" or "fir"
	module string
	in     int // input word
	out    int // output word
	r      int

	p   *chain.CICPruning // CIC
	nr  bool              // a non-recursive CIC: sub-stages (1 + z^-1)^N decimating by 2
	sub []int             // its sub-stages' output widths, Bin + N i

	h       []int64 // FIR: the quantised taps
	frac    int
	coef    int // coefficient width
	acc     int // accumulator width
	shift   int // OutputShift
	folded  bool
	nonzero int // non-zero taps

	interp bool                    // an interpolating stage: r is its L
	ci     *fixed.CICInterpolation // a CIC interpolator's registers
	centre int                     // a half-band interpolator's centre phase (its one tap 2^(frac-1)), or -1
}

// chainPlan is the whole chain as the generator writes it.
type chainPlan struct {
	prefix  string
	complex bool
	interp  bool // an interpolation chain: every stage interpolates
	in      int
	stages  []stage
}

// check turns (c, w) into the generator's plan, or an error naming the
// stage and the field that cannot be written as a model fixed.Model
// checks.
func check(c fixed.Cascade, w *fixed.Widths, o Options) (*chainPlan, error) {
	if c.Fractional() {
		return nil, fmt.Errorf("rtl: the chain has a fractional stage (polyphase or farrow); the hand-off is written for chains of integer stages only")
	}
	prefix, err := o.prefix()
	if err != nil {
		return nil, err
	}
	if w == nil {
		return nil, fmt.Errorf("rtl: no widths: give the plan fixed.Plan returned for the cascade")
	}
	if len(c.Stages) == 0 {
		return nil, fmt.Errorf("rtl: the cascade has no stages")
	}
	if len(w.Stages) != len(c.Stages) {
		return nil, fmt.Errorf("rtl: the widths plan %d stages, the cascade has %d: give the plan fixed.Plan returned for this cascade", len(w.Stages), len(c.Stages))
	}
	if w.InputBits < 1 || w.InputBits > 62 {
		return nil, fmt.Errorf("rtl: widths InputBits = %d: must lie in [1, 62] bits", w.InputBits)
	}
	cp := &chainPlan{prefix: prefix, complex: c.Complex, interp: c.Interpolate, in: w.InputBits}
	in := w.InputBits
	for i, st := range c.Stages {
		sw := &w.Stages[i]
		s := stage{k: i + 1, in: in, r: st.R, out: sw.OutputBits, interp: c.Interpolate, centre: -1}
		bad := func(format string, args ...any) error {
			return fmt.Errorf("rtl: stage %d: "+format, append([]any{i + 1}, args...)...)
		}
		if st.Interpolate != c.Interpolate || sw.Interpolate != c.Interpolate {
			return nil, bad("Interpolate is %v in the cascade's stage and %v in its widths, but the cascade's is %v: a chain runs in one direction", st.Interpolate, sw.Interpolate, c.Interpolate)
		}
		if st.R < 1 || st.R > 1<<24 {
			return nil, bad("factor R = %d: must lie in [1, %d]", st.R, 1<<24)
		}
		if sw.CIC != st.CIC || sw.R != st.R {
			return nil, bad("the widths are for another stage (CIC %v, R = %d; the cascade's stage: CIC %v, R = %d)", sw.CIC, sw.R, st.CIC, st.R)
		}
		if sw.InputBits != in {
			return nil, bad("widths InputBits = %d, but the word arriving from the stage before is %d bits", sw.InputBits, in)
		}
		if sw.OutputBits < 2 || sw.OutputBits > MaxBits {
			return nil, bad("OutputBits = %d: must lie in [2, %d] bits", sw.OutputBits, MaxBits)
		}
		var err error
		switch {
		case st.CIC && c.Interpolate:
			err = checkCICInterp(&s, st, sw)
		case st.CIC:
			err = checkCIC(&s, st, sw)
		case c.Interpolate:
			err = checkFIRInterp(&s, st, sw)
		default:
			err = checkFIR(&s, st, sw)
		}
		if err != nil {
			return nil, bad("%v", err)
		}
		if c.Interpolate && cp.ratio() > maxRatio/uint64(s.r) {
			return nil, bad("factor %d makes the chain's interpolation over %d, the most the testbench counts", s.r, uint64(maxRatio))
		}
		s.module = fmt.Sprintf("%s_s%d_%s", prefix, s.k, s.kind)
		cp.stages = append(cp.stages, s)
		in = s.out
	}
	return cp, nil
}

func checkCIC(s *stage, st fixed.Stage, sw *fixed.StageWidths) error {
	p := sw.Pruning
	if p == nil {
		return fmt.Errorf("the CIC has no register plan (widths Pruning is nil)")
	}
	if p.N != st.N || p.M != st.M || p.R != st.R || p.N < 1 || p.M < 1 {
		return fmt.Errorf("the register plan is for N = %d, M = %d, R = %d; the stage is N = %d, M = %d, R = %d (N and M at least 1)", p.N, p.M, p.R, st.N, st.M, st.R)
	}
	if p.N > 32 || p.M > 64 {
		return fmt.Errorf("order N = %d, delay M = %d: at most N = 32 and M = 64 are written", p.N, p.M)
	}
	if p.InputBits != s.in || p.OutputBits != sw.OutputBits {
		return fmt.Errorf("the register plan's words (%d bits in, %d out) differ from the stage's (%d in, %d out)", p.InputBits, p.OutputBits, s.in, sw.OutputBits)
	}
	if st.NonRecursive != sw.NonRecursive {
		return fmt.Errorf("the widths plan a %s CIC, the cascade's stage is %s", formName(sw.NonRecursive), formName(st.NonRecursive))
	}
	if sw.NonRecursive {
		return checkNR(s, sw)
	}
	if p.FullBits > MaxCICBits {
		return fmt.Errorf("the CIC's full register is %d bits; at most %d are written (the integer model that checks it holds %d)", p.FullBits, MaxCICBits, MaxCICBits)
	}
	if len(p.Dropped) != 2*p.N+1 || len(p.RegisterBits) != 2*p.N {
		return fmt.Errorf("the register plan has %d truncation points and %d registers; a CIC of order %d has %d and %d", len(p.Dropped), len(p.RegisterBits), p.N, 2*p.N+1, 2*p.N)
	}
	for j, d := range p.Dropped {
		if d < 0 || d > MaxCICBits {
			return fmt.Errorf("register %d drops %d LSBs: must lie in [0, %d]", j+1, d, MaxCICBits)
		}
	}
	for j, b := range p.RegisterBits {
		if b < 1 || b > MaxCICBits {
			return fmt.Errorf("register %d is %d bits: must lie in [1, %d]", j+1, b, MaxCICBits)
		}
	}
	s.kind, s.p = "cic", p
	return nil
}

func formName(nr bool) string {
	if nr {
		return "non-recursive"
	}
	return "recursive"
}

// checkNR checks a non-recursive CIC's plan: M = 1, R = 2^k, k sub-stage
// widths Bin + N i (chain.NonRecursiveBits), each at most MaxBits (the
// integer model runs them in int64), and the output the top OutputBits of
// the last.
func checkNR(s *stage, sw *fixed.StageWidths) error {
	p := sw.Pruning
	if err := chain.NonRecursiveOK(p.M, p.R); err != nil {
		return err
	}
	want := chain.NonRecursiveBits(p.N, p.R, s.in)
	if len(sw.SubStageBits) != len(want) {
		return fmt.Errorf("the non-recursive CIC plans %d sub-stages; R = %d needs %d", len(sw.SubStageBits), p.R, len(want))
	}
	for i, b := range sw.SubStageBits {
		if b != want[i] {
			return fmt.Errorf("sub-stage %d is %d bits; order %d on a %d-bit input makes it %d (Bin + N i, full precision)", i+1, b, p.N, s.in, want[i])
		}
	}
	full := want[len(want)-1]
	if full > MaxBits {
		return fmt.Errorf("the non-recursive CIC's last sub-stage is %d bits; at most %d are written (the integer model that checks it holds %d)", full, MaxBits, MaxBits)
	}
	if sh := sw.OutputShift; sh != full-sw.OutputBits || sh < 0 {
		return fmt.Errorf("OutputShift = %d: the %d-bit output of a %d-bit last sub-stage drops %d LSBs", sh, sw.OutputBits, full, full-sw.OutputBits)
	}
	s.kind, s.p, s.nr, s.sub, s.shift = "cic", p, true, want, sw.OutputShift
	return nil
}

func checkFIR(s *stage, st fixed.Stage, sw *fixed.StageWidths) error {
	h := sw.Coefficients.Ints
	if len(h) == 0 || len(h) > MaxTaps {
		return fmt.Errorf("%d quantised taps: must be 1 to %d", len(h), MaxTaps)
	}
	const hmax = int64(1) << 48
	for k, v := range h {
		if v > hmax || v < -hmax {
			return fmt.Errorf("tap %d = %d: taps are at most 2^48 in magnitude", k, v)
		}
	}
	if need := fixed.AccumulatorBits(h, s.in); sw.AccumulatorBits < need || sw.AccumulatorBits > MaxBits {
		return fmt.Errorf("AccumulatorBits = %d: the %d-bit data and these taps need %d, and at most %d are written", sw.AccumulatorBits, s.in, need, MaxBits)
	}
	acc, sh := sw.AccumulatorBits, sw.OutputShift
	// fixed.Model rounds in int64: the rounding constant 2^(shift-1) and a
	// left shift of the accumulator must fit.
	if sh > 62 || acc-sh > 64 {
		return fmt.Errorf("OutputShift = %d with a %d-bit accumulator: the shift must lie in [%d, 62]", sh, acc, acc-64)
	}
	s.kind = "fir"
	if st.HalfBand {
		s.kind = "hb"
	}
	s.h, s.frac, s.coef, s.acc, s.shift = h, sw.Coefficients.Frac, sw.Coefficients.Bits, acc, sh
	s.folded = len(h) > 1
	for k := range h {
		if h[k] != h[len(h)-1-k] {
			s.folded = false
		}
		if h[k] != 0 {
			s.nonzero++
		}
	}
	return nil
}

// Model returns the Verilog reference model of the cascade c planned as w:
// one module per stage and the top module <Prefix>_chain (see the package
// documentation for names, ports and timing). The arithmetic is
// fixed.Model's, bit for bit. It returns an error when w is not a plan of
// c, or a width lies beyond the limits (MaxBits, MaxTaps).
func Model(c fixed.Cascade, w *fixed.Widths, o Options) ([]byte, error) {
	cp, err := check(c, w, o)
	if err != nil {
		return nil, err
	}
	var b bytes.Buffer
	if cp.interp {
		cp.writeInterpModel(&b)
		return b.Bytes(), nil
	}
	cp.header(&b, "the reference model of the planned chain", "")
	b.WriteString("`timescale 1ns / 1ps\n")
	for i := range cp.stages {
		s := &cp.stages[i]
		b.WriteString("\n")
		if s.nr {
			cp.writeNR(&b, s)
		} else if s.kind == "cic" {
			cp.writeCIC(&b, s)
		} else {
			cp.writeFIR(&b, s)
		}
	}
	b.WriteString("\n")
	cp.writeTop(&b)
	return b.Bytes(), nil
}

// chans returns the data channels' port suffixes.
func (cp *chainPlan) chans() []string {
	if cp.complex {
		return []string{"i", "q"}
	}
	return []string{"i"}
}

// header writes the file's comment header: what it is and what it is not,
// and the stage list with its widths.
func (cp *chainPlan) header(b *bytes.Buffer, what, extra string) {
	fmt.Fprintf(b, "// Generated by stepdown: %s.\n", what)
	b.WriteString(`//
// This is a REFERENCE model, written to prove an implementation of the
// chain bit-exact against stepdown's integer model (the same arithmetic as
// the bit-true run). It is behavioural, not a product for synthesis or
// sign-off: the team's own bit-true RTL simulation and sign-off remain the
// reference.
//
`)
	kind := "real"
	if cp.complex {
		kind = "complex (I/Q: two identical real paths)"
	}
	if cp.interp {
		kind += fmt.Sprintf(" interpolation chain, L = %d", cp.ratio())
	}
	fmt.Fprintf(b, "// Chain: %s, %d-bit input, %d stage(s), two's-complement words:\n", kind, cp.in, len(cp.stages))
	for _, s := range cp.stages {
		b.WriteString("//   " + s.describe() + "\n")
	}
	b.WriteString(extra)
}

// describe is the stage's line in the header.
func (s *stage) describe() string {
	if s.interp {
		return s.describeInterp()
	}
	if s.nr {
		subs := make([]string, len(s.sub))
		for i, v := range s.sub {
			subs[i] = fmt.Sprint(v)
		}
		return fmt.Sprintf("stage %d (%s): CIC N = %d, M = 1, R = %d, non-recursive: %d sub-stages (1 + z^-1)^%d decimating by 2, exact, %s bits; %d-bit input; output truncated by %d LSBs to %d bits",
			s.k, s.module, s.p.N, s.r, len(s.sub), s.p.N, strings.Join(subs, " "), s.in, s.shift, s.out)
	}
	if s.kind == "cic" {
		p := s.p
		regs := make([]string, len(p.RegisterBits))
		for j, v := range p.RegisterBits {
			regs[j] = fmt.Sprint(v)
		}
		drops := make([]string, len(p.Dropped))
		for j, v := range p.Dropped {
			drops[j] = fmt.Sprint(v)
		}
		return fmt.Sprintf("stage %d (%s): CIC N = %d, M = %d, R = %d; %d-bit input, %d-bit full register; registers %s bits (integrators, then combs); LSBs dropped %s; %d-bit output",
			s.k, s.module, p.N, p.M, p.R, s.in, p.FullBits, strings.Join(regs, " "), strings.Join(drops, " "), s.out)
	}
	name := "FIR"
	if s.kind == "hb" {
		name = "half-band"
	}
	sym := "not symmetric (direct form)"
	if s.folded {
		sym = "symmetric (folded)"
	}
	var out string
	switch {
	case s.shift > 0:
		out = fmt.Sprintf("round half up dropping %d LSBs", s.shift)
	case s.shift == 0:
		out = "no rounding"
	default:
		out = fmt.Sprintf("shift left %d bits", -s.shift)
	}
	return fmt.Sprintf("stage %d (%s): %s R = %d, %d taps (%d non-zero, %s), %d-bit coefficients (Frac %d); %d-bit input, %d-bit accumulator; %s, saturate to %d-bit output",
		s.k, s.module, name, s.r, len(s.h), s.nonzero, sym, s.coef, s.frac, s.in, s.acc, out, s.out)
}

// ports writes a stage module's port list.
func (cp *chainPlan) ports(b *bytes.Buffer, s *stage) {
	fmt.Fprintf(b, "module %s (\n", s.module)
	b.WriteString("  input  wire clk,\n  input  wire rst,\n  input  wire in_valid,\n")
	for _, ch := range cp.chans() {
		fmt.Fprintf(b, "  input  wire signed %s in_%s,\n", vec(s.in), ch)
	}
	b.WriteString("  output reg  out_valid")
	for _, ch := range cp.chans() {
		fmt.Fprintf(b, ",\n  output reg  signed %s out_%s", vec(s.out), ch)
	}
	b.WriteString("\n);\n")
}

// phase writes the decimation phase counter's declaration; it returns the
// condition under which an output is due ("" when every input gives one).
func phaseDecl(b *bytes.Buffer, r int) (due string, width int) {
	if r == 1 {
		return "", 0
	}
	width = bitsFor(r)
	fmt.Fprintf(b, "  // Inputs accepted since the last output, modulo R: an output is due\n  // with the input that arrives at phase 0 (input samples 0, R, 2R, ...).\n")
	fmt.Fprintf(b, "  reg %s phase;\n", vec(width))
	return fmt.Sprintf("phase == %d'd0", width), width
}

func phaseStep(b *bytes.Buffer, r, width int, indent string) {
	if r == 1 {
		return
	}
	fmt.Fprintf(b, "%sphase <= (phase == %d'd%d) ? %d'd0 : phase + %d'd1;\n", indent, width, r-1, width, width)
}

// writeCIC writes a pruned CIC decimator: the integrators at the input
// rate, the combs at the output rate, every register truncated (floor) at
// its input and wrapped at its width, as chain.PruneCIC plans them.
func (cp *chainPlan) writeCIC(b *bytes.Buffer, s *stage) {
	p := s.p
	n, m := p.N, p.M
	fmt.Fprintf(b, "// Stage %d: CIC decimator, order N = %d, differential delay M = %d, R = %d.\n", s.k, n, m, p.R)
	b.WriteString(`// Register j holds its value in units of 2^Dropped[j]: its input is
// truncated (floor) from the unit of the register before and the sum wraps
// at the register's width (Hogenauer's pruning; exact at the output because
// every register keeps the full register's MSB). The integrators run at the
// input rate; the combs and the output at phase 0.
`)
	cp.ports(b, s)
	due, pw := phaseDecl(b, p.R)
	for _, ch := range cp.chans() {
		src, ws, unit := "in_"+ch, s.in, 0
		for j := 0; j < n; j++ {
			rb, d := p.RegisterBits[j], p.Dropped[j]
			reg := fmt.Sprintf("integ%d_%s", j+1, ch)
			fmt.Fprintf(b, "  // integrator %d (%s): drops %d LSBs at its input, %d-bit register\n", j+1, ch, d, rb)
			fmt.Fprintf(b, "  reg  %s %s;\n", vec(rb), reg)
			fmt.Fprintf(b, "  wire %s %s_next = %s + %s;\n", vec(rb), reg, reg, bitsOf(src, ws, d-unit, rb))
			src, ws, unit = reg+"_next", rb, d
		}
		for j := 0; j < n; j++ {
			rb, d := p.RegisterBits[n+j], p.Dropped[n+j]
			name := fmt.Sprintf("comb%d_%s", j+1, ch)
			fmt.Fprintf(b, "  // comb %d (%s): drops %d LSBs at its input, %d-bit registers, y = x - x[%d back]\n", j+1, ch, d, rb, m)
			fmt.Fprintf(b, "  wire %s %s_in = %s;\n", vec(rb), name, bitsOf(src, ws, d-unit, rb))
			var regs []string
			for t := 1; t <= m; t++ {
				regs = append(regs, fmt.Sprintf("%s_d%d", name, t))
			}
			writeList(b, fmt.Sprintf("  reg  %s ", vec(rb)), regs)
			fmt.Fprintf(b, "  wire %s %s_out = %s_in - %s_d%d;\n", vec(rb), name, name, name, m)
			src, ws, unit = name+"_out", rb, d
		}
		fmt.Fprintf(b, "  // output (%s): drops %d LSBs, %d bits\n", ch, p.Dropped[2*n], s.out)
		fmt.Fprintf(b, "  wire %s y_%s = %s;\n", vec(s.out), ch, bitsOf(src, ws, p.Dropped[2*n]-unit, s.out))
	}
	b.WriteString("\n  always @(posedge clk) begin\n    if (rst) begin\n")
	for _, ch := range cp.chans() {
		for j := 0; j < n; j++ {
			fmt.Fprintf(b, "      integ%d_%s <= %d'd0;\n", j+1, ch, p.RegisterBits[j])
		}
		for j := 0; j < n; j++ {
			for t := 1; t <= m; t++ {
				fmt.Fprintf(b, "      comb%d_%s_d%d <= %d'd0;\n", j+1, ch, t, p.RegisterBits[n+j])
			}
		}
		fmt.Fprintf(b, "      out_%s <= %d'sd0;\n", ch, s.out)
	}
	if pw > 0 {
		fmt.Fprintf(b, "      phase <= %d'd0;\n", pw)
	}
	b.WriteString("      out_valid <= 1'b0;\n    end else begin\n      out_valid <= 1'b0;\n      if (in_valid) begin\n")
	for _, ch := range cp.chans() {
		for j := 0; j < n; j++ {
			fmt.Fprintf(b, "        integ%d_%s <= integ%d_%s_next;\n", j+1, ch, j+1, ch)
		}
	}
	ind := "        "
	if due != "" {
		fmt.Fprintf(b, "        if (%s) begin\n", due)
		ind += "  "
	}
	for _, ch := range cp.chans() {
		for j := 0; j < n; j++ {
			name := fmt.Sprintf("comb%d_%s", j+1, ch)
			fmt.Fprintf(b, "%s%s_d1 <= %s_in;\n", ind, name, name)
			for t := 2; t <= m; t++ {
				fmt.Fprintf(b, "%s%s_d%d <= %s_d%d;\n", ind, name, t, name, t-1)
			}
		}
		fmt.Fprintf(b, "%sout_%s <= y_%s;\n", ind, ch, ch)
	}
	fmt.Fprintf(b, "%sout_valid <= 1'b1;\n", ind)
	if due != "" {
		b.WriteString("        end\n")
	}
	phaseStep(b, p.R, pw, "        ")
	b.WriteString("      end\n    end\n  end\nendmodule\n")
}

// writeNR writes a non-recursive CIC decimator (chain.NonRecursive): log2 R
// sub-stages in a row, sub-stage i computing y_i[m] = sum_j C(N, j)
// x_i[2m - j] exactly at its width Bin + N i with the input that arrives at
// its even phase, as fixed.Model's nrState does, and the last one's output
// truncated (floor) to OutputBits.
func (cp *chainPlan) writeNR(b *bytes.Buffer, s *stage) {
	n, k := s.p.N, len(s.sub)
	binom := make([]int64, n+1)
	binom[0] = 1
	for j := 1; j <= n; j++ {
		binom[j] = binom[j-1] * int64(n-j+1) / int64(j)
	}
	fmt.Fprintf(b, "// Stage %d: non-recursive CIC decimator, order N = %d, R = %d: %d sub-stages\n", s.k, n, s.p.R, k)
	fmt.Fprintf(b, `// (1 + z^-1)^%d, each decimating by 2, with no integrator and no feedback.
// Sub-stage i computes y_i[m] = sum_j C(%d, j) x_i[2m - j] (inputs before
// the first zero) with the input that arrives at its even phase, exactly:
// the sum is taken modulo 2^W_i in its W_i = Bin + %d i bits, which hold
// every sum the input word can make, so the modular sum is the sum. Its
// delay line holds its last %d inputs. Every sub-stage of one input runs
// in the same clock (behavioural); the output keeps the top %d bits of the
// last sub-stage, truncated (floor).
`, n, n, n, n, s.out)
	cp.ports(b, s)
	b.WriteString("  // odd<i>: sub-stage i's next input is odd-numbered (no output); v<i>:\n  // sub-stage i gives an output this clock (v0 is in_valid).\n")
	b.WriteString("  wire v0 = in_valid;\n")
	for i := 1; i <= k; i++ {
		fmt.Fprintf(b, "  reg  odd%d;\n  wire v%d = v%d & ~odd%d;\n", i, i, i-1, i)
	}
	for _, ch := range cp.chans() {
		src, ws := "in_"+ch, s.in
		for i := 1; i <= k; i++ {
			wi := s.sub[i-1]
			fmt.Fprintf(b, "  // sub-stage %d (%s): %d-bit input, %d-bit output\n", i, ch, ws, wi)
			var regs []string
			for t := 1; t <= n; t++ {
				regs = append(regs, fmt.Sprintf("sub%d_%s_d%d", i, ch, t))
			}
			writeList(b, fmt.Sprintf("  reg  %s ", vec(ws)), regs)
			y := fmt.Sprintf("sub%d_%s", i, ch)
			fmt.Fprintf(b, "  reg  %s %s;\n  always @* begin\n", vec(wi), y)
			for j := 0; j <= n; j++ {
				x := bitsOf(src, ws, 0, wi)
				if j > 0 {
					x = bitsOf(fmt.Sprintf("sub%d_%s_d%d", i, ch, j), ws, 0, wi)
				}
				prev := y + " + "
				if j == 0 {
					prev = ""
				}
				if binom[j] == 1 {
					fmt.Fprintf(b, "    %s = %s%s;  // C(%d, %d) = 1\n", y, prev, x, n, j)
				} else {
					fmt.Fprintf(b, "    %s = %s%s * %d'd%d;  // C(%d, %d)\n", y, prev, x, wi, binom[j], n, j)
				}
			}
			b.WriteString("  end\n")
			src, ws = y, wi
		}
		fmt.Fprintf(b, "  // output (%s): drops %d LSBs, %d bits\n", ch, s.shift, s.out)
		fmt.Fprintf(b, "  wire %s y_%s = %s;\n", vec(s.out), ch, bitsOf(src, ws, s.shift, s.out))
	}
	b.WriteString("\n  always @(posedge clk) begin\n    if (rst) begin\n")
	for i := 1; i <= k; i++ {
		fmt.Fprintf(b, "      odd%d <= 1'b0;\n", i)
	}
	for _, ch := range cp.chans() {
		ws := s.in
		for i := 1; i <= k; i++ {
			for t := 1; t <= n; t++ {
				fmt.Fprintf(b, "      sub%d_%s_d%d <= %d'd0;\n", i, ch, t, ws)
			}
			ws = s.sub[i-1]
		}
		fmt.Fprintf(b, "      out_%s <= %d'sd0;\n", ch, s.out)
	}
	b.WriteString("      out_valid <= 1'b0;\n    end else begin\n      out_valid <= 1'b0;\n")
	for i := 1; i <= k; i++ {
		fmt.Fprintf(b, "      if (v%d) begin\n        odd%d <= ~odd%d;\n", i-1, i, i)
		for _, ch := range cp.chans() {
			src := "in_" + ch
			if i > 1 {
				src = fmt.Sprintf("sub%d_%s", i-1, ch)
			}
			fmt.Fprintf(b, "        sub%d_%s_d1 <= %s;\n", i, ch, src)
			for t := 2; t <= n; t++ {
				fmt.Fprintf(b, "        sub%d_%s_d%d <= sub%d_%s_d%d;\n", i, ch, t, i, ch, t-1)
			}
		}
		b.WriteString("      end\n")
	}
	fmt.Fprintf(b, "      if (v%d) begin\n", k)
	for _, ch := range cp.chans() {
		fmt.Fprintf(b, "        out_%s <= y_%s;\n", ch, ch)
	}
	b.WriteString("        out_valid <= 1'b1;\n      end\n    end\n  end\nendmodule\n")
}

// writeFIR writes a decimating FIR or half-band: the exact sum of products
// at the phase where an output is due, folded where the taps are symmetric
// and without the zero taps, rounded half up at OutputShift and saturated.
func (cp *chainPlan) writeFIR(b *bytes.Buffer, s *stage) {
	l, a := len(s.h), s.acc
	name := "FIR"
	if s.kind == "hb" {
		name = "half-band"
	}
	fmt.Fprintf(b, "// Stage %d: %s decimator, R = %d, %d taps, %d of them non-zero.\n", s.k, name, s.r, l, s.nonzero)
	b.WriteString(`// Polyphase in time: one output is computed, whole, with the input that
// arrives at phase 0: y[m] = sum_k h[k] x[mR - k], inputs before the first
// zero. The sum is exact: it is taken modulo 2^A in an A-bit accumulator,
// which holds every sum the input word can make, so the modular sum is the
// sum. Zero taps are skipped`)
	if s.folded {
		b.WriteString("; symmetric pairs share one product of the pre-added\n// inputs, h[k] (x[mR-k] + x[mR-(L-1-k)]).\n")
	} else {
		b.WriteString(".\n")
	}
	fmt.Fprintf(b, "// Output: ")
	switch {
	case s.shift > 0:
		fmt.Fprintf(b, "(acc + 2^%d) >> %d (round half up), ", s.shift-1, s.shift)
	case s.shift < 0:
		fmt.Fprintf(b, "acc << %d, ", -s.shift)
	}
	fmt.Fprintf(b, "saturated to %d bits.\n", s.out)
	cp.ports(b, s)
	due, pw := phaseDecl(b, s.r)
	if l > 1 {
		b.WriteString("  // The delay line: d<t>_c holds the input t samples back.\n")
		for _, ch := range cp.chans() {
			var regs []string
			for t := 1; t < l; t++ {
				regs = append(regs, fmt.Sprintf("d%d_%s", t, ch))
			}
			writeList(b, fmt.Sprintf("  reg  %s ", vec(s.in)), regs)
		}
	}
	for _, ch := range cp.chans() {
		// x(k) is the input k samples back, sign-extended to the accumulator.
		x := func(k int) string {
			if k == 0 {
				return bitsOf("in_"+ch, s.in, 0, a)
			}
			return bitsOf(fmt.Sprintf("d%d_%s", k, ch), s.in, 0, a)
		}
		acc := "acc_" + ch
		var terms []string
		term := func(v int64, operand, note string) {
			op, mag := "+", v
			if v < 0 {
				op, mag = "-", -v
			}
			terms = append(terms, fmt.Sprintf("    %s = %s %s %s * %d'd%d;  // %s", acc, acc, op, operand, a, mag, note))
		}
		if s.folded {
			for k := 0; k < l/2; k++ {
				if s.h[k] != 0 {
					term(s.h[k], fmt.Sprintf("(%s + %s)", x(k), x(l-1-k)), fmt.Sprintf("h[%d] = h[%d] = %d", k, l-1-k, s.h[k]))
				}
			}
			if c := l / 2; l%2 == 1 && s.h[c] != 0 {
				term(s.h[c], x(c), fmt.Sprintf("h[%d] = %d (centre)", c, s.h[c]))
			}
		} else {
			for k := 0; k < l; k++ {
				if s.h[k] != 0 {
					term(s.h[k], x(k), fmt.Sprintf("h[%d] = %d", k, s.h[k]))
				}
			}
		}
		// A procedural sum: evaluated once when its inputs change, where a
		// chain of continuous assignments would be re-evaluated once per
		// changed term.
		fmt.Fprintf(b, "  // channel %s: the sum of products, every operand sign-extended to %d bits\n", ch, a)
		fmt.Fprintf(b, "  reg  %s %s;\n  always @* begin\n    %s = %d'd0;\n", vec(a), acc, acc, a)
		for _, t := range terms {
			b.WriteString(t + "\n")
		}
		b.WriteString("  end\n")
		// r: the accumulator rounded or shifted, wr bits.
		var r string
		var wr int
		switch {
		case s.shift > 0:
			wx := max(a, s.shift) + 1
			fmt.Fprintf(b, "  wire %s rnd_%s = %s + %s;  // + 2^%d, one bit wider\n", vec(wx), ch, bitsOf(acc, a, 0, wx), pow2Lit(wx, s.shift-1), s.shift-1)
			wr = wx - s.shift
			r = bitsOf("rnd_"+ch, wx, s.shift, wr)
		case s.shift == 0:
			r, wr = acc, a
		default:
			wr = a - s.shift
			r = bitsOf(acc, a, s.shift, wr)
		}
		fmt.Fprintf(b, "  wire %s r_%s = %s;\n", vec(wr), ch, r)
		if wr <= s.out {
			fmt.Fprintf(b, "  wire %s y_%s = %s;  // no saturation needed\n", vec(s.out), ch, bitsOf("r_"+ch, wr, 0, s.out))
			continue
		}
		top := fmt.Sprintf("r_%s[%d:%d]", ch, wr-2, s.out-1)
		if wr-2 == s.out-1 {
			top = fmt.Sprintf("r_%s[%d]", ch, wr-2)
		}
		fmt.Fprintf(b, "  // saturate: the bits above the output's sign bit must all equal it\n")
		fmt.Fprintf(b, "  wire hi_%s = ~r_%s[%d] & (|%s);\n", ch, ch, wr-1, top)
		fmt.Fprintf(b, "  wire lo_%s = r_%s[%d] & ~(&%s);\n", ch, ch, wr-1, top)
		fmt.Fprintf(b, "  wire %s y_%s = hi_%s ? %s : lo_%s ? %s : r_%s[%d:0];\n", vec(s.out), ch, ch, maxLit(s.out), ch, minLit(s.out), ch, s.out-1)
	}
	b.WriteString("\n  always @(posedge clk) begin\n    if (rst) begin\n")
	for _, ch := range cp.chans() {
		for t := 1; t < l; t++ {
			fmt.Fprintf(b, "      d%d_%s <= %d'd0;\n", t, ch, s.in)
		}
		fmt.Fprintf(b, "      out_%s <= %d'sd0;\n", ch, s.out)
	}
	if pw > 0 {
		fmt.Fprintf(b, "      phase <= %d'd0;\n", pw)
	}
	b.WriteString("      out_valid <= 1'b0;\n    end else begin\n      out_valid <= 1'b0;\n      if (in_valid) begin\n")
	for _, ch := range cp.chans() {
		for t := 1; t < l; t++ {
			prev := fmt.Sprintf("d%d_%s", t-1, ch)
			if t == 1 {
				prev = "in_" + ch
			}
			fmt.Fprintf(b, "        d%d_%s <= %s;\n", t, ch, prev)
		}
	}
	ind := "        "
	if due != "" {
		fmt.Fprintf(b, "        if (%s) begin\n", due)
		ind += "  "
	}
	for _, ch := range cp.chans() {
		fmt.Fprintf(b, "%sout_%s <= y_%s;\n", ind, ch, ch)
	}
	fmt.Fprintf(b, "%sout_valid <= 1'b1;\n", ind)
	if due != "" {
		b.WriteString("        end\n")
	}
	phaseStep(b, s.r, pw, "        ")
	b.WriteString("      end\n    end\n  end\nendmodule\n")
}

// writeTop writes <prefix>_chain: the stages in a row, each stage's output
// and valid strobe brought out, the last one's as out_valid/out_*.
func (cp *chainPlan) writeTop(b *bytes.Buffer) {
	last := cp.stages[len(cp.stages)-1]
	fmt.Fprintf(b, "// The chain: in_valid marks an input sample; s<k>_valid marks one of\n// stage k's outputs (one clock after the input that completes it), and\n// out_valid the chain's (stage %d's).\n", last.k)
	fmt.Fprintf(b, "module %s_chain (\n  input  wire clk,\n  input  wire rst,\n  input  wire in_valid,\n", cp.prefix)
	for _, ch := range cp.chans() {
		fmt.Fprintf(b, "  input  wire signed %s in_%s,\n", vec(cp.in), ch)
	}
	for _, s := range cp.stages {
		fmt.Fprintf(b, "  output wire s%d_valid,\n", s.k)
		for _, ch := range cp.chans() {
			fmt.Fprintf(b, "  output wire signed %s s%d_%s,\n", vec(s.out), s.k, ch)
		}
	}
	b.WriteString("  output wire out_valid")
	for _, ch := range cp.chans() {
		fmt.Fprintf(b, ",\n  output wire signed %s out_%s", vec(last.out), ch)
	}
	b.WriteString("\n);\n")
	prev := "in"
	for _, s := range cp.stages {
		fmt.Fprintf(b, "  %s u_s%d (\n    .clk(clk), .rst(rst), .in_valid(%s_valid)", s.module, s.k, prev)
		for _, ch := range cp.chans() {
			fmt.Fprintf(b, ", .in_%s(%s_%s)", ch, prev, ch)
		}
		fmt.Fprintf(b, ",\n    .out_valid(s%d_valid)", s.k)
		for _, ch := range cp.chans() {
			fmt.Fprintf(b, ", .out_%s(s%d_%s)", ch, s.k, ch)
		}
		b.WriteString("\n  );\n")
		prev = fmt.Sprintf("s%d", s.k)
	}
	fmt.Fprintf(b, "  assign out_valid = s%d_valid;\n", last.k)
	for _, ch := range cp.chans() {
		fmt.Fprintf(b, "  assign out_%s = s%d_%s;\n", ch, last.k, ch)
	}
	b.WriteString("endmodule\n")
}

// writeList declares names after decl, a few to a line.
func writeList(b *bytes.Buffer, decl string, names []string) {
	for i := 0; i < len(names); i += 8 {
		fmt.Fprintf(b, "%s%s;\n", decl, strings.Join(names[i:min(i+8, len(names))], ", "))
	}
}
