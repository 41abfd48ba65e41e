package rtl

import (
	"bytes"
	"fmt"
	"strings"

	"github.com/stepdown-dsp/stepdown/chain/fixed"
)

// ratio returns the chain's interpolation (or decimation): the product of
// its stages' factors, each at most 2^24 (check).
func (cp *chainPlan) ratio() uint64 {
	l := uint64(1)
	for _, s := range cp.stages {
		l *= uint64(s.r)
	}
	return l
}

// maxRatio bounds an interpolation chain's L, so that the testbench's
// counts (inputs times L) stay far within 64 bits.
const maxRatio = 1 << 40

// checkCICInterp checks a CIC interpolator's plan (fixed.CICInterpolation):
// its order, delay and factor, its 2N registers of at most MaxCICBits, its
// words, and the output the top OutputBits of the last integrator.
func checkCICInterp(s *stage, st fixed.Stage, sw *fixed.StageWidths) error {
	p := sw.CICInterp
	if p == nil {
		return fmt.Errorf("the CIC interpolator has no register plan (widths CICInterp is nil)")
	}
	if st.NonRecursive || sw.NonRecursive {
		return fmt.Errorf("a non-recursive CIC in an interpolation chain: the form is built for decimation only")
	}
	if p.N != st.N || p.M != st.M || p.R != st.R || p.N < 1 || p.M < 1 {
		return fmt.Errorf("the register plan is for N = %d, M = %d, R = %d; the stage is N = %d, M = %d, R = %d (N and M at least 1)", p.N, p.M, p.R, st.N, st.M, st.R)
	}
	if p.N > 32 || p.M > 64 {
		return fmt.Errorf("order N = %d, delay M = %d: at most N = 32 and M = 64 are written", p.N, p.M)
	}
	if len(p.RegisterBits) != 2*p.N {
		return fmt.Errorf("the register plan has %d registers; a CIC interpolator of order %d has %d (N combs, N integrators)", len(p.RegisterBits), p.N, 2*p.N)
	}
	for j, b := range p.RegisterBits {
		if b < 2 || b > MaxCICBits {
			return fmt.Errorf("register %d is %d bits: must lie in [2, %d] (the integer model that checks it holds %d)", j+1, b, MaxCICBits, MaxCICBits)
		}
	}
	if p.InputBits != s.in || p.OutputBits != sw.OutputBits {
		return fmt.Errorf("the register plan's words (%d bits in, %d out) differ from the stage's (%d in, %d out)", p.InputBits, p.OutputBits, s.in, sw.OutputBits)
	}
	full := p.FullBits()
	if sh := sw.OutputShift; sh != full-sw.OutputBits || sh < 0 {
		return fmt.Errorf("OutputShift = %d: the %d-bit output of a %d-bit last integrator drops %d LSBs", sh, sw.OutputBits, full, full-sw.OutputBits)
	}
	s.kind, s.ci, s.shift = "cic", p, sw.OutputShift
	return nil
}

// checkFIRInterp checks an interpolating FIR's plan: its taps, the
// accumulator against the widest polyphase phase, and the shift.
func checkFIRInterp(s *stage, st fixed.Stage, sw *fixed.StageWidths) error {
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
	l := st.R
	need := 0
	for p := 0; p < l && p < len(h); p++ {
		need = max(need, fixed.AccumulatorBits(phase(h, l, p), s.in))
	}
	if sw.AccumulatorBits < need || sw.AccumulatorBits > MaxBits {
		return fmt.Errorf("AccumulatorBits = %d: the %d-bit data and these taps need %d (the widest polyphase phase), and at most %d are written", sw.AccumulatorBits, s.in, need, MaxBits)
	}
	acc, sh := sw.AccumulatorBits, sw.OutputShift
	if sh > 62 || acc-sh > 64 {
		return fmt.Errorf("OutputShift = %d with a %d-bit accumulator: the shift must lie in [%d, 62]", sh, acc, acc-64)
	}
	s.kind = "fir"
	if st.HalfBand {
		s.kind = "hb"
	}
	s.h, s.frac, s.coef, s.acc, s.shift = h, sw.Coefficients.Frac, sw.Coefficients.Bits, acc, sh
	for _, v := range h {
		if v != 0 {
			s.nonzero++
		}
	}
	if st.HalfBand && s.frac >= 1 && s.frac <= 48 {
		half := int64(1) << (s.frac - 1)
		for p := 0; p < l; p++ {
			nz, one := 0, false
			for j := p; j < len(h); j += l {
				if h[j] != 0 {
					nz++
					one = h[j] == half
				}
			}
			if nz == 1 && one {
				s.centre = p
			}
		}
	}
	return nil
}

// phase returns polyphase phase p of h for factor l: h[p], h[p+l], ...
func phase(h []int64, l, p int) []int64 {
	var out []int64
	for j := p; j < len(h); j += l {
		out = append(out, h[j])
	}
	return out
}

// taps returns how many taps each polyphase phase holds at most,
// ceil(len(h) / r): the input history the stage keeps.
func (s *stage) taps() int { return (len(s.h) + s.r - 1) / s.r }

// describeInterp is an interpolating stage's line in the header.
func (s *stage) describeInterp() string {
	if s.kind == "cic" {
		p := s.ci
		regs := func(v []int) string {
			out := make([]string, len(v))
			for j, b := range v {
				out[j] = fmt.Sprint(b)
			}
			return strings.Join(out, " ")
		}
		return fmt.Sprintf("stage %d (%s): CIC interpolator N = %d, M = %d, L = %d; %d-bit input; combs %s bits, integrators %s bits (full width, wrapping); output the top %d bits of the last integrator, truncated by %d LSBs",
			s.k, s.module, p.N, p.M, p.R, s.in, regs(p.RegisterBits[:p.N]), regs(p.RegisterBits[p.N:]), s.out, s.shift)
	}
	name := "FIR"
	if s.kind == "hb" {
		name = "half-band"
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
	return fmt.Sprintf("stage %d (%s): %s interpolator L = %d, %d taps (%d non-zero, %d per phase), %d-bit coefficients (Frac %d); %d-bit input, %d-bit accumulator; %s, saturate to %d-bit output",
		s.k, s.module, name, s.r, len(s.h), s.nonzero, s.taps(), s.coef, s.frac, s.in, s.acc, out, s.out)
}

// interfaceDoc is the interpolation model's interface, in its header.
const interfaceDoc = `//
// Interface (every stage module and the chain): valid/ready streams. A
// sample passes on a rising clock edge where its valid and ready are both
// high. in_valid/in_ready take the stage's (or chain's) input; out_valid/
// out_ready give its output, held until taken. A stage of factor L gives
// L outputs per input, its polyphase phases 0 .. L-1 in order, the first
// on the clock after it takes the input, then one a clock while out_ready
// stays high; it takes its next input on the clock it gives the last
// phase, so a stage can give one output every clock. in_ready may depend
// on out_ready in the same clock (no register between them): stage k's
// in_ready is stage k-1's ready. To pace the chain by a DAC, drive
// out_ready with the DAC's sample strobe: out_valid is high for every
// strobe once the inputs arrive fast enough. rst (synchronous, active
// high) clears every register, history, phase and output.
`

// writeInterpModel writes the interpolation chain's model: the header,
// every stage's module and the top.
func (cp *chainPlan) writeInterpModel(b *bytes.Buffer) {
	cp.header(b, "the reference model of the planned interpolation chain", interfaceDoc)
	b.WriteString("`timescale 1ns / 1ps\n")
	for i := range cp.stages {
		s := &cp.stages[i]
		b.WriteString("\n")
		if s.kind == "cic" {
			cp.writeCICInterp(b, s)
		} else {
			cp.writeFIRInterp(b, s)
		}
	}
	b.WriteString("\n")
	cp.writeTopInterp(b)
}

// portsInterp writes an interpolating stage module's port list.
func (cp *chainPlan) portsInterp(b *bytes.Buffer, s *stage) {
	fmt.Fprintf(b, "module %s (\n", s.module)
	b.WriteString("  input  wire clk,\n  input  wire rst,\n  input  wire in_valid,\n  output wire in_ready,\n")
	for _, ch := range cp.chans() {
		fmt.Fprintf(b, "  input  wire signed %s in_%s,\n", vec(s.in), ch)
	}
	b.WriteString("  output reg  out_valid,\n  input  wire out_ready")
	for _, ch := range cp.chans() {
		fmt.Fprintf(b, ",\n  output reg  signed %s out_%s", vec(s.out), ch)
	}
	b.WriteString("\n);\n")
}

// handshake writes an interpolating stage's control: pend (the newest
// input has phases left), ph (the next phase), load (the output register
// takes phase ph this clock), last (ph is the last phase), take (an input
// passes this clock). It returns ph's width.
func handshake(b *bytes.Buffer, l int) int {
	pw := bitsFor(l)
	fmt.Fprintf(b, `  // Control: pend says the newest input has phases still to give, ph is
  // the next one; load: the output register takes phase ph this clock
  // (it is empty or being taken); take: an input passes this clock, at
  // the latest with the newest input's last phase.
  reg  pend;
  reg  %s ph;
  wire last = (ph == %d'd%d);
  wire load = pend & (~out_valid | out_ready);
  assign in_ready = ~pend | (load & last);
  wire take = in_valid & in_ready;
`, vec(pw), pw, l-1)
	return pw
}

// handshakeStep writes the control's clocked part: the output register
// loads (load) or empties (taken), the phase steps, and an input taken
// restarts the phases at 0. inputs writes what the stage does with an
// input it takes; outputs what it does with each output it gives (besides
// loading out_<c> with y_<c>).
func (cp *chainPlan) handshakeStep(b *bytes.Buffer, pw int, outputs, inputs func(ind string)) {
	b.WriteString("      if (load) begin\n")
	outputs("        ")
	for _, ch := range cp.chans() {
		fmt.Fprintf(b, "        out_%s <= y_%s;\n", ch, ch)
	}
	fmt.Fprintf(b, "        out_valid <= 1'b1;\n        ph <= last ? %d'd0 : ph + %d'd1;\n        if (last) pend <= 1'b0;\n", pw, pw)
	b.WriteString("      end else if (out_ready) begin\n        out_valid <= 1'b0;\n      end\n")
	b.WriteString("      if (take) begin\n")
	inputs("        ")
	fmt.Fprintf(b, "        pend <= 1'b1;\n        ph <= %d'd0;\n      end\n", pw)
}

// writeFIRInterp writes an interpolating FIR or half-band: the input
// history of ceil(taps / L) samples, phase ph's exact sum of products
// (zero taps skipped), rounded half up at OutputShift and saturated, one
// phase an output.
func (cp *chainPlan) writeFIRInterp(b *bytes.Buffer, s *stage) {
	l, a, kk := s.r, s.acc, s.taps()
	name := "FIR"
	if s.kind == "hb" {
		name = "half-band"
	}
	fmt.Fprintf(b, "// Stage %d: %s interpolator, L = %d, %d taps (%d per phase), %d of them non-zero.\n", s.k, name, l, len(s.h), kk, s.nonzero)
	b.WriteString(`// The input, zero-stuffed by L (each sample, then L-1 zeros), filtered by
// the taps, computed as L polyphase phases over the input history: for
// input n, output nL + p is sum_k h[p + Lk] x[n - k], inputs before the
// first zero. The sum is exact: it is taken modulo 2^A in an A-bit
// accumulator, which holds every phase's sums, so the modular sum is the
// sum. Zero taps are skipped.
`)
	if s.centre >= 0 {
		fmt.Fprintf(b, "// Phase %d holds only the centre tap, 2^%d (one half): it passes the input,\n// shifted, with no multiply.\n", s.centre, s.frac-1)
	}
	fmt.Fprintf(b, "// Output: ")
	switch {
	case s.shift > 0:
		fmt.Fprintf(b, "(acc + 2^%d) >> %d (round half up), ", s.shift-1, s.shift)
	case s.shift < 0:
		fmt.Fprintf(b, "acc << %d, ", -s.shift)
	}
	fmt.Fprintf(b, "saturated to %d bits.\n// The shift is the decimating FIR's less floor(log2 L): each phase's DC\n// gain is about 1/L.\n", s.out)
	cp.portsInterp(b, s)
	pw := handshake(b, l)
	b.WriteString("  // The input history: d<t>_c holds the input t samples before the newest\n  // (d0: the newest), the phases' x[n - t].\n")
	for _, ch := range cp.chans() {
		var regs []string
		for t := 0; t < kk; t++ {
			regs = append(regs, fmt.Sprintf("d%d_%s", t, ch))
		}
		writeList(b, fmt.Sprintf("  reg  %s ", vec(s.in)), regs)
	}
	for _, ch := range cp.chans() {
		acc := "acc_" + ch
		fmt.Fprintf(b, "  // channel %s: phase ph's sum of products, every operand sign-extended to %d bits\n", ch, a)
		fmt.Fprintf(b, "  reg  %s %s;\n  always @* begin\n    %s = %d'd0;\n    case (ph)\n", vec(a), acc, acc, a)
		for p := 0; p < l; p++ {
			var terms []string
			for t, j := 0, p; j < len(s.h); t, j = t+1, j+l {
				v := s.h[j]
				if v == 0 {
					continue
				}
				x := bitsOf(fmt.Sprintf("d%d_%s", t, ch), s.in, 0, a)
				if p == s.centre {
					terms = append(terms, fmt.Sprintf("      %s = %s;  // h[%d] = 2^%d: the input shifted", acc, bitsOf(fmt.Sprintf("d%d_%s", t, ch), s.in, -(s.frac-1), a), j, s.frac-1))
					continue
				}
				op, mag := "+", v
				if v < 0 {
					op, mag = "-", -v
				}
				terms = append(terms, fmt.Sprintf("      %s = %s %s %s * %d'd%d;  // h[%d] = %d", acc, acc, op, x, a, mag, j, v))
			}
			if len(terms) == 0 {
				continue // an all-zero phase: the sum stays 0
			}
			fmt.Fprintf(b, "    %d'd%d: begin\n", pw, p)
			for _, t := range terms {
				b.WriteString("  " + t + "\n")
			}
			b.WriteString("    end\n")
		}
		b.WriteString("    default: ;\n    endcase\n  end\n")
		cp.writeRoundSat(b, s, ch)
	}
	b.WriteString("\n  always @(posedge clk) begin\n    if (rst) begin\n      pend <= 1'b0;\n")
	fmt.Fprintf(b, "      ph <= %d'd0;\n      out_valid <= 1'b0;\n", pw)
	for _, ch := range cp.chans() {
		for t := 0; t < kk; t++ {
			fmt.Fprintf(b, "      d%d_%s <= %d'd0;\n", t, ch, s.in)
		}
		fmt.Fprintf(b, "      out_%s <= %d'sd0;\n", ch, s.out)
	}
	b.WriteString("    end else begin\n")
	cp.handshakeStep(b, pw, func(string) {}, func(ind string) {
		for _, ch := range cp.chans() {
			fmt.Fprintf(b, "%sd0_%s <= in_%s;\n", ind, ch, ch)
			for t := 1; t < kk; t++ {
				fmt.Fprintf(b, "%sd%d_%s <= d%d_%s;\n", ind, t, ch, t-1, ch)
			}
		}
	})
	b.WriteString("    end\n  end\nendmodule\n")
}

// writeRoundSat writes channel ch's output y_<ch> from its accumulator
// acc_<ch>: rounded half up at the shift (or shifted left) and saturated,
// every step a part-select, as the decimating FIR writes it.
func (cp *chainPlan) writeRoundSat(b *bytes.Buffer, s *stage, ch string) {
	a, acc := s.acc, "acc_"+ch
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
		return
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

// writeCICInterp writes a CIC interpolator: N combs at the input rate, on
// each input taken; the newest comb output held for phase 0 and zeros for
// phases 1 .. L-1 (the zero stuffing); N integrators at the output rate,
// on each output given; every register full width and wrapping; the
// output the top bits of the last integrator, truncated.
func (cp *chainPlan) writeCICInterp(b *bytes.Buffer, s *stage) {
	p := s.ci
	n, m, l := p.N, p.M, p.R
	full := p.FullBits()
	fmt.Fprintf(b, "// Stage %d: CIC interpolator, order N = %d, differential delay M = %d, L = R = %d.\n", s.k, n, m, l)
	fmt.Fprintf(b, `// The combs run on each input taken, c_j[n] = c_(j-1)[n] - c_(j-1)[n-M],
// each wrapping at its width; the newest comb output feeds the integrators
// at phase 0 and zeros at phases 1 .. L-1 (the zero stuffing); the
// integrators run on each output given, s_j[m] = s_j[m-1] + s_(j-1)[m],
// each taking its input sign-extended (or wrapped) to its width and
// wrapping there. Every register is full width (Hogenauer's interpolator
// growth, unpruned), so none wraps in use. The output keeps the top %d
// bits of the %d-bit last integrator, truncated (floor).
`, s.out, full)
	cp.portsInterp(b, s)
	pw := handshake(b, l)
	for _, ch := range cp.chans() {
		src, ws := "in_"+ch, s.in
		for j := 0; j < n; j++ {
			rb := p.RegisterBits[j]
			name := fmt.Sprintf("comb%d_%s", j+1, ch)
			fmt.Fprintf(b, "  // comb %d (%s): %d-bit registers, y = x - x[%d back]\n", j+1, ch, rb, m)
			fmt.Fprintf(b, "  wire %s %s_in = %s;\n", vec(rb), name, bitsOf(src, ws, 0, rb))
			var regs []string
			for t := 1; t <= m; t++ {
				regs = append(regs, fmt.Sprintf("%s_d%d", name, t))
			}
			writeList(b, fmt.Sprintf("  reg  %s ", vec(rb)), regs)
			fmt.Fprintf(b, "  wire %s %s_out = %s_in - %s_d%d;\n", vec(rb), name, name, name, m)
			src, ws = name+"_out", rb
		}
		wc := p.RegisterBits[n-1]
		fmt.Fprintf(b, "  // the newest input's comb output, the integrators' input at phase 0\n  reg  %s cout_%s;\n", vec(wc), ch)
		src, ws = "cout_"+ch, wc
		for j := 0; j < n; j++ {
			rb := p.RegisterBits[n+j]
			reg := fmt.Sprintf("integ%d_%s", j+1, ch)
			fmt.Fprintf(b, "  // integrator %d (%s): %d-bit register\n  reg  %s %s;\n", j+1, ch, rb, vec(rb), reg)
			in := bitsOf(src, ws, 0, rb)
			if j == 0 {
				in = fmt.Sprintf("((ph == %d'd0) ? %s : %d'd0)", pw, in, rb)
			}
			fmt.Fprintf(b, "  wire %s %s_next = %s + %s;\n", vec(rb), reg, reg, in)
			src, ws = reg+"_next", rb
		}
		fmt.Fprintf(b, "  // output (%s): drops %d LSBs, %d bits\n", ch, s.shift, s.out)
		fmt.Fprintf(b, "  wire %s y_%s = %s;\n", vec(s.out), ch, bitsOf(src, ws, s.shift, s.out))
	}
	b.WriteString("\n  always @(posedge clk) begin\n    if (rst) begin\n      pend <= 1'b0;\n")
	fmt.Fprintf(b, "      ph <= %d'd0;\n      out_valid <= 1'b0;\n", pw)
	for _, ch := range cp.chans() {
		for j := 0; j < n; j++ {
			for t := 1; t <= m; t++ {
				fmt.Fprintf(b, "      comb%d_%s_d%d <= %d'd0;\n", j+1, ch, t, p.RegisterBits[j])
			}
		}
		fmt.Fprintf(b, "      cout_%s <= %d'd0;\n", ch, p.RegisterBits[n-1])
		for j := 0; j < n; j++ {
			fmt.Fprintf(b, "      integ%d_%s <= %d'd0;\n", j+1, ch, p.RegisterBits[n+j])
		}
		fmt.Fprintf(b, "      out_%s <= %d'sd0;\n", ch, s.out)
	}
	b.WriteString("    end else begin\n")
	cp.handshakeStep(b, pw, func(ind string) {
		for _, ch := range cp.chans() {
			for j := 0; j < n; j++ {
				fmt.Fprintf(b, "%sinteg%d_%s <= integ%d_%s_next;\n", ind, j+1, ch, j+1, ch)
			}
		}
	}, func(ind string) {
		for _, ch := range cp.chans() {
			for j := 0; j < n; j++ {
				name := fmt.Sprintf("comb%d_%s", j+1, ch)
				fmt.Fprintf(b, "%s%s_d1 <= %s_in;\n", ind, name, name)
				for t := 2; t <= m; t++ {
					fmt.Fprintf(b, "%s%s_d%d <= %s_d%d;\n", ind, name, t, name, t-1)
				}
			}
			fmt.Fprintf(b, "%scout_%s <= comb%d_%s_out;\n", ind, ch, n, ch)
		}
	})
	b.WriteString("    end\n  end\nendmodule\n")
}

// writeTopInterp writes <prefix>_chain for an interpolation chain: the
// stages in a row, each stage's output stream brought out with its ready
// (the next stage's in_ready, or out_ready for the last).
func (cp *chainPlan) writeTopInterp(b *bytes.Buffer) {
	last := cp.stages[len(cp.stages)-1]
	fmt.Fprintf(b, `// The chain: in_valid/in_ready take an input sample; s<k>_valid and
// s<k>_ready are stage k's output stream (a sample passes on a clock where
// both are high; s<k>_ready is stage k+1's in_ready, or out_ready for the
// last), and out_valid/out_ready the chain's (stage %d's).
`, last.k)
	fmt.Fprintf(b, "module %s_chain (\n  input  wire clk,\n  input  wire rst,\n  input  wire in_valid,\n  output wire in_ready,\n", cp.prefix)
	for _, ch := range cp.chans() {
		fmt.Fprintf(b, "  input  wire signed %s in_%s,\n", vec(cp.in), ch)
	}
	for _, s := range cp.stages {
		fmt.Fprintf(b, "  output wire s%d_valid,\n  output wire s%d_ready,\n", s.k, s.k)
		for _, ch := range cp.chans() {
			fmt.Fprintf(b, "  output wire signed %s s%d_%s,\n", vec(s.out), s.k, ch)
		}
	}
	b.WriteString("  output wire out_valid,\n  input  wire out_ready")
	for _, ch := range cp.chans() {
		fmt.Fprintf(b, ",\n  output wire signed %s out_%s", vec(last.out), ch)
	}
	b.WriteString("\n);\n")
	prev := "in"
	for _, s := range cp.stages {
		fmt.Fprintf(b, "  %s u_s%d (\n    .clk(clk), .rst(rst), .in_valid(%s_valid), .in_ready(%s_ready)", s.module, s.k, prev, prev)
		for _, ch := range cp.chans() {
			fmt.Fprintf(b, ", .in_%s(%s_%s)", ch, prev, ch)
		}
		fmt.Fprintf(b, ",\n    .out_valid(s%d_valid), .out_ready(s%d_ready)", s.k, s.k)
		for _, ch := range cp.chans() {
			fmt.Fprintf(b, ", .out_%s(s%d_%s)", ch, s.k, ch)
		}
		b.WriteString("\n  );\n")
		prev = fmt.Sprintf("s%d", s.k)
	}
	fmt.Fprintf(b, "  assign s%d_ready = out_ready;\n  assign out_valid = s%d_valid;\n", last.k, last.k)
	for _, ch := range cp.chans() {
		fmt.Fprintf(b, "  assign out_%s = s%d_%s;\n", ch, last.k, ch)
	}
	b.WriteString("endmodule\n")
}
