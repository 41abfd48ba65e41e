package main

import (
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestPlanInterpolationEndToEnd plans the invented transmit spec (a
// 2.5 MS/s I/Q channel up to a DAC at 320 MS/s, L = 128) and checks
// report.json's interpolation fields, whose names outside scripts rely on,
// the signal order of the stages and their rates, the table's wording, and
// that check with the recommended notation gives the same figures.
func TestPlanInterpolationEndToEnd(t *testing.T) {
	if os.Getenv("STEPDOWN_LONG") == "" {
		t.Skip("2 s: STEPDOWN_LONG (CI's long step)")
	}
	dir := t.TempDir()
	spec, err := os.ReadFile(filepath.Join("..", "..", "testdata", "specs", "transmit.toml"))
	if err != nil {
		t.Fatal(err)
	}
	// Four stages at most keeps the test short; the spec is otherwise the
	// README's.
	spec = append(spec, []byte("\n[search]\nmax_stages = 3\n")...)
	if err := os.WriteFile(filepath.Join(dir, "tx.toml"), spec, 0o644); err != nil {
		t.Fatal(err)
	}
	r := runBinary(t, dir, nil, "plan", "tx.toml", "--out", "out")
	if r.code != 0 {
		t.Fatalf("plan: exit %d: %s", r.code, r.stderr)
	}
	for _, want := range []string{"2.5 MHz -> 320 MHz (interpolation 128)", "mult/in", "adds/in", "in)"} {
		if !strings.Contains(r.stdout, want) {
			t.Errorf("the table lacks %q:\n%s", want, r.stdout)
		}
	}
	if strings.Contains(r.stdout, "mult/out") || strings.Contains(r.stdout, "alias rejection") {
		t.Errorf("the table speaks of outputs or aliases:\n%s", r.stdout)
	}
	// The hand-off to RTL is written for an interpolation chain too.
	for _, f := range []string{"headers/stepdown_chain.h", "rtl/stepdown_chain.v", "rtl/stepdown_tb.v", "vectors/README.txt", "vectors/impulse.in.txt"} {
		if fi, err := os.Stat(filepath.Join(dir, "out", f)); err != nil || fi.Size() == 0 {
			t.Errorf("%s: missing or empty (%v)", f, err)
		}
	}
	rep := readReport(t, filepath.Join(dir, "out", "report.json"))
	s := rep["spec"].(map[string]any)
	if s["direction"] != "interpolate" || s["interpolation"] != 128.0 || s["decimation"] != 1.0 {
		t.Errorf("spec: direction %v, interpolation %v, decimation %v", s["direction"], s["interpolation"], s["decimation"])
	}
	front := rep["front"].([]any)
	rec := front[int(rep["recommended"].(float64))].(map[string]any)
	for _, k := range []string{"image_rejection_db", "worst_image_hz", "passband_ripple_db", "multiplies_per_input", "adds_per_input"} {
		if _, ok := rec[k]; !ok {
			t.Errorf("the recommended chain lacks %q", k)
		}
	}
	for _, k := range []string{"alias_rejection_db", "multiplies_per_output", "worst_alias_hz"} {
		if _, ok := rec[k]; ok {
			t.Errorf("the recommended chain has %q", k)
		}
	}
	if v := rec["image_rejection_db"].(float64); v < 75-0.01 {
		t.Errorf("image_rejection_db = %v, the target is 75 dB", v)
	}
	// Stages in signal order: the rates rise from 2.5 MHz to 320 MHz, each
	// stage's output rate its interpolation times its input rate, and the
	// CIC, if any, last.
	stages := rec["stages"].([]any)
	rate := 2.5e6
	for i, x := range stages {
		st := x.(map[string]any)
		l, ok := st["interpolation"].(float64)
		if !ok || st["decimation"] != nil {
			t.Fatalf("stage %d: interpolation %v, decimation %v", i+1, st["interpolation"], st["decimation"])
		}
		in, out := st["input_rate_hz"].(float64), st["output_rate_hz"].(float64)
		if math.Abs(in-rate) > 1e-6*rate || math.Abs(out-in*l) > 1e-6*out {
			t.Errorf("stage %d: %v -> %v Hz by %v, after %v Hz", i+1, in, out, l, rate)
		}
		rate = out
		if st["kind"] == "cic" && i != len(stages)-1 {
			t.Errorf("stage %d is a CIC but not the last", i+1)
		}
		if st["kind"] != "cic" && len(st["coefficients"].([]any)) == 0 {
			t.Errorf("stage %d has no coefficients", i+1)
		}
	}
	if math.Abs(rate-320e6) > 1 {
		t.Errorf("the last stage delivers %v Hz", rate)
	}

	// check with the notation plan printed gives the same figures.
	c := runBinary(t, dir, nil, "check", "tx.toml", "--chain", rec["notation"].(string), "--front", filepath.Join("out", "report.json"), "--out", "chk")
	if c.code != 0 {
		t.Fatalf("check: exit %d: %s", c.code, c.stderr)
	}
	crep := readReport(t, filepath.Join(dir, "chk", "report.json"))
	got := crep["front"].([]any)[0].(map[string]any)
	for _, k := range []string{"notation", "image_rejection_db", "passband_ripple_db", "multiplies_per_input", "memory_bits"} {
		if got[k] != rec[k] {
			t.Errorf("check %s = %v, plan %v", k, got[k], rec[k])
		}
	}
}

// TestPlanMaskEndToEnd plans the invented blocker-mask spec and checks
// report.json's mask fields: the mask echoed, the target its largest
// rejection, and each chain's margin its rejection less that target.
func TestPlanMaskEndToEnd(t *testing.T) {
	if os.Getenv("STEPDOWN_LONG") == "" {
		t.Skip("2 s: STEPDOWN_LONG (CI's long step)")
	}
	dir := t.TempDir()
	spec, err := os.ReadFile(filepath.Join("..", "..", "testdata", "specs", "blocker_mask.toml"))
	if err != nil {
		t.Fatal(err)
	}
	spec = append(spec, []byte("\n[search]\nmax_stages = 3\n")...)
	if err := os.WriteFile(filepath.Join(dir, "m.toml"), spec, 0o644); err != nil {
		t.Fatal(err)
	}
	r := runBinary(t, dir, nil, "plan", "m.toml", "--out", "out")
	if r.code != 0 {
		t.Fatalf("plan: exit %d: %s", r.code, r.stderr)
	}
	if !strings.Contains(r.stdout, "rejection mask of 4 points up to 90.00 dB") {
		t.Errorf("the table does not state the mask:\n%s", r.stdout)
	}
	rep := readReport(t, filepath.Join(dir, "out", "report.json"))
	s := rep["spec"].(map[string]any)
	if s["rejection_db"] != 90.0 || len(s["rejection_mask"].([]any)) != 4 {
		t.Errorf("spec: rejection_db %v, rejection_mask %v", s["rejection_db"], s["rejection_mask"])
	}
	for i, x := range rep["front"].([]any) {
		c := x.(map[string]any)
		rej, margin := c["alias_rejection_db"].(float64), c["rejection_margin_db"].(float64)
		if c["verdict_basis"] != "rounded taps" {
			if math.Abs(rej-90-margin) > 1e-9 {
				t.Errorf("chain %d: rejection %v, margin %v", i+1, rej, margin)
			}
		}
		// The verdict has no allowance: a chain that meets has a margin of
		// at least zero, on its float and its rounded taps alike.
		if c["meets_targets"] == true && (margin < 0 || c["quantised_alias_rejection_db"].(float64) < 90) {
			t.Errorf("chain %d meets with a margin of %v dB (rounded taps %v dB)", i+1, margin, c["quantised_alias_rejection_db"])
		}
	}
}
