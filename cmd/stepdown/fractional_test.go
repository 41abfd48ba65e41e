package main

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stepdown-dsp/stepdown/signalio"
)

// fractionalSpec is an invented scenario whose ratio, 2 MHz / 800 kHz =
// 5/2, is a fraction: its chains end in a polyphase or Farrow stage.
const fractionalSpec = `input_rate = "2 MHz"
output_rate = "800 kHz"
passband = "200 kHz"
ripple = "0.2 dB"
rejection = "60 dB"
`

// TestCheckFractional checks a named fractional chain end to end: the
// header says the ratio, report.json has the fixed keys of a fractional
// stage, its word lengths are planned and shown, the prototype is
// written, and the missing hand-off is said in one line; a chain whose stages miss the ratio, and simulate, are refused in
// one line.
func TestCheckFractional(t *testing.T) {
	dir := t.TempDir()
	must(t, os.WriteFile(filepath.Join(dir, "frac.toml"), []byte(fractionalSpec), 0o644))
	r := runBinary(t, dir, nil, "check", "frac.toml", "--chain", "poly2/5", "--out", "checked")
	if r.code != 0 {
		t.Fatalf("check: exit %d: %s", r.code, r.stderr)
	}
	for _, want := range []string{"(fractional ratio 5/2)", "poly2/5", "\n  1 polyphase in 16 bits, coefficients ", "bit-true SNR ",
		"coefficients/stage1_polyphase.csv", "coefficients/README.txt", "\nNo hand-off (headers/, vectors/, rtl/)"} {
		if !strings.Contains(r.stdout, want) {
			t.Errorf("output lacks %q:\n%s", want, r.stdout)
		}
	}
	rep := readReport(t, filepath.Join(dir, "checked", "report.json"))
	spec := rep["spec"].(map[string]any)
	if spec["ratio"] != "5/2" || spec["decimation"] != 0.0 {
		t.Errorf("spec ratio %v, decimation %v; want 5/2 and 0", spec["ratio"], spec["decimation"])
	}
	st := rep["front"].([]any)[0].(map[string]any)["stages"].([]any)[0].(map[string]any)
	// 2 MHz x 2/5 = 800 kHz.
	for k, want := range map[string]any{"kind": "polyphase", "interpolation": 2.0, "decimation": 5.0, "input_rate_hz": 2e6, "output_rate_hz": 8e5} {
		if st[k] != want {
			t.Errorf("stage %s = %v, want %v", k, st[k], want)
		}
	}
	if c, _ := st["coefficients"].([]any); len(c) == 0 || float64(len(c)) != st["taps"] {
		t.Errorf("coefficients: %d, taps %v", len(c), st["taps"])
	}
	for _, d := range []string{"headers", "vectors", "rtl"} {
		if _, err := os.Stat(filepath.Join(dir, "checked", d)); err == nil {
			t.Errorf("a fractional check wrote %s/", d)
		}
	}

	for _, args := range [][]string{
		{"check", "frac.toml", "--chain", "poly2/4", "--out", "bad"},
		{"check", "frac.toml", "--chain", "fir2 > poly2/5", "--out", "bad"},
	} {
		r := runBinary(t, dir, nil, args...)
		if r.code != 2 || strings.Count(r.stderr, "\n") != 1 || strings.Contains(r.stderr, "goroutine") {
			t.Errorf("%v: exit %d, stderr %q: want exit 2 and one line", args, r.code, r.stderr)
		}
	}
	if _, err := os.Stat(filepath.Join(dir, "bad")); err == nil {
		t.Errorf("a refused command wrote its folder")
	}
}

// TestPlanHints: a prime ratio's plan names the cheaper ways to the
// channel on the terminal and in report.json's hints (optimize.Hints; its
// own test checks the figures). Four plans: CI's long step only.
func TestPlanHints(t *testing.T) {
	if os.Getenv("STEPDOWN_LONG") == "" {
		t.Skip("four plans: STEPDOWN_LONG (CI's long step)")
	}
	dir := t.TempDir()
	spec := "input_rate = \"53 MHz\"\noutput_rate = \"1 MHz\"\npassband = \"400 kHz\"\nripple = \"0.1 dB\"\nrejection = \"80 dB\"\n"
	must(t, os.WriteFile(filepath.Join(dir, "prime.toml"), []byte(spec), 0o644))
	r := runBinary(t, dir, nil, "plan", "prime.toml", "--out", "planned")
	if r.code != 0 {
		t.Fatalf("plan: exit %d: %s", r.code, r.stderr)
	}
	if n := strings.Count(r.stdout, "\nhint: D = 53 has the prime factor 53"); n != 3 {
		t.Errorf("%d hints on the terminal, want 3:\n%s", n, r.stdout)
	}
	rep := readReport(t, filepath.Join(dir, "planned", "report.json"))
	hs, _ := rep["hints"].([]any)
	var ratios []string
	for _, h := range hs {
		m := h.(map[string]any)
		ratios = append(ratios, m["ratio"].(string))
		if m["chain"] == "" || !(m["multiplies_per_output"].(float64) > 0) || m["output_rate_hz"] == nil {
			t.Errorf("hint %v", m)
		}
	}
	if got := strings.Join(ratios, " "); got != "50 54 53" {
		t.Errorf("hints' ratios %q, want 50 54 53", got)
	}
}

// TestCheckFractionalInterpolation: the transpose of TestCheckFractional's
// spec, 800 kHz up to 2 MHz, checks the chain written in signal order,
// poly5/2 (up 5, down 2); report.json's stage has interpolation 5 and
// decimation 2 and counts per input; the decimation view's notation,
// poly2/5, is refused with the ratio it needs.
func TestCheckFractionalInterpolation(t *testing.T) {
	dir := t.TempDir()
	spec := strings.NewReplacer(`input_rate = "2 MHz"`, `input_rate = "800 kHz"`, `output_rate = "800 kHz"`, `output_rate = "2 MHz"`).Replace(fractionalSpec)
	must(t, os.WriteFile(filepath.Join(dir, "up.toml"), []byte(spec), 0o644))
	r := runBinary(t, dir, nil, "check", "up.toml", "--chain", "poly5/2", "--out", "checked")
	if r.code != 0 {
		t.Fatalf("check: exit %d: %s\nspec:\n%s", r.code, r.stderr, spec)
	}
	rep := readReport(t, filepath.Join(dir, "checked", "report.json"))
	if s := rep["spec"].(map[string]any); s["ratio"] != "5/2" || s["direction"] != "interpolate" || s["interpolation"] != 0.0 {
		t.Errorf("spec %v", s)
	}
	st := rep["front"].([]any)[0].(map[string]any)["stages"].([]any)[0].(map[string]any)
	for k, want := range map[string]any{"kind": "polyphase", "interpolation": 5.0, "decimation": 2.0, "input_rate_hz": 8e5, "output_rate_hz": 2e6} {
		if st[k] != want {
			t.Errorf("stage %s = %v, want %v", k, st[k], want)
		}
	}
	if _, ok := st["multiplies_per_input"]; !ok {
		t.Errorf("stage keys %v: no multiplies_per_input", st)
	}
	if r := runBinary(t, dir, nil, "check", "up.toml", "--chain", "poly2/5", "--out", "bad"); r.code != 2 || strings.Count(r.stderr, "\n") != 1 {
		t.Errorf("poly2/5 on an interpolation spec: exit %d, %q", r.code, r.stderr)
	}
}

// TestSimulateFractional runs a fractional chain bit-true through
// simulate: a tone in the passband at 2 MHz goes through poly2/5 to
// 800 kHz; simulate.json's bit-true SNR is finite and high, the output
// has as many samples as the stage makes (ceil(N L / M)), and the float
// output's tone level is the input's within the passband ripple.
func TestSimulateFractional(t *testing.T) {
	dir := t.TempDir()
	must(t, os.WriteFile(filepath.Join(dir, "frac.toml"), []byte(fractionalSpec), 0o644))
	const n = 20000
	x := make([]int64, n)
	for i := range x {
		// -6 dBFS at 100 kHz, 16-bit codes.
		x[i] = int64(math.Round(16384 * math.Cos(2*math.Pi*100e3*float64(i)/2e6)))
	}
	sig := &signalio.Signal{RateHz: 2e6, Bits: 16, Samples: [][]int64{x}}
	wav, err := signalio.Marshal(sig, signalio.Format{Kind: signalio.WAV, Bits: 16, Channels: 1})
	must(t, err)
	must(t, os.WriteFile(filepath.Join(dir, "tone.wav"), wav, 0o644))
	r := runBinary(t, dir, nil, "simulate", "frac.toml", "--input", "tone.wav", "--chain", "poly2/5", "--out", "sim", "--json")
	if r.code != 0 {
		t.Fatalf("simulate: exit %d: %s", r.code, r.stderr)
	}
	var rep map[string]any
	must(t, json.Unmarshal([]byte(r.stdout), &rep))
	got, _, err := signalio.ReadFile(filepath.Join(dir, "sim", "output.wav"), signalio.Options{})
	must(t, err)
	if want := (n*2-1)/5 + 1; got.RateHz != 8e5 || len(got.Samples[0]) != want {
		t.Fatalf("output.wav: %v Hz, %d samples; want 800 kHz and %d", got.RateHz, len(got.Samples[0]), want)
	}
	b, _ := json.Marshal(rep)
	snr, ok := findNumber(rep, "bittrue_snr_db")
	if !ok || !(snr > 60) {
		t.Errorf("bit-true SNR %v (found %v): want above 60 dB; simulate.json %s", snr, ok, b)
	}
}

// findNumber finds the first number under key anywhere in a decoded JSON
// value.
func findNumber(v any, key string) (float64, bool) {
	switch m := v.(type) {
	case map[string]any:
		if f, ok := m[key].(float64); ok {
			return f, true
		}
		for _, e := range m {
			if f, ok := findNumber(e, key); ok {
				return f, true
			}
		}
	case []any:
		for _, e := range m {
			if f, ok := findNumber(e, key); ok {
				return f, true
			}
		}
	}
	return 0, false
}
