package report

import (
	"fmt"
	"github.com/stepdown-dsp/stepdown/handoff"
	"math/big"
	"strconv"
	"strings"
)

// File is one output file: a path relative to the output folder and its
// bytes (handoff.File, which the hand-off packages write).
type File = handoff.File

// CoefficientFiles returns the coefficient files of a chain, in stage order,
// under the folder "coefficients/". ints asks for the integer files too
// (the spec sets a coefficient width or "auto"); they are written from the
// stage's coefficients_int, the integers of the word-length plan.
func CoefficientFiles(c Chain, ints bool) ([]File, error) {
	var out []File
	for i, s := range c.Stages {
		if s.Kind == "cic" || len(s.Coefficients) == 0 {
			continue
		}
		base := fmt.Sprintf("coefficients/stage%d_%s", i+1, s.Kind)
		out = append(out, File{Name: base + ".csv", Data: FloatCSV(s.Coefficients)})
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
	return out, nil
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
