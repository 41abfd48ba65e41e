package rtl

import (
	"bytes"
	"fmt"
	"strings"
)

// writeTBInterp writes the testbench of an interpolation chain: the inputs
// offered with 0 to maxIdle idle clocks before each and held until the
// chain takes them (in_ready), the chain's output taken with 0 to maxIdle
// stalled clocks (out_ready low) before each sample, and every stage's
// output compared, as it passes, with its file.
func (cp *chainPlan) writeTBInterp(b *bytes.Buffer, maxIdle int, signals []string) {
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
// Each input is offered (in_valid) after 0 to %d idle clocks and held until
// the chain takes it (in_ready); the chain's output is taken (out_ready)
// after 0 to %d stalled clocks before each sample (16-bit LFSR patterns, the
// same on every run); a stage's output is compared on every clock where its
// valid and ready are both high. Each signal must give its inputs' count
// times L = %d at the output, within a bound of clocks.
// Vector files: one sample a line, %s.
// Signals: %s.
`, maxIdle, maxIdle, cp.ratio(), map[bool]string{false: "one integer", true: `"I Q" (two integers, a space between)`}[cp.complex], strings.Join(signals, ", ")))
	fmt.Fprintf(b, "`timescale 1ns / 1ps\n\nmodule %s_tb;\n", cp.prefix)
	fmt.Fprintf(b, "  localparam STAGES = %d;\n  localparam MAXIDLE = %d;\n", ns, maxIdle)
	fmt.Fprintf(b, "  localparam [63:0] RATIO = 64'd%d;  // the chain's interpolation L\n", cp.ratio())
	b.WriteString("  reg clk = 1'b0;\n  always #5 clk = ~clk;\n  reg rst = 1'b1;\n  reg in_valid = 1'b0;\n  wire in_ready;\n  reg out_ready = 1'b1;\n")
	for _, ch := range chans {
		fmt.Fprintf(b, "  reg signed %s in_%s = %d'sd0;\n", vec(cp.in), ch, cp.in)
	}
	for _, s := range cp.stages {
		fmt.Fprintf(b, "  wire s%d_valid, s%d_ready;\n", s.k, s.k)
		for _, ch := range chans {
			fmt.Fprintf(b, "  wire signed %s s%d_%s;\n", vec(s.out), s.k, ch)
		}
	}
	b.WriteString("  wire out_valid;\n")
	for _, ch := range chans {
		fmt.Fprintf(b, "  wire signed %s out_%s;\n", vec(last.out), ch)
	}
	fmt.Fprintf(b, "\n  %s_chain dut (\n    .clk(clk), .rst(rst), .in_valid(in_valid), .in_ready(in_ready)", cp.prefix)
	for _, ch := range chans {
		fmt.Fprintf(b, ", .in_%s(in_%s)", ch, ch)
	}
	for _, s := range cp.stages {
		fmt.Fprintf(b, ",\n    .s%d_valid(s%d_valid), .s%d_ready(s%d_ready)", s.k, s.k, s.k, s.k)
		for _, ch := range chans {
			fmt.Fprintf(b, ", .s%d_%s(s%d_%s)", s.k, ch, s.k, ch)
		}
	}
	b.WriteString(",\n    .out_valid(out_valid), .out_ready(out_ready)")
	for _, ch := range chans {
		fmt.Fprintf(b, ", .out_%s(out_%s)", ch, ch)
	}
	b.WriteString("\n  );\n\n")

	cp.writeTBHelpers(b)
	vin, vxs, dfmt := cp.inputForms()

	b.WriteString(`  // The output stalls: after each output sample taken, out_ready stays
  // low for 0 to MAXIDLE clocks (the LFSR lfsr_o), set between edges.
  reg [15:0] lfsr_o;
  integer stall = 0;
  always @(posedge clk) if (out_valid === 1'b1 && out_ready === 1'b1) begin
    stall = lfsr_o % (MAXIDLE + 1);
    lfsr_o = {lfsr_o[14:0], lfsr_o[15] ^ lfsr_o[13] ^ lfsr_o[12] ^ lfsr_o[10]};
  end
  always @(negedge clk) begin
    if (stall > 0) begin
      out_ready = 1'b0;
      stall = stall - 1;
    end else out_ready = 1'b1;
  end
  reg [63:0] due, waited, limit;    // output samples due, clocks waited for them

`)
	// The checkers: a sample passes where valid and ready are both high.
	for _, s := range cp.stages {
		fmt.Fprintf(b, "  always @(posedge clk) if (checking && s%d_valid === 1'b1 && s%d_ready === 1'b1) check(%d, s%d_i%s);\n", s.k, s.k, s.k, s.k, qArg(cp.complex, fmt.Sprintf("s%d_q", s.k)))
	}
	fmt.Fprintf(b, "  always @(posedge clk) if (checking && out_valid === 1'b1 && out_ready === 1'b1) check(%d, out_i%s);\n\n", ns+1, qArg(cp.complex, "out_q"))

	lo, hi := fmt.Sprintf("-64'sd%d", uint64(1)<<(cp.in-1)), fmt.Sprintf("64'sd%d", uint64(1)<<(cp.in-1)-1)
	rng := fmt.Sprintf("vi < %s || vi > %s", lo, hi)
	if cp.complex {
		rng += fmt.Sprintf(" || vq < %s || vq > %s", lo, hi)
	}
	fmt.Fprintf(b, `  // run_signal resets the chain, offers vectors/<s>.in.txt with idle
  // cycles between the inputs, waits for the chain's outputs of them all,
  // and checks every stream.
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
      for (k = 1; k <= STAGES + 1; k = k + 1) got_n[k] = 0;
      n_in = 0;
      lfsr = 16'h5eed;
      lfsr_o = 16'hace1;
      stall = 0;
      // The most clocks a chain may take to give the outputs it owes.
      limit = (2 * STAGES * RATIO + 16) * (MAXIDLE + 2);
      rst = 1'b0;
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
	fmt.Fprintf(b, `        // Held until a rising edge with in_ready high takes it; a chain
        // that never takes it fails.
        waited = 0;
        @(posedge clk);
        while (in_ready !== 1'b1 && waited < limit) begin
          @(posedge clk);
          waited = waited + 1;
        end
        if (in_ready !== 1'b1) begin
          $display("FAIL: signal %%0s, input (vectors/%%0s.in.txt), sample %%0d: the chain did not take it within %%0d clocks", sig, sig, n_in, limit);
          $finish;
        end
        n_in = n_in + 1;
        r = $fscanf(fd_in, "%s", %s);
      end
      if (!(r <= 0 && $feof(fd_in))) begin
        $display("FAIL: signal %%0s, input (vectors/%%0s.in.txt): line %%0d is not %s", sig, sig, n_in + 1);
        $finish;
      end
      $fclose(fd_in);
      @(negedge clk);
      in_valid = 1'b0;
      // Wait for the outputs of every input: n_in L at the output, each
      // stage's before it; a chain that stalls fails.
      due = n_in * RATIO;
      waited = 0;
      while (got_n[STAGES+1] < due && waited < limit) begin
        @(negedge clk);
        waited = waited + 1;
      end
      if (got_n[STAGES+1] < due) begin
        $display("FAIL: signal %%0s, output (vectors/%%0s.out.txt): the chain gave %%0d of the %%0d samples its %%0d inputs make within %%0d clocks of the last input", sig, sig, got_n[STAGES+1], due, n_in, limit);
        $finish;
      end
      // A sample beyond them would fail its check.
      repeat (2 * MAXIDLE + STAGES + 4) @(negedge clk);
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
