// Package handoff holds what the packages under it share: the File type of
// the files they write for the RTL team.
//
// Under it, each package turns a planned chain (a fixed.Cascade and its
// fixed.Widths, from package chain/fixed) into one kind of file: vectors
// writes the test vectors of the bit-true model, headers the C, VHDL and
// Verilog declarations of the coefficients and widths, rtl a Verilog
// reference model with a self-checking testbench that reads the vectors.
// They are planning data for hardware: the team's own bit-true simulation
// of its RTL and its sign-off remain the reference.
//
// # Conventions
//
// File names are relative to the output folder and use "/" whatever the
// system. Data words are two's-complement integer codes, a b-bit code w
// standing for w / 2^(b-1) of full scale (chain/fixed's convention). Stages
// are numbered from 1 in signal order. Every writer is deterministic: the
// same plan gives the same bytes, with no timestamps.
package handoff

import "io"

// File is one output file: a path relative to the output folder, with "/"
// between folders, and its bytes: Data, or, where Stream is set, what
// Stream writes (for files too large to hold whole, such as a simulation's
// output; Data is then unused).
type File struct {
	Name   string
	Data   []byte
	Stream func(w io.Writer) error
}
