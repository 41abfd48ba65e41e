package main

import (
	"context"
	"io"
	"os"
	"testing"
)

func TestScratchProfile(t *testing.T) {
	spec := os.Getenv("SD_SPEC")
	if spec == "" {
		t.Skip()
	}
	out := t.TempDir() + "/o"
	if c := run(context.Background(), []string{"stepdown", "plan", spec, "--out", out, "--quiet"}, io.Discard, os.Stderr); c != 0 {
		t.Fatal(c)
	}
}
