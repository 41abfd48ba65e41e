package main

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/stepdown-dsp/stepdown/signalio"
	"github.com/stepdown-dsp/stepdown/simulate"
)

// simulate on a recording of check's impulse stimulus gives, sample for
// sample, check's vectors/impulse.out.txt: two commands, one chain, the
// same bit-true output (the vectors are proven against a math/big
// re-implementation and under Icarus Verilog). The output WAV holds the
// 24-bit codes moved up into 24-bit samples (no shift), read back by
// signalio (checked against SciPy's reader).
func TestSimulateAgreesWithVectors(t *testing.T) {
	dir := t.TempDir()
	const notation = "cic5m1r16 > fir4"
	if r := runBinary(t, dir, nil, "check", "--chain", notation, "--out", "checked", "--quiet"); r.code != 0 {
		t.Fatalf("check: exit %d: %s", r.code, r.stderr)
	}
	in := readCodes(t, filepath.Join(dir, "checked", "vectors", "impulse.in.txt"))
	want := readCodes(t, filepath.Join(dir, "checked", "vectors", "impulse.out.txt"))
	sig := &signalio.Signal{RateHz: 122.88e6, Bits: 16, Samples: in}
	wav, err := signalio.Marshal(sig, signalio.Format{Kind: signalio.WAV, Bits: 16, Channels: 2})
	must(t, err)
	must(t, os.WriteFile(filepath.Join(dir, "impulse.wav"), wav, 0o644))
	r := runBinary(t, dir, nil, "simulate", "--input", "impulse.wav", "--chain", notation, "--out", "sim", "--json")
	if r.code != 0 {
		t.Fatalf("simulate: exit %d: %s", r.code, r.stderr)
	}
	var rep map[string]any
	must(t, json.Unmarshal([]byte(r.stdout), &rep))
	if rep["schema"] != "stepdown.simulate/1" || rep["chain"] != notation || rep["chain_source"] != "named" {
		t.Errorf("simulate.json: schema %v, chain %v, source %v", rep["schema"], rep["chain"], rep["chain_source"])
	}
	got, _, err := signalio.ReadFile(filepath.Join(dir, "sim", "output.wav"), signalio.Options{})
	must(t, err)
	if got.Bits != 24 || got.RateHz != 1.92e6 || len(got.Samples) != 2 {
		t.Fatalf("output.wav: %d bits, %v Hz, %d channels", got.Bits, got.RateHz, len(got.Samples))
	}
	for p := range want {
		if len(got.Samples[p]) != len(want[p]) {
			t.Fatalf("path %d: %d samples, vectors %d", p, len(got.Samples[p]), len(want[p]))
		}
		for i := range want[p] {
			if got.Samples[p][i] != want[p][i] {
				t.Fatalf("path %d sample %d: simulate %d, vectors %d", p, i, got.Samples[p][i], want[p][i])
			}
		}
	}
	for _, f := range []string{"simulate.json", "output_float.csv", "spectra.png"} {
		if fi, err := os.Stat(filepath.Join(dir, "sim", f)); err != nil || fi.Size() == 0 {
			t.Errorf("%s: missing or empty", f)
		}
	}
	// The float chain's output follows the vectors' codes (fractions of
	// 24-bit full scale) to within the data path's rounding: a few of its
	// LSBs on an impulse.
	fl := readFloatCSV(t, filepath.Join(dir, "sim", "output_float.csv"))
	for p := range want {
		if len(fl[p]) != len(want[p]) {
			t.Fatalf("output_float.csv path %d: %d samples, vectors %d", p, len(fl[p]), len(want[p]))
		}
		for i := range want[p] {
			if d := math.Abs(fl[p][i] - float64(want[p][i])/(1<<23)); d > 8.0/(1<<23) {
				t.Fatalf("output_float.csv path %d sample %d: %g, vectors %d/2^23 (%g LSB apart)", p, i, fl[p][i], want[p][i], d*(1<<23))
			}
		}
	}
}

// readFloatCSV reads output_float.csv: its comment line, its header (x or
// i,q), then one value a path per line.
func readFloatCSV(t *testing.T, path string) [][]float64 {
	t.Helper()
	b, err := os.ReadFile(path)
	must(t, err)
	lines := strings.Split(strings.TrimSuffix(string(b), "\n"), "\n")
	if len(lines) < 2 || !strings.HasPrefix(lines[0], "# stepdown simulate: ") || (lines[1] != "x" && lines[1] != "i,q") {
		t.Fatalf("%s: head %q", path, lines[:min(2, len(lines))])
	}
	out := make([][]float64, len(strings.Split(lines[1], ",")))
	for _, line := range lines[2:] {
		f := strings.Split(line, ",")
		if len(f) != len(out) {
			t.Fatalf("%s: line %q", path, line)
		}
		for p := range f {
			v, err := strconv.ParseFloat(f[p], 64)
			must(t, err)
			out[p] = append(out[p], v)
		}
	}
	return out
}

// writeFloatCSV keeps 12 significant digits of every value (relative
// error at most 5e-12), for one path and two, on seeded random values
// across the range a chain's output takes.
func TestWriteFloatCSV(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 12))
	for _, paths := range []int{1, 2} {
		res := &simulate.Result{}
		for range paths {
			x := make([]float64, 3000)
			for i := range x {
				x[i] = (rng.Float64()*2 - 1) * math.Pow(10, -12*rng.Float64())
			}
			x[0], x[1] = 0, -1
			res.Float = append(res.Float, x)
		}
		var buf bytes.Buffer
		must(t, writeFloatCSV(&buf, res))
		p := filepath.Join(t.TempDir(), "f.csv")
		must(t, os.WriteFile(p, buf.Bytes(), 0o644))
		got := readFloatCSV(t, p)
		for k := range res.Float {
			if len(got[k]) != len(res.Float[k]) {
				t.Fatalf("%d paths: path %d has %d values, want %d", paths, k, len(got[k]), len(res.Float[k]))
			}
			for i, v := range res.Float[k] {
				if math.Abs(got[k][i]-v) > 5e-12*math.Abs(v) {
					t.Fatalf("%d paths: path %d value %d: %v written as %v", paths, k, i, v, got[k][i])
				}
			}
		}
	}
}

// readCodes reads a vector file: one sample a line, one column per path.
func readCodes(t *testing.T, path string) [][]int64 {
	t.Helper()
	b, err := os.ReadFile(path)
	must(t, err)
	var out [][]int64
	for _, line := range strings.Split(strings.TrimSpace(string(b)), "\n") {
		f := strings.Fields(line)
		if out == nil {
			out = make([][]int64, len(f))
		}
		for p := range f {
			v, err := strconv.ParseInt(f[p], 10, 64)
			must(t, err)
			out[p] = append(out[p], v)
		}
	}
	return out
}

// A single-bit modulator's bitstream can be simulated: as the chain's own
// 1-bit codes (-1 and 0, a CSV's default for a 1-bit input word), as -1
// and +1 values (--format csv2) and as a 16-bit WAV, each taken by its
// sign, simulate's output is check's vectors (noise.out.txt) sample for
// sample. Values of +1 in a CSV of the default width are refused with a
// hint naming --format csv2.
func TestSimulateSingleBit(t *testing.T) {
	dir := t.TempDir()
	spec, err := filepath.Abs(filepath.Join("..", "..", "testdata", "specs", "sensor_sigma_delta.toml"))
	must(t, err)
	const notation = "cic6m1r64 > fir2"
	if r := runBinary(t, dir, nil, "check", spec, "--chain", notation, "--out", "checked", "--quiet"); r.code != 0 {
		t.Fatalf("check: exit %d: %s", r.code, r.stderr)
	}
	in := readCodes(t, filepath.Join(dir, "checked", "vectors", "noise.in.txt"))[0]
	want := readCodes(t, filepath.Join(dir, "checked", "vectors", "noise.out.txt"))[0]
	var codes, pm1 strings.Builder
	wavCodes := make([]int64, len(in))
	for i, v := range in {
		if v != 0 && v != -1 {
			t.Fatalf("noise.in.txt sample %d = %d: not a 1-bit code", i, v)
		}
		fmt.Fprintf(&codes, "%d\n", v)
		fmt.Fprintf(&pm1, "%d\n", 2*v+1)
		wavCodes[i] = 32767 * (2*v + 1)
	}
	must(t, os.WriteFile(filepath.Join(dir, "codes.csv"), []byte(codes.String()), 0o644))
	must(t, os.WriteFile(filepath.Join(dir, "pm1.csv"), []byte(pm1.String()), 0o644))
	wav, err := signalio.Marshal(&signalio.Signal{RateHz: 6.144e6, Bits: 16, Samples: [][]int64{wavCodes}}, signalio.Format{Kind: signalio.WAV, Bits: 16, Channels: 1})
	must(t, err)
	must(t, os.WriteFile(filepath.Join(dir, "pm1.wav"), wav, 0o644))
	for _, tc := range []struct {
		input, out string
		args       []string
	}{
		{"codes.csv", "output.csv", nil},
		{"pm1.csv", "output.csv", []string{"--format", "csv2"}},
		{"pm1.wav", "output.wav", nil},
	} {
		sim := "sim_" + strings.ReplaceAll(tc.input, ".", "_")
		args := append([]string{"simulate", spec, "--chain", notation, "--input", tc.input, "--out", sim, "--quiet"}, tc.args...)
		if r := runBinary(t, dir, nil, args...); r.code != 0 {
			t.Fatalf("simulate %s: exit %d: %s", tc.input, r.code, r.stderr)
		}
		opt := signalio.Options{}
		if strings.HasSuffix(tc.out, ".csv") {
			opt = signalio.Options{Format: signalio.Format{Kind: signalio.CSV, Bits: 24}, RateHz: 48e3}
		}
		got, _, err := signalio.ReadFile(filepath.Join(dir, sim, tc.out), opt)
		must(t, err)
		if len(got.Samples[0]) != len(want) {
			t.Fatalf("simulate %s: %d samples, vectors %d", tc.input, len(got.Samples[0]), len(want))
		}
		for i := range want {
			if got.Samples[0][i] != want[i] {
				t.Fatalf("simulate %s sample %d: %d, vectors %d", tc.input, i, got.Samples[0][i], want[i])
			}
		}
	}
	r := runBinary(t, dir, nil, "simulate", spec, "--chain", notation, "--input", "pm1.csv", "--out", "refused", "--quiet")
	if r.code != 2 || !strings.Contains(r.stderr, "--format csv2") || strings.Count(strings.TrimSpace(r.stderr), "\n") != 0 {
		t.Errorf("simulate of -1/+1 values at the 1-bit default: exit %d, %q; want exit 2 naming --format csv2 in one line", r.code, r.stderr)
	}
	// The hint is for values outside the 1-bit word only.
	r = runBinary(t, dir, nil, "simulate", spec, "--chain", notation, "--input", "missing.csv", "--out", "refused", "--quiet")
	if r.code != 2 || strings.Contains(r.stderr, "csv2") {
		t.Errorf("simulate of a missing CSV: exit %d, %q; want exit 2 without the 1-bit hint", r.code, r.stderr)
	}
}

// Bad recordings get one line naming the file and the rule, exit 2, and
// leave nothing behind.
func TestSimulateBadInputs(t *testing.T) {
	dir := t.TempDir()
	good := &signalio.Signal{RateHz: 122.88e6, Bits: 16, Samples: [][]int64{make([]int64, 4096), make([]int64, 4096)}}
	wav, err := signalio.Marshal(good, signalio.Format{Kind: signalio.WAV, Bits: 16, Channels: 2})
	must(t, err)
	mono := &signalio.Signal{RateHz: 98.304e6, Bits: 16, Samples: [][]int64{make([]int64, 4096), make([]int64, 4096)}}
	stereoReal, err := signalio.Marshal(mono, signalio.Format{Kind: signalio.WAV, Bits: 16, Channels: 2})
	must(t, err)
	wrongRate := &signalio.Signal{RateHz: 48000, Bits: 16, Samples: [][]int64{make([]int64, 4096)}}
	slow, err := signalio.Marshal(wrongRate, signalio.Format{Kind: signalio.WAV, Bits: 16, Channels: 1})
	must(t, err)
	must(t, os.WriteFile(filepath.Join(dir, "spec.toml"), []byte(goodSpec), 0o644))
	files := map[string][]byte{
		"truncated.wav": wav[:len(wav)-1000],
		"text.wav":      []byte("I,Q\n1,2\n"),
		"slow.wav":      slow,
		"stereo.wav":    stereoReal,
		"capture.raw":   make([]byte, 4096),
		"odd.raw":       make([]byte, 4095),
		"bad.csv":       []byte("1\n2\nthree\n"),
	}
	for name, b := range files {
		must(t, os.WriteFile(filepath.Join(dir, name), b, 0o644))
	}
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"--input", "truncated.wav"}, "truncated"},
		{[]string{"--input", "text.wav"}, "text.wav"},
		{[]string{"--input", "slow.wav"}, "input_rate"},
		{[]string{"spec.toml", "--input", "stereo.wav"}, "signal"},
		{[]string{"--input", "capture.raw"}, "int16 or int32"},
		{[]string{"--input", "odd.raw", "--format", "int16"}, "odd.raw"},
		{[]string{"--input", "bad.csv"}, "three"},
		{[]string{"--input", "missing.wav"}, "missing.wav"},
		{[]string{}, "--input"},
		{[]string{"--input", "capture.raw", "--format", "int24"}, "--format"},
		{[]string{"--input", "capture.raw", "--format", "int16", "--rate", "fast"}, "--rate"},
		// A chain the spec refuses is refused before the input is read
		// (here a file that is not there).
		{[]string{"--input", "missing.wav", "--chain", "cic4m1r8 > fir4"}, "--chain"},
	} {
		args := append([]string{"simulate", "--out", "out"}, c.args...)
		r := runBinary(t, dir, nil, args...)
		lines := strings.Split(strings.TrimSpace(r.stderr), "\n")
		if r.code != 2 || len(lines) != 1 || !strings.Contains(r.stderr, c.want) || strings.Contains(r.stderr, "panic") {
			t.Errorf("%v: exit %d, stderr %q; want exit 2 and one line naming %q", c.args, r.code, r.stderr, c.want)
		}
		if _, err := os.Stat(filepath.Join(dir, "out")); err == nil {
			t.Fatalf("%v: wrote an output folder", c.args)
		}
	}
	entries, _ := os.ReadDir(dir)
	for _, e := range entries {
		if strings.HasPrefix(e.Name(), ".stepdown-") {
			t.Errorf("left behind: %s", e.Name())
		}
	}
}

// A library error reaches the user without the library's package names.
func TestLibMessage(t *testing.T) {
	err := fmt.Errorf("simulate: %w", errors.New("fixed: stage 1: the CIC needs 131 bits (its full-precision width; its pruned registers are narrower), more than the 127 bits the integer model holds"))
	if got := libMessage(err); strings.Contains(got, "fixed:") || strings.Contains(got, "simulate:") || !strings.HasPrefix(got, "stage 1: ") {
		t.Errorf("libMessage = %q", got)
	}
}
