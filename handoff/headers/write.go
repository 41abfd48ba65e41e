package headers

import (
	"bytes"
	"fmt"
	"strconv"
	"strings"
)

// perLine is how many array elements a line holds; bit strings, perBitLine.
const (
	perLine    = 8
	perBitLine = 4
)

// c renders the C99 header.
func (m *model) c() []byte {
	var b bytes.Buffer
	file := m.lower + "_chain.h"
	b.WriteString("/*\n")
	for _, l := range m.headerLines(file) {
		b.WriteString(strings.TrimRight(" * "+l, " ") + "\n")
	}
	b.WriteString(" *\n * Scalars are #defines; arrays are static const, marked unused so that a\n")
	b.WriteString(" * file that includes this header without using them compiles cleanly.\n */\n")
	guard := m.prefix + "_CHAIN_H"
	fmt.Fprintf(&b, "#ifndef %s\n#define %s\n\n#include <stdint.h>\n\n", guard, guard)
	unused := m.prefix + "_UNUSED"
	fmt.Fprintf(&b, "#if defined(__GNUC__)\n#define %s __attribute__((unused))\n#else\n#define %s\n#endif\n", unused, unused)
	for _, s := range m.sections {
		b.WriteString("\n")
		writeNotes(&b, " * ", s.title, s.notes)
		for _, it := range s.items {
			name := m.prefix + "_" + it.name
			if !it.array {
				v := strconv.FormatInt(it.value, 10)
				if it.value < 0 {
					v = "(" + v + ")"
				}
				fmt.Fprintf(&b, "#define %s %s /* %s */\n", name, v, it.doc)
				continue
			}
			typ, lit := "int", func(v int64) string { return strconv.FormatInt(v, 10) }
			if it.coef {
				typ = "int32_t"
				if it.elemBits > 32 {
					typ = "int64_t"
					lit = func(v int64) string { return "INT64_C(" + strconv.FormatInt(v, 10) + ")" }
				}
				fmt.Fprintf(&b, "#define %s_TYPE %s /* element type of %s */\n", name, typ, name)
			}
			fmt.Fprintf(&b, "/* %s */\n", it.doc)
			fmt.Fprintf(&b, "static const %s %s[%s_%s] %s = {\n", typ, name, m.prefix, it.length, unused)
			writeElems(&b, it.values, lit, "\t", ",", perLine)
			b.WriteString("};\n")
		}
	}
	fmt.Fprintf(&b, "\n#endif /* %s */\n", guard)
	return b.Bytes()
}

// writeNotes writes a section's title and notes as a comment: a C block
// when line is " * ", else one line comment each.
func writeNotes(b *bytes.Buffer, line, title string, notes []string) {
	c := line == " * "
	if c {
		b.WriteString("/*\n")
	}
	fmt.Fprintf(b, "%s%s\n", line, title)
	for _, n := range notes {
		fmt.Fprintf(b, "%s  %s\n", line, n)
	}
	if c {
		b.WriteString(" */\n")
	}
}

// writeElems writes the elements perLine to a line, separated by sep, with
// no separator after the last.
func writeElems(b *bytes.Buffer, vs []int64, lit func(int64) string, indent, sep string, perLine int) {
	for i, v := range vs {
		if i%perLine == 0 {
			b.WriteString(indent)
		} else {
			b.WriteString(" ")
		}
		b.WriteString(lit(v))
		if i < len(vs)-1 {
			b.WriteString(sep)
		}
		if i%perLine == perLine-1 || i == len(vs)-1 {
			b.WriteString("\n")
		}
	}
}

// vhdl renders the VHDL package, valid VHDL-93 and VHDL-2008.
func (m *model) vhdl() []byte {
	var b bytes.Buffer
	file := m.lower + "_chain_pkg.vhd"
	for _, l := range m.headerLines(file) {
		b.WriteString(strings.TrimRight("-- "+l, " ") + "\n")
	}
	b.WriteString("--\n-- Scalars are integer constants. Coefficients are given twice when they fit\n")
	b.WriteString("-- a VHDL integer (at most 32 bits: |c| <= 2^31 - 1): _COEFS, an integer\n")
	b.WriteString("-- array, and always _COEFS_SIGNED, an array of signed(COEF_BITS - 1 downto 0)\n")
	b.WriteString("-- (ieee.numeric_std), the one form for any width.\n\n")
	b.WriteString("library ieee;\nuse ieee.std_logic_1164.all;\nuse ieee.numeric_std.all;\n\n")
	pkg := m.lower + "_chain_pkg"
	fmt.Fprintf(&b, "package %s is\n\n", pkg)
	arr := m.prefix + "_INTEGER_ARRAY"
	fmt.Fprintf(&b, "  -- An array of integers, index 0 first (VHDL-93 has no integer_vector).\n")
	fmt.Fprintf(&b, "  type %s is array (natural range <>) of integer;\n", arr)
	for _, s := range m.sections {
		b.WriteString("\n")
		writeNotes(&b, "  -- ", s.title, s.notes)
		for _, it := range s.items {
			name := m.prefix + "_" + it.name
			if !it.array {
				fmt.Fprintf(&b, "  constant %s : integer := %d; -- %s\n", name, it.value, it.doc)
				continue
			}
			rng := fmt.Sprintf("(0 to %s_%s - 1)", m.prefix, it.length)
			if !it.coef || it.elemBits <= 32 {
				fmt.Fprintf(&b, "  -- %s\n", it.doc)
				fmt.Fprintf(&b, "  constant %s : %s%s := %s;\n", name, arr, rng,
					aggregate(it.values, func(v int64) string { return strconv.FormatInt(v, 10) }, perLine))
			}
			if !it.coef {
				continue
			}
			typ := name + "_ARRAY"
			fmt.Fprintf(&b, "  -- the same coefficients as signed(%d downto 0), index 0 first\n", it.elemBits-1)
			fmt.Fprintf(&b, "  type %s is array %s of signed(%d downto 0);\n", typ, rng, it.elemBits-1)
			bits := it.elemBits
			fmt.Fprintf(&b, "  constant %s_SIGNED : %s := %s;\n", name, typ,
				aggregate(it.values, func(v int64) string { return binary(v, bits) }, perBitLine))
		}
	}
	fmt.Fprintf(&b, "\nend package %s;\n", pkg)
	return b.Bytes()
}

// aggregate returns a VHDL aggregate of the values, positional, or named for
// one element (a positional aggregate needs two).
func aggregate(vs []int64, lit func(int64) string, perLine int) string {
	if len(vs) == 1 {
		return "(0 => " + lit(vs[0]) + ")"
	}
	var b bytes.Buffer
	b.WriteString("(\n")
	writeElems(&b, vs, lit, "    ", ",", perLine)
	b.WriteString("  )")
	return b.String()
}

// binary returns v's two's complement in bits bits as a quoted bit string.
func binary(v int64, bits int) string {
	b := make([]byte, bits+2)
	b[0], b[bits+1] = '"', '"'
	for i := 0; i < bits; i++ {
		b[bits-i] = '0' + byte(uint64(v)>>min(i, 63)&1)
	}
	return string(b)
}

// verilog renders the Verilog-2005/SystemVerilog include: localparams, to be
// included inside a module, interface or package.
func (m *model) verilog() []byte {
	var b bytes.Buffer
	file := m.lower + "_chain.svh"
	for _, l := range m.headerLines(file) {
		b.WriteString(strings.TrimRight("// "+l, " ") + "\n")
	}
	b.WriteString("//\n// Include inside a module, interface or package: the constants are\n")
	b.WriteString("// localparams of the including scope, so there is no include guard.\n")
	b.WriteString("// Scalars are localparam integer. An array is one flat vector, element k\n")
	fmt.Fprintf(&b, "// in bits [k*W +: W]: coefficients with W = COEF_BITS, two's complement\n")
	if m.interp {
		fmt.Fprintf(&b, "// (read with $signed), the CIC's COMB_BITS and INTEG_BITS with\n")
		fmt.Fprintf(&b, "// W = %s_FIELD_BITS, unsigned.\n\n", m.prefix)
		fmt.Fprintf(&b, "localparam integer %s_FIELD_BITS = %d; // element width of COMB_BITS and INTEG_BITS\n", m.prefix, FieldBits)
	} else {
		fmt.Fprintf(&b, "// (read with $signed), the CIC's REG_BITS, REG_DROPPED and SUBSTAGE_BITS with\n")
		fmt.Fprintf(&b, "// W = %s_FIELD_BITS, unsigned.\n\n", m.prefix)
		fmt.Fprintf(&b, "localparam integer %s_FIELD_BITS = %d; // element width of REG_BITS, REG_DROPPED and SUBSTAGE_BITS\n", m.prefix, FieldBits)
	}
	for _, s := range m.sections {
		b.WriteString("\n")
		writeNotes(&b, "// ", s.title, s.notes)
		for _, it := range s.items {
			name := m.prefix + "_" + it.name
			if !it.array {
				fmt.Fprintf(&b, "localparam integer %s = %d; // %s\n", name, it.value, it.doc)
				continue
			}
			w := fmt.Sprintf("%s_FIELD_BITS", m.prefix)
			lit := func(v int64) string { return fmt.Sprintf("%d'd%d", FieldBits, v) }
			if it.coef {
				w = name[:len(name)-len("COEFS")] + "COEF_BITS"
				bits := it.elemBits
				lit = func(v int64) string {
					if v < 0 {
						return fmt.Sprintf("-%d'sd%d", bits, uint64(-v))
					}
					return fmt.Sprintf("%d'sd%d", bits, v)
				}
			}
			// The first element of a concatenation is its most significant:
			// write element N-1 first, so that element k sits at [k*W +: W].
			rev := make([]int64, len(it.values))
			for k, v := range it.values {
				rev[len(rev)-1-k] = v
			}
			fmt.Fprintf(&b, "// %s; element k at [k*%s +: %s], last element first\n", it.doc, w, w)
			fmt.Fprintf(&b, "localparam [%s_%s*%s-1:0] %s = {\n", m.prefix, it.length, w, name)
			writeElems(&b, rev, lit, "  ", ",", perLine)
			b.WriteString("};\n")
		}
	}
	return b.Bytes()
}
