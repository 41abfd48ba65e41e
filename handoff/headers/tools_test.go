package headers

import (
	"bytes"
	"context"
	"fmt"
	"math/big"
	"os"
	"os/exec"
	"path"
	"path/filepath"
	"slices"
	"strings"
	"testing"
	"time"
)

// The files are meant for gcc, GHDL and Icarus Verilog (and Verilator):
// these tests compile what the package writes for seeded random planned
// chains with the real tools, run a program or testbench that prints every
// constant, and compare what it prints with the plan (fixed.Widths), every
// coefficient exact. A missing tool skips its test, unless
// STEPDOWN_HEADERS=1 (CI's .ci/headers), where it fails.

// numRandom is how many random chains each tool sees, in one program.
const numRandom = 20

func needTool(t *testing.T, name string) string {
	t.Helper()
	p, err := exec.LookPath(name)
	if err != nil {
		if os.Getenv("STEPDOWN_HEADERS") == "1" {
			t.Fatalf("%s is not installed and STEPDOWN_HEADERS=1 asks for it (apt-get install -y %s)", name, name)
		}
		t.Skipf("%s is not installed (set STEPDOWN_HEADERS=1 to make that a failure)", name)
	}
	return p
}

// run runs a command in dir, bounded in time, and returns its combined output.
func run(t *testing.T, dir string, name string, args ...string) []byte {
	t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), 2*time.Minute)
	defer cancel()
	cmd := exec.CommandContext(ctx, name, args...)
	cmd.Dir = dir
	out, err := cmd.CombinedOutput()
	if err != nil {
		t.Fatalf("%s %s: %v\n%s", name, strings.Join(args, " "), err, cut(out))
	}
	return out
}

func cut(b []byte) string {
	if len(b) > 4000 {
		return string(b[:4000]) + "\n..."
	}
	return string(b)
}

// writeAll writes every chain's three files into dir.
func writeAll(t *testing.T, dir string, chains []planned) {
	t.Helper()
	for _, p := range chains {
		fs, err := Files(p.cas, p.w, p.opts)
		if err != nil {
			t.Fatal(err)
		}
		for _, f := range fs {
			if err := os.WriteFile(filepath.Join(dir, path.Base(f.Name)), f.Data, 0o644); err != nil {
				t.Fatal(err)
			}
		}
	}
}

func fileNames(t *testing.T, o Options) (c, vhdl, sv string) {
	t.Helper()
	c, vhdl, sv, err := FileNames(o)
	if err != nil {
		t.Fatal(err)
	}
	return c, vhdl, sv
}

// expectLines returns the lines a program prints for the constants:
// "NAME value" for a scalar, "NAME[k] value" for element k of an array,
// in the order of want; extra(c) adds lines of its own per array.
func expectLines(chains []planned, extra func(c constant) []string) []string {
	var out []string
	for _, p := range chains {
		for _, c := range want(p) {
			if !c.array {
				out = append(out, fmt.Sprintf("%s %d", c.name, c.values[0]))
				continue
			}
			out = append(out, extra(c)...)
			for k, v := range c.values {
				out = append(out, fmt.Sprintf("%s[%d] %d", c.name, k, v))
			}
		}
	}
	return out
}

// compare reports the first differences between what a tool printed and the plan.
func compare(t *testing.T, tool string, got, want []string) {
	t.Helper()
	if slices.Equal(got, want) {
		return
	}
	bad := 0
	for i := 0; i < max(len(got), len(want)) && bad < 10; i++ {
		var g, w string
		if i < len(got) {
			g = got[i]
		}
		if i < len(want) {
			w = want[i]
		}
		if g != w {
			t.Errorf("%s line %d: printed %q, the plan says %q", tool, i+1, g, w)
			bad++
		}
	}
	t.Errorf("%s printed %d lines, the plan has %d", tool, len(got), len(want))
}

func lines(b []byte) []string {
	s := strings.TrimRight(strings.ReplaceAll(string(b), "\r\n", "\n"), "\n")
	if s == "" {
		return nil
	}
	return strings.Split(s, "\n")
}

// TestC compiles a C99 program that includes every chain's header with
// gcc -std=c99 -Wall -Wextra -Werror -pedantic, together with a second file
// that includes them all and uses none (the unused static arrays must not
// warn, and two files must link), and checks every printed constant, each
// array's length (sizeof) and its element size (int32_t up to 32-bit words,
// int64_t above).
func TestC(t *testing.T) {
	gcc := needTool(t, "gcc")
	dir := t.TempDir()
	chains := toolChains()
	writeAll(t, dir, chains)
	var inc, body bytes.Buffer
	for _, p := range chains {
		h, _, _ := fileNames(t, p.opts)
		fmt.Fprintf(&inc, "#include %q\n", h)
		for _, c := range want(p) {
			if !c.array {
				fmt.Fprintf(&body, "\tprintf(\"%%s %%\" PRId64 \"\\n\", %q, (int64_t)(%s));\n", c.name, c.name)
				continue
			}
			if c.coef {
				fmt.Fprintf(&body, "\tprintf(\"%%s.size %%d\\n\", %q, (int)sizeof %s[0]);\n", c.name, c.name)
				fmt.Fprintf(&body, "\tprintf(\"%%s.type %%d\\n\", %q, (int)sizeof(%s_TYPE));\n", c.name, c.name)
			}
			fmt.Fprintf(&body, "\tfor (i = 0; i < sizeof %s / sizeof %s[0]; i++)\n", c.name, c.name)
			fmt.Fprintf(&body, "\t\tprintf(\"%%s[%%d] %%\" PRId64 \"\\n\", %q, (int)i, (int64_t)%s[i]);\n", c.name, c.name)
		}
	}
	prog := "#include <inttypes.h>\n#include <stdio.h>\n#include <stddef.h>\n" + inc.String() +
		"\nint other(void);\n\nint main(void)\n{\n\tsize_t i;\n" + body.String() + "\treturn other();\n}\n"
	other := inc.String() + "\nint other(void);\n\nint other(void)\n{\n\treturn 0;\n}\n"
	for name, src := range map[string]string{"main.c": prog, "other.c": other} {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(src), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	run(t, dir, gcc, "-std=c99", "-Wall", "-Wextra", "-Werror", "-pedantic", "-o", "consts", "main.c", "other.c")
	got := lines(run(t, dir, filepath.Join(dir, "consts")))
	compare(t, "C program", got, expectLines(chains, func(c constant) []string {
		if !c.coef {
			return nil
		}
		size := 4
		if c.bits > 32 {
			size = 8
		}
		return []string{fmt.Sprintf("%s.size %d", c.name, size), fmt.Sprintf("%s.type %d", c.name, size)}
	}))
}

// TestVHDL analyses every chain's package with GHDL as VHDL-2008 and as
// VHDL-93 (-std=93c), then elaborates and runs, under each, a testbench that
// reports every constant: integers with integer'image, each coefficient of
// _COEFS_SIGNED as its bits (its width checked), and _COEFS, the integer
// form, exactly when the word is at most 32 bits.
func TestVHDL(t *testing.T) {
	ghdl := needTool(t, "ghdl")
	dir := t.TempDir()
	chains := toolChains()
	writeAll(t, dir, chains)
	var uses, body bytes.Buffer
	var pkgs []string
	for _, p := range chains {
		_, v, _ := fileNames(t, p.opts)
		pkgs = append(pkgs, v)
		fmt.Fprintf(&uses, "use work.%s.all;\n", strings.TrimSuffix(v, ".vhd"))
		for _, c := range want(p) {
			if !c.array {
				fmt.Fprintf(&body, "    report \"%s \" & integer'image(%s);\n", c.name, c.name)
				continue
			}
			if c.coef {
				fmt.Fprintf(&body, "    for i in %s_SIGNED'range loop\n", c.name)
				fmt.Fprintf(&body, "      report \"%s_SIGNED[\" & integer'image(i) & \"] b\" & bits(std_logic_vector(%s_SIGNED(i)));\n", c.name, c.name)
				body.WriteString("    end loop;\n")
				if c.bits > 32 {
					continue
				}
			}
			fmt.Fprintf(&body, "    for i in %s'range loop\n", c.name)
			fmt.Fprintf(&body, "      report \"%s[\" & integer'image(i) & \"] \" & integer'image(%s(i));\n", c.name, c.name)
			body.WriteString("    end loop;\n")
		}
	}
	tb := "library ieee;\nuse ieee.std_logic_1164.all;\nuse ieee.numeric_std.all;\n" + uses.String() + `
entity tb is
end entity tb;

architecture sim of tb is
  function bits(v : std_logic_vector) return string is
    variable s : string(1 to v'length);
    variable k : integer := 1;
  begin
    for i in v'range loop
      if v(i) = '1' then
        s(k) := '1';
      else
        s(k) := '0';
      end if;
      k := k + 1;
    end loop;
    return s;
  end function bits;
begin
  process
  begin
` + body.String() + `    wait;
  end process;
end architecture sim;
`
	if err := os.WriteFile(filepath.Join(dir, "tb.vhd"), []byte(tb), 0o644); err != nil {
		t.Fatal(err)
	}
	exp := expectLines(chains, func(c constant) []string {
		if !c.coef {
			return nil
		}
		var out []string
		for k, v := range c.values {
			out = append(out, fmt.Sprintf("%s_SIGNED[%d] %d/%d", c.name, k, v, c.bits))
		}
		return out
	})
	// Lines of a coefficient wider than 32 bits have no integer form.
	exp = slices.DeleteFunc(exp, func(l string) bool {
		for _, p := range chains {
			for _, c := range want(p) {
				if c.coef && c.bits > 32 && strings.HasPrefix(l, c.name+"[") {
					return true
				}
			}
		}
		return false
	})
	for _, std := range []string{"08", "93c"} {
		work := filepath.Join(dir, "work"+std)
		if err := os.Mkdir(work, 0o755); err != nil {
			t.Fatal(err)
		}
		args := append([]string{"-a", "--std=" + std, "--workdir=" + work}, pkgs...)
		run(t, dir, ghdl, append(args, "tb.vhd")...)
		run(t, dir, ghdl, "-e", "--std="+std, "--workdir="+work, "tb")
		out := run(t, dir, ghdl, "-r", "--std="+std, "--workdir="+work, "tb")
		var got []string
		for _, l := range lines(out) {
			_, msg, ok := strings.Cut(l, "(report note): ")
			if !ok {
				continue
			}
			// A bit string "bNNN" becomes its two's-complement value and width.
			if name, b, ok := strings.Cut(msg, " b"); ok {
				v, ok := new(big.Int).SetString(b, 2)
				if !ok {
					t.Fatalf("GHDL reported %q: not a bit string", msg)
				}
				if b[0] == '1' {
					v.Sub(v, new(big.Int).Lsh(big.NewInt(1), uint(len(b))))
				}
				msg = fmt.Sprintf("%s %s/%d", name, v, len(b))
			}
			got = append(got, msg)
		}
		compare(t, "GHDL --std="+std+" testbench", got, exp)
	}
}

// TestVerilog compiles with Icarus Verilog (-g2012) a module that includes
// every chain's .svh and $displays every constant (coefficients through
// $signed of their field), and the width of each flat array vector.
func TestVerilog(t *testing.T) {
	iverilog := needTool(t, "iverilog")
	vvp := needTool(t, "vvp")
	dir := t.TempDir()
	chains := toolChains()
	writeAll(t, dir, chains)
	src := verilogModule(t, chains)
	if err := os.WriteFile(filepath.Join(dir, "tb.sv"), []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	run(t, dir, iverilog, "-g2012", "-o", "tb.vvp", "tb.sv")
	got := lines(run(t, dir, vvp, "-n", "tb.vvp"))
	compare(t, "Icarus Verilog module", got, expectLines(chains, func(c constant) []string {
		w := FieldBits
		if c.coef {
			w = c.bits
		}
		return []string{fmt.Sprintf("%s.width %d", c.name, w*len(c.values))}
	}))
}

// TestVerilator lints, with Verilator -Wall, a module that includes every
// chain's .svh and uses its arrays. Verilator is optional: a missing one
// skips the test even under STEPDOWN_HEADERS=1.
func TestVerilator(t *testing.T) {
	v, err := exec.LookPath("verilator")
	if err != nil {
		t.Skip("verilator is not installed")
	}
	dir := t.TempDir()
	chains := toolChains()
	writeAll(t, dir, chains)
	var inc, sum bytes.Buffer
	for i, p := range chains {
		_, _, sv := fileNames(t, p.opts)
		fmt.Fprintf(&inc, "`include %q\n", sv)
		if i > 0 {
			sum.WriteString("\n    ^ ")
		}
		// Bit 0 of every constant, so that none is unused.
		fmt.Fprintf(&sum, "%s_FIELD_BITS[0]", toUpper(p.opts.Prefix))
		for _, c := range want(p) {
			fmt.Fprintf(&sum, " ^ %s[0]", c.name)
		}
	}
	src := "module lint_top (output logic o);\n" + inc.String() +
		"  assign o = " + sum.String() + ";\nendmodule\n"
	if err := os.WriteFile(filepath.Join(dir, "lint_top.sv"), []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	run(t, dir, v, "--lint-only", "-Wall", "lint_top.sv")
}

// verilogModule returns a module that includes every chain's .svh and
// displays every constant.
func verilogModule(t *testing.T, chains []planned) string {
	var b bytes.Buffer
	b.WriteString("module tb;\n")
	for _, p := range chains {
		_, _, sv := fileNames(t, p.opts)
		fmt.Fprintf(&b, "`include %q\n", sv)
	}
	b.WriteString("  integer i;\n  initial begin\n")
	for _, p := range chains {
		pre := toUpper(p.opts.Prefix)
		for _, c := range want(p) {
			if !c.array {
				fmt.Fprintf(&b, "    $display(\"%s %%0d\", %s);\n", c.name, c.name)
				continue
			}
			w, sel := pre+"_FIELD_BITS", "%s[i*%s +: %s]"
			if c.coef {
				w, sel = strings.TrimSuffix(c.name, "COEFS")+"COEF_BITS", "$signed(%s[i*%s +: %s])"
			}
			fmt.Fprintf(&b, "    $display(\"%s.width %%0d\", $bits(%s));\n", c.name, c.name)
			fmt.Fprintf(&b, "    for (i = 0; i < %d; i = i + 1)\n", len(c.values))
			fmt.Fprintf(&b, "      $display(\"%s[%%0d] %%0d\", i, "+sel+");\n", c.name, c.name, w, w)
		}
	}
	b.WriteString("  end\nendmodule\n")
	return b.String()
}

// The golden files (TestGolden) compile too: gcc on a file that includes the
// header twice (the include guard), GHDL on the package (VHDL-2008 and -93),
// Icarus on a module that includes the .svh, as SystemVerilog and as
// Verilog-2005.
func TestGoldenCompiles(t *testing.T) {
	gcc := needTool(t, "gcc")
	ghdl := needTool(t, "ghdl")
	iverilog := needTool(t, "iverilog")
	dir := t.TempDir()
	for _, n := range []string{"stepdown_chain.h", "stepdown_chain_pkg.vhd", "stepdown_chain.svh"} {
		b, err := os.ReadFile(filepath.Join("testdata", n))
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join(dir, n), b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	src := map[string]string{
		"use.c":  "#include \"stepdown_chain.h\"\n#include \"stepdown_chain.h\"\n\nint first_tap(void);\n\nint first_tap(void)\n{\n\treturn (int)STEPDOWN_S3_COEFS[0] + STEPDOWN_S1_REG_BITS[0];\n}\n",
		"top.sv": "module top (o);\n`include \"stepdown_chain.svh\"\n  output wire signed [STEPDOWN_S3_COEF_BITS-1:0] o;\n  assign o = $signed(STEPDOWN_S3_COEFS[0 +: STEPDOWN_S3_COEF_BITS]);\nendmodule\n",
	}
	for n, s := range src {
		if err := os.WriteFile(filepath.Join(dir, n), []byte(s), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	run(t, dir, gcc, "-std=c99", "-Wall", "-Wextra", "-Werror", "-pedantic", "-c", "use.c")
	for _, std := range []string{"08", "93c"} {
		work := filepath.Join(dir, "work"+std)
		if err := os.Mkdir(work, 0o755); err != nil {
			t.Fatal(err)
		}
		run(t, dir, ghdl, "-a", "--std="+std, "--workdir="+work, "stepdown_chain_pkg.vhd")
	}
	// The include is plain Verilog-2005 as well as SystemVerilog.
	for _, g := range []string{"-g2012", "-g2005"} {
		run(t, dir, iverilog, g, "-o", "top.vvp", "top.sv")
	}
}
