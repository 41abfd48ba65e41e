package rtl

import (
	"bytes"
	"fmt"
	"strings"

	"github.com/stepdown-dsp/stepdown/chain/fixed"
)

// MaxSignals bounds the testbench's signal list.
const MaxSignals = 1000

// checkSignal says whether name can be a signal's name: the stem of its
// vector files.
func checkSignal(name string) error {
	ok := name != "" && len(name) <= 64 && name[0] != '.' && name[0] != '-'
	for i := 0; ok && i < len(name); i++ {
		ch := name[i]
		ok = ch >= 'a' && ch <= 'z' || ch >= 'A' && ch <= 'Z' || ch >= '0' && ch <= '9' || ch == '_' || ch == '-' || ch == '.'
	}
	if !ok {
		return fmt.Errorf("rtl: signal name %q: must be 1 to 64 letters, digits, '_', '-' or '.', not starting with '.' or '-' (it names the files vectors/<name>.in.txt ...)", cut(name))
	}
	return nil
}

// Testbench returns a self-checking testbench, module <Prefix>_tb, for the
// model Model writes with the same c, w and o. For each name in signals, in
// order, it resets the chain, feeds vectors/<name>.in.txt with the idle
// pattern of Options.MaxIdle, and compares every stage's output with
// vectors/<name>.stage<k>.txt and the chain's with vectors/<name>.out.txt,
// sample for sample; see the package documentation for the files and the
// messages.
func Testbench(c fixed.Cascade, w *fixed.Widths, o Options, signals []string) ([]byte, error) {
	cp, err := check(c, w, o)
	if err != nil {
		return nil, err
	}
	idle, err := o.maxIdle()
	if err != nil {
		return nil, err
	}
	if len(signals) == 0 || len(signals) > MaxSignals {
		return nil, fmt.Errorf("rtl: %d signals: the testbench needs 1 to %d", len(signals), MaxSignals)
	}
	seen := map[string]bool{}
	for _, s := range signals {
		if err := checkSignal(s); err != nil {
			return nil, err
		}
		if seen[s] {
			return nil, fmt.Errorf("rtl: signal %q is listed twice", s)
		}
		seen[s] = true
	}
	var b bytes.Buffer
	if cp.interp {
		cp.writeTBInterp(&b, idle, signals)
		return b.Bytes(), nil
	}
	cp.writeTB(&b, idle, signals)
	return b.Bytes(), nil
}

func (cp *chainPlan) writeTB(b *bytes.Buffer, maxIdle int, signals []string) {
	ns := len(cp.stages)
	last := cp.stages[ns-1]
	chans := cp.chans()
	nv := len(chans)
	fmtv := "%d"
	if cp.complex {
		fmtv = "%d %d"
	}
	cp.header(b, "the self-checking testbench of the reference model", fmt.Sprintf(`//
// Run from the folder rtl/ (the vector files in the sibling vectors/):
//   iverilog -g2012 -o sim *.v && vvp sim
// or from the folder that holds rtl/ and vectors/:
//   iverilog -g2012 -o sim rtl/*.v && vvp sim
// It prints PASS and the counts when every stage's output matches its
// vector file bit for bit, and otherwise FAIL with the signal, the stage,
// the sample index (from 0), the expected and the got value, and stops.
// Vector files: one sample a line, %s.
// Signals: %s.
`, map[bool]string{false: "one integer", true: `"I Q" (two integers, a space between)`}[cp.complex], strings.Join(signals, ", ")))
	fmt.Fprintf(b, "`timescale 1ns / 1ps\n\nmodule %s_tb;\n", cp.prefix)
	fmt.Fprintf(b, "  localparam STAGES = %d;\n  localparam MAXIDLE = %d;\n", ns, maxIdle)
	b.WriteString("  reg clk = 1'b0;\n  always #5 clk = ~clk;\n  reg rst = 1'b1;\n  reg in_valid = 1'b0;\n")
	for _, ch := range chans {
		fmt.Fprintf(b, "  reg signed %s in_%s = %d'sd0;\n", vec(cp.in), ch, cp.in)
	}
	for _, s := range cp.stages {
		fmt.Fprintf(b, "  wire s%d_valid;\n", s.k)
		for _, ch := range chans {
			fmt.Fprintf(b, "  wire signed %s s%d_%s;\n", vec(s.out), s.k, ch)
		}
	}
	b.WriteString("  wire out_valid;\n")
	for _, ch := range chans {
		fmt.Fprintf(b, "  wire signed %s out_%s;\n", vec(last.out), ch)
	}
	fmt.Fprintf(b, "\n  %s_chain dut (\n    .clk(clk), .rst(rst), .in_valid(in_valid)", cp.prefix)
	for _, ch := range chans {
		fmt.Fprintf(b, ", .in_%s(in_%s)", ch, ch)
	}
	for _, s := range cp.stages {
		fmt.Fprintf(b, ",\n    .s%d_valid(s%d_valid)", s.k, s.k)
		for _, ch := range chans {
			fmt.Fprintf(b, ", .s%d_%s(s%d_%s)", s.k, ch, s.k, ch)
		}
	}
	b.WriteString(",\n    .out_valid(out_valid)")
	for _, ch := range chans {
		fmt.Fprintf(b, ", .out_%s(out_%s)", ch, ch)
	}
	b.WriteString("\n  );\n\n")

	cp.writeTBHelpers(b)
	vin, vxs, dfmt := cp.inputForms()

	// The checkers.
	for _, s := range cp.stages {
		fmt.Fprintf(b, "  always @(posedge clk) if (checking && s%d_valid === 1'b1) check(%d, s%d_i%s);\n", s.k, s.k, s.k, qArg(cp.complex, fmt.Sprintf("s%d_q", s.k)))
	}
	fmt.Fprintf(b, "  always @(posedge clk) if (checking && out_valid === 1'b1) check(%d, out_i%s);\n\n", ns+1, qArg(cp.complex, "out_q"))

	// run_signal feeds one signal.
	lo, hi := fmt.Sprintf("-64'sd%d", uint64(1)<<(cp.in-1)), fmt.Sprintf("64'sd%d", uint64(1)<<(cp.in-1)-1)
	rng := fmt.Sprintf("vi < %s || vi > %s", lo, hi)
	if cp.complex {
		rng += fmt.Sprintf(" || vq < %s || vq > %s", lo, hi)
	}
	fmt.Fprintf(b, `  // run_signal resets the chain, feeds vectors/<s>.in.txt with idle
  // cycles between the valid inputs, and checks every stream.
  task automatic run_signal(input string s);
    begin
      sig = s;
      open_vec({s, ".in.txt"}, fd_in);
      for (k = 1; k <= STAGES; k = k + 1) open_vec($sformatf("%%0s.stage%%0d.txt", s, k), fd_exp[k]);
      open_vec({s, ".out.txt"}, fd_exp[STAGES+1]);
      @(negedge clk);
      rst = 1'b1;
      in_valid = 1'b0;
      repeat (3) @(negedge clk);
      rst = 1'b0;
      for (k = 1; k <= STAGES + 1; k = k + 1) got_n[k] = 0;
      n_in = 0;
      lfsr = 16'h5eed;
      checking = 1'b1;
      vq = 64'sd0;
      r = $fscanf(fd_in, "%s", %s);
      while (r == %d) begin
        if (%s) begin
          $display("FAIL: signal %%0s, input (vectors/%%0s.in.txt): line %%0d is not %s", sig, sig, n_in + 1);
          $finish;
        end
        if (%s) begin
          $display("FAIL: signal %%0s, input (vectors/%%0s.in.txt), sample %%0d: %s lies outside the %d-bit input word", sig, sig, n_in, %s);
          $finish;
        end
        idle = lfsr %% (MAXIDLE + 1);
        step;
        while (idle > 0) begin
          // Idle: in_valid low, the data lines carry junk.
          @(negedge clk);
          in_valid = 1'b0;
`, fmtv, vin, nv, vxs, lineRule(cp.complex), rng, dfmt, cp.in, vin)
	for _, ch := range chans {
		fmt.Fprintf(b, "          in_%s = %s;\n", ch, bitsOf("lfsr", 16, 0, cp.in))
	}
	b.WriteString("          step;\n          idle = idle - 1;\n        end\n        @(negedge clk);\n        in_valid = 1'b1;\n")
	for _, ch := range chans {
		fmt.Fprintf(b, "        in_%s = v%s[%d:0];\n", ch, ch, cp.in-1)
	}
	fmt.Fprintf(b, `        n_in = n_in + 1;
        r = $fscanf(fd_in, "%s", %s);
      end
      if (!(r <= 0 && $feof(fd_in))) begin
        $display("FAIL: signal %%0s, input (vectors/%%0s.in.txt): line %%0d is not %s", sig, sig, n_in + 1);
        $finish;
      end
      $fclose(fd_in);
      @(negedge clk);
      in_valid = 1'b0;
      // Let the last input through every stage (one clock each).
      repeat (STAGES + 2) @(negedge clk);
      checking = 1'b0;
      for (k = 1; k <= STAGES + 1; k = k + 1) finish_stream(k);
      tot_in = tot_in + n_in;
      n_sig = n_sig + 1;
      $write("signal %%0s: %%0d inputs; compared", sig, n_in);
      for (k = 1; k <= STAGES; k = k + 1) $write(" stage %%0d: %%0d,", k, got_n[k]);
      $display(" output: %%0d samples", got_n[STAGES+1]);
    end
  endtask

  initial begin
    tot_in = 0;
    n_sig = 0;
    for (k = 1; k <= STAGES + 1; k = k + 1) tot_n[k] = 0;
`, fmtv, vin, lineRule(cp.complex))
	for _, s := range signals {
		fmt.Fprintf(b, "    run_signal(%q);\n", s)
	}
	b.WriteString(`    $write("PASS: %0d signals, %0d inputs; compared", n_sig, tot_in);
    for (k = 1; k <= STAGES; k = k + 1) $write(" stage %0d: %0d,", k, tot_n[k]);
    $display(" output: %0d samples, bit-exact", tot_n[STAGES+1]);
    $finish;
  end
endmodule
`)
}

func lineRule(complex bool) string {
	if complex {
		return `two integers \"I Q\"`
	}
	return "one integer"
}

func qArg(complex bool, q string) string {
	if complex {
		return ", " + q
	}
	return ""
}

// writeTBHelpers writes the testbench's state and its tasks: label,
// open_vec, step (the idle pattern's LFSR), check (one output against its
// file) and finish_stream (the file holds no more), shared by the
// decimation and the interpolation testbench.
func (cp *chainPlan) writeTBHelpers(b *bytes.Buffer) {
	chans := cp.chans()
	nv := len(chans)
	fmtv := "%d"
	if cp.complex {
		fmtv = "%d %d"
	}
	b.WriteString(`  // Stream k = 1..STAGES is stage k's output, STAGES+1 the chain's.
  string  sig;                      // the signal being run
  integer fd_in;
  integer fd_exp [1:STAGES+1];
  integer got_n [1:STAGES+1];       // samples compared, this signal
  integer tot_n [1:STAGES+1];       // and in all
  integer n_in, tot_in, n_sig;
  reg checking = 1'b0;
  reg [15:0] lfsr;                  // the idle pattern
  reg signed [63:0] vi, vq;
  integer r, idle, k;

  function automatic string label(input integer k);
    if (k <= STAGES) label = $sformatf("stage %0d (vectors/%0s.stage%0d.txt)", k, sig, k);
    else label = $sformatf("output (vectors/%0s.out.txt)", sig);
  endfunction

  // open_vec opens vectors/<f> from rtl/ (../vectors/) or from the folder
  // above it (vectors/); a file that is not there is a FAIL.
  task automatic open_vec(input string f, output integer fd);
    begin
      fd = $fopen({"../vectors/", f}, "r");
      if (fd == 0) fd = $fopen({"vectors/", f}, "r");
      if (fd == 0) begin
        $display("FAIL: signal %0s: cannot open vectors/%0s (looked in ../vectors/ and vectors/)", sig, f);
        $finish;
      end
    end
  endtask

  // step advances the 16-bit Fibonacci LFSR x^16 + x^14 + x^13 + x^11 + 1
  // (a maximal-length polynomial, common practice).
  task automatic step;
    lfsr = {lfsr[14:0], lfsr[15] ^ lfsr[13] ^ lfsr[12] ^ lfsr[10]};
  endtask

`)
	// check: one output of stream k against its file.
	args := "input signed [63:0] gi"
	cmp, got := "ei !== gi", "gi"
	exp, xs := "ei", "(^ei) === 1'bx"
	if cp.complex {
		args += ", input signed [63:0] gq"
		cmp, got = "ei !== gi || eq !== gq", "gi, gq"
		exp, xs = "ei, eq", "(^ei) === 1'bx || (^eq) === 1'bx"
	}
	_, _, dfmt := cp.inputForms()
	fmt.Fprintf(b, `  // check compares one output of stream k with the next line of its file.
  task automatic check(input integer k, %s);
    reg signed [63:0] ei, eq;
    integer r;
    begin
      eq = 64'sd0;
      r = $fscanf(fd_exp[k], "%s", %s);
      if (r != %d && !(r <= 0 && $feof(fd_exp[k]))) begin
        $display("FAIL: signal %%0s, %%0s: line %%0d is not %s", sig, label(k), got_n[k] + 1);
        $finish;
      end
      if (r != %d) begin
        $display("FAIL: signal %%0s, %%0s, sample %%0d: expected no more samples (the file holds %%0d), got %s", sig, label(k), got_n[k], got_n[k], %s);
        $finish;
      end
      if (%s) begin
        $display("FAIL: signal %%0s, %%0s: line %%0d is not %s", sig, label(k), got_n[k] + 1);
        $finish;
      end
      if (%s) begin
        $display("FAIL: signal %%0s, %%0s, sample %%0d: expected %s, got %s", sig, label(k), got_n[k], %s, %s);
        $finish;
      end
      got_n[k] = got_n[k] + 1;
    end
  endtask

`, args, fmtv, exp, nv, lineRule(cp.complex), nv, dfmt, got, xs, lineRule(cp.complex), cmp, dfmt, dfmt, exp, got)

	// finish_stream: the file must hold no more samples.
	fmt.Fprintf(b, `  // finish_stream checks that stream k's file holds no more samples.
  task automatic finish_stream(input integer k);
    reg signed [63:0] ei, eq;
    integer r;
    begin
      eq = 64'sd0;
      r = $fscanf(fd_exp[k], "%s", %s);
      if (r == %d) begin
        $display("FAIL: signal %%0s, %%0s, sample %%0d: expected %s, got no sample (the chain gave %%0d)", sig, label(k), got_n[k], %s, got_n[k]);
        $finish;
      end
      if (!(r <= 0 && $feof(fd_exp[k]))) begin
        $display("FAIL: signal %%0s, %%0s: line %%0d is not %s", sig, label(k), got_n[k] + 1);
        $finish;
      end
      $fclose(fd_exp[k]);
      tot_n[k] = tot_n[k] + got_n[k];
    end
  endtask

`, fmtv, exp, nv, dfmt, exp, lineRule(cp.complex))

}

// inputForms returns the testbench's input variables for $fscanf ("vi" or
// "vi, vq"), the test that one of them is unknown, and the $display format
// of a sample ("%0d" or "%0d %0d").
func (cp *chainPlan) inputForms() (vin, vxs, dfmt string) {
	if cp.complex {
		return "vi, vq", "(^vi) === 1'bx || (^vq) === 1'bx", "%0d %0d"
	}
	return "vi", "(^vi) === 1'bx", "%0d"
}
