package signalio

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// fuzzCap is the frame cap the fuzz targets read with: small, so that a
// reader that allocated from a header's claim instead of the cap would
// show in the result's length.
const fuzzCap = 4096

// addFiles adds every file matching pattern under testdata as a seed.
func addFiles(f *testing.F, pattern string) {
	paths, err := filepath.Glob(filepath.Join("testdata", pattern))
	if err != nil || len(paths) == 0 {
		f.Fatalf("no seed files %s: %v", pattern, err)
	}
	for _, p := range paths {
		b, err := os.ReadFile(p)
		if err != nil {
			f.Fatal(err)
		}
		f.Add(b)
	}
}

// FuzzReadWAV feeds arbitrary bytes to ReadWAV, seeded with the golden
// WAV files (Python's wave, scipy.io.wavfile, the extensible and LIST
// ones) and the Go encoder's: it must never panic, return at most the cap
// of frames, give a valid signal or a one-line error naming the file,
// and a signal it returns must survive a round trip through EncodeWAV.
func FuzzReadWAV(f *testing.F) {
	addFiles(f, "wav/*.wav")
	addFiles(f, "gowritten/*.wav")
	f.Fuzz(func(t *testing.T, b []byte) {
		s, fm, err := ReadWAV("fuzz.wav", bytes.NewReader(b), int64(len(b)), Options{MaxFrames: fuzzCap})
		if err != nil {
			if msg := err.Error(); !strings.HasPrefix(msg, "fuzz.wav: ") || strings.Contains(msg, "\n") {
				t.Fatalf("error %q: want one line starting with the file name", msg)
			}
			return
		}
		if s.Frames() > fuzzCap || s.Frames() == 0 {
			t.Fatalf("%d frames, cap %d", s.Frames(), fuzzCap)
		}
		if err := s.Check("fuzz"); err != nil {
			t.Fatalf("reader returned an invalid signal: %v", err)
		}
		out, err := Marshal(s, fm)
		if err != nil {
			t.Fatalf("re-encoding what was read: %v", err)
		}
		back, _, err := ReadWAV("back.wav", bytes.NewReader(out), int64(len(out)), Options{})
		if err != nil {
			t.Fatalf("reading the re-encoded file: %v", err)
		}
		for c := range s.Samples {
			if !equal(back.Samples[c], s.Samples[c]) {
				t.Fatalf("channel %d changed in the round trip", c)
			}
		}
	})
}

// FuzzReadCSV feeds arbitrary text to ReadCSV at 16 bits, seeded with the
// golden CSV files and Go's own CSV output.
func FuzzReadCSV(f *testing.F) {
	addFiles(f, "csv/*.csv")
	s := &Signal{RateHz: 1000, Bits: 16, Samples: [][]int64{{1, -32768, 32767}, {0, 5, -5}}}
	b, _ := Marshal(s, Format{Kind: CSV})
	f.Add(b)
	f.Add([]byte("i,q\n1,2\n3\n"))
	f.Add([]byte("\uFEFF# x\r\n-1\r\n\r\n+2\r\n"))
	f.Fuzz(func(t *testing.T, b []byte) {
		s, fm, err := ReadCSV("fuzz.csv", bytes.NewReader(b), Options{Format: Format{Bits: 16}, RateHz: 1000, MaxFrames: fuzzCap})
		if err != nil {
			if msg := err.Error(); !strings.HasPrefix(msg, "fuzz.csv") || strings.Contains(msg, "\n") {
				t.Fatalf("error %q: want one line starting with the file name", msg)
			}
			return
		}
		if s.Frames() > fuzzCap || s.Frames() == 0 || fm.Channels != s.Channels() {
			t.Fatalf("%d frames (cap %d), format %v, %d channels", s.Frames(), fuzzCap, fm, s.Channels())
		}
		if err := s.Check("fuzz"); err != nil {
			t.Fatalf("reader returned an invalid signal: %v", err)
		}
	})
}

func equal(a, b []int64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}
