package report

import (
	"fmt"
	"math/big"
	"strconv"
	"strings"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/farrow"
	"github.com/stepdown-dsp/stepdown/handoff"
)

// File is one output file: a path relative to the output folder and its
// bytes (handoff.File, which the hand-off packages write).
type File = handoff.File

// CoefficientFiles returns the coefficient files of a chain, in stage order,
// under the folder "coefficients/". ints asks for the integer files too
// (the spec sets a coefficient width or "auto"); they are written from the
// stage's coefficients_int, the integers of the word-length plan.
//
// A fractional chain's fractional stage is written too: a polyphase
// stage's prototype like a FIR's taps (stage<i>_polyphase.csv), a Farrow
// stage's subfilters as one matrix (stage<i>_farrow.csv, FarrowCSV). A
// decimation chain's has integer files like a FIR's, from its
// coefficients_int: the prototype times L, or the Farrow rows one after
// the other (row p, the power p of mu, at indices p N .. p N + N - 1),
// all at the one scale 2^-frac. The folder then gets
// coefficients/README.txt (FractionalReadme), which says what the files
// hold and that the hand-off is not written.
func CoefficientFiles(c Chain, ints bool) ([]File, error) {
	var out []File
	for i, s := range c.Stages {
		base := fmt.Sprintf("coefficients/stage%d_%s", i+1, s.Kind)
		if s.Kind == chain.Farrow.String() && len(s.FarrowCoefficients) > 0 {
			b, err := FarrowCSV(s.FarrowCoefficients)
			if err != nil {
				return nil, fmt.Errorf("report: stage %d: %v", i+1, err)
			}
			out = append(out, File{Name: base + ".csv", Data: b})
		} else {
			if s.Kind == "cic" || len(s.Coefficients) == 0 {
				continue
			}
			out = append(out, File{Name: base + ".csv", Data: FloatCSV(s.Coefficients)})
		}
		w := s.StageReport
		if !ints || w == nil || w.CoefficientBits == 0 || w.CoefficientFrac == nil || len(w.CoefficientsInt) == 0 {
			continue
		}
		out = append(out, File{Name: base + "_int.csv", Data: IntCSV(w.CoefficientsInt, *w.CoefficientFrac)})
		hex, err := ReadmemH(w.CoefficientsInt, w.CoefficientBits)
		if err != nil {
			return nil, fmt.Errorf("report: stage %d: %v", i+1, err)
		}
		out = append(out, File{Name: base + ".hex", Data: hex})
	}
	if c.Fractional() && len(out) > 0 {
		out = append(out, File{Name: "coefficients/README.txt", Data: FractionalReadme(c)})
	}
	return out, nil
}

// NoHandoff is the one line that says why a fractional chain's output
// folder has no hand-off (headers/, vectors/, rtl/).
const NoHandoff = "no hand-off (headers/, vectors/, rtl/): it is written for chains of integer stages only, and this chain has a fractional stage (its word lengths and bit-true figures are in report.json)"

// FractionalReadme is coefficients/README.txt of a fractional chain: what
// each coefficient file holds, the Farrow convention, and NoHandoff.
func FractionalReadme(c Chain) []byte {
	var b strings.Builder
	fmt.Fprintf(&b, "Coefficients of %s\n\n", c.Notation)
	fmt.Fprintf(&b, "Planning data: %s.\n\n", Caution)
	if c.ChainReport == nil {
		b.WriteString("The chain has a fractional stage, designed in floating point only: there\n" +
			"are no word lengths and no integer coefficient files for it.\n\n")
	} else {
		b.WriteString("The chain has a fractional stage. Its integer files (_int.csv, .hex), when\n" +
			"written, hold report.json's coefficients_int at the scale 2^-coefficient_frac:\n" +
			"a polyphase stage's prototype times L (the data path's gain L in the taps),\n" +
			"a Farrow stage's rows one after the other (row p, the subfilter of mu^p, at\n" +
			"indices p N .. p N + N - 1, N its taps; mu an unsigned word of mu_bits).\n\n")
	}
	for i, s := range c.Stages {
		name := fmt.Sprintf("stage%d_%s.csv", i+1, s.Kind)
		switch {
		case s.Kind == chain.Polyphase.String():
			fmt.Fprintf(&b, "%s: index,coefficient, the %d-tap prototype lowpass of the polyphase\n"+
				"stage, up by L = %d and down by M = %d. It runs at L x the stage's input rate\n"+
				"(%s Hz) and has a gain of 1 at 0 Hz within its passband deviation: the data\npath multiplies "+
				"by L. Phase p (p = 0..L-1) holds taps p, p+L, p+2L, ...: %d multiplies per\n"+
				"output.\n\n", name, s.Taps, s.Interpolation, s.Decimation,
				strconv.FormatFloat(s.InputRateHz*float64(s.Interpolation), 'g', -1, 64), s.PhaseTaps)
		case s.Kind == chain.Farrow.String():
			fmt.Fprintf(&b, "%s: the Farrow structure's subfilters as one matrix, up by L = %d\n"+
				"and down by M = %d: after its comment lines, a header row\n"+
				"index,mu0,...,mu%d, then one row per tap j = 0..%d, column mu<i> holding\n"+
				"Coef[i][j], the tap j of the subfilter of the i-th power of mu\n"+
				"(report.json's farrow_coefficients[i][j]). The convention:\n%s\n\n",
				name, s.Interpolation, s.Decimation, len(s.FarrowCoefficients)-1, s.Taps-1, farrow.Convention)
		case s.Kind != "cic" && len(s.Coefficients) > 0:
			fmt.Fprintf(&b, "%s: index,coefficient, the designed float taps.\n\n", name)
		}
	}
	b.WriteString(capitalise(NoHandoff) + ".\n")
	return []byte(b.String())
}

// FarrowCSV writes a Farrow structure's coefficients (coef[i][j], i the
// power of mu, j the tap; every row as long) as one matrix: comment lines
// that say it is planning data and give farrow.Convention, a header row
// index,mu0,...,muP, then one row per tap j with coef[0][j] ... coef[P][j]
// in Go's shortest round-trip form. Readers that skip lines starting with
// '#' (NumPy's loadtxt, most spreadsheet imports with a comment setting)
// read the matrix as it is.
func FarrowCSV(coef [][]float64) ([]byte, error) {
	if len(coef) == 0 || len(coef[0]) == 0 {
		return nil, fmt.Errorf("the Farrow stage has no coefficients")
	}
	n := len(coef[0])
	for i, row := range coef {
		if len(row) != n {
			return nil, fmt.Errorf("the Farrow subfilter of mu^%d has %d taps, that of mu^0 %d: all must have the same", i, len(row), n)
		}
	}
	var b strings.Builder
	fmt.Fprintf(&b, "# Farrow coefficients, planning data: %s.\n", Caution)
	fmt.Fprintf(&b, "# Row j, column mu<i> is Coef[i][j]. %s\n", farrow.Convention)
	b.WriteString("index")
	for i := range coef {
		fmt.Fprintf(&b, ",mu%d", i)
	}
	b.WriteByte('\n')
	for j := 0; j < n; j++ {
		b.WriteString(strconv.Itoa(j))
		for i := range coef {
			b.WriteByte(',')
			b.WriteString(strconv.FormatFloat(coef[i][j], 'g', -1, 64))
		}
		b.WriteByte('\n')
	}
	return []byte(b.String()), nil
}

// FloatCSV writes index,coefficient rows in Go's shortest round-trip form.
func FloatCSV(taps []float64) []byte {
	var b strings.Builder
	b.WriteString("index,coefficient\n")
	for i, t := range taps {
		fmt.Fprintf(&b, "%d,%s\n", i, strconv.FormatFloat(t, 'g', -1, 64))
	}
	return []byte(b.String())
}

// IntCSV writes index,integer,value rows, value = integer * 2^-frac written
// exactly (a dyadic rational always has a finite decimal expansion).
func IntCSV(ints []int64, frac int) []byte {
	var b strings.Builder
	b.WriteString("index,integer,value\n")
	for i, v := range ints {
		fmt.Fprintf(&b, "%d,%d,%s\n", i, v, dyadic(v, frac))
	}
	return []byte(b.String())
}

// dyadic writes v * 2^-frac exactly in decimal.
func dyadic(v int64, frac int) string {
	r := new(big.Rat).SetInt64(v)
	if frac >= 0 {
		r.Quo(r, new(big.Rat).SetInt(new(big.Int).Lsh(big.NewInt(1), uint(frac))))
	} else {
		r.Mul(r, new(big.Rat).SetInt(new(big.Int).Lsh(big.NewInt(1), uint(-frac))))
	}
	digits := frac
	if digits < 0 {
		digits = 0
	}
	s := r.FloatString(digits)
	if strings.Contains(s, ".") {
		s = strings.TrimRight(strings.TrimRight(s, "0"), ".")
	}
	if s == "-0" {
		s = "0"
	}
	return s
}

// ReadmemH writes one two's-complement word of width bits per line, in
// ceil(bits/4) lower-case hex digits, as Verilog's $readmemh reads it.
func ReadmemH(ints []int64, bits int) ([]byte, error) {
	if bits < 2 || bits > 64 {
		return nil, fmt.Errorf("coefficient width %d bits is outside [2, 64]", bits)
	}
	lo, hi := -(int64(1) << (bits - 1)), (int64(1)<<(bits-1))-1
	if bits == 64 {
		lo, hi = -1<<63, 1<<63-1
	}
	digits := (bits + 3) / 4
	var mask uint64 = 1<<uint(bits) - 1
	if bits == 64 {
		mask = ^uint64(0)
	}
	var b strings.Builder
	for i, v := range ints {
		if v < lo || v > hi {
			return nil, fmt.Errorf("coefficient %d = %d does not fit %d-bit two's complement", i, v, bits)
		}
		fmt.Fprintf(&b, "%0*x\n", digits, uint64(v)&mask)
	}
	return []byte(b.String()), nil
}
