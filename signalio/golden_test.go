package signalio

import (
	"bytes"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"testing"
)

// golden is testdata/golden.json, made by testdata/gen_golden.py: the
// integers Python's wave module and scipy.io.wavfile read from each WAV
// file, and those numpy and the csv module wrote into the raw and CSV
// files.
type golden struct {
	WAV map[string]goldenSignal `json:"wav"`
	Raw map[string]goldenSignal `json:"raw"`
	CSV map[string]goldenSignal `json:"csv"`
}

type goldenSignal struct {
	Rate     float64   `json:"rate"`
	Bits     int       `json:"bits"`
	Channels int       `json:"channels"`
	Samples  [][]int64 `json:"samples"`
}

func loadJSON(t testing.TB, name string, v any) {
	t.Helper()
	b, err := os.ReadFile(filepath.Join("testdata", name))
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, v); err != nil {
		t.Fatalf("%s: %v", name, err)
	}
}

func sameSamples(t *testing.T, name string, got *Signal, want goldenSignal) {
	t.Helper()
	if got.Channels() != want.Channels || len(got.Samples) != len(want.Samples) {
		t.Fatalf("%s: %d channels, want %d", name, got.Channels(), want.Channels)
	}
	for c := range want.Samples {
		if !slices.Equal(got.Samples[c], want.Samples[c]) {
			t.Fatalf("%s: channel %d differs from the reference's %d samples (got %d)", name, c, len(want.Samples[c]), len(got.Samples[c]))
		}
	}
}

// TestGoldenWAV reads the WAV files written by Python's wave module,
// scipy.io.wavfile.write and by struct (LIST and JUNK chunks, pad bytes,
// WAVE_FORMAT_EXTENSIBLE) and compares every code, the rate and the width
// with what scipy.io.wavfile.read (and wave, where it can) read from them.
func TestGoldenWAV(t *testing.T) {
	var g golden
	loadJSON(t, "golden.json", &g)
	if len(g.WAV) < 8 {
		t.Fatalf("golden.json lists %d WAV files, want 8", len(g.WAV))
	}
	for name, want := range g.WAV {
		t.Run(name, func(t *testing.T) {
			s, f, err := ReadFile(filepath.Join("testdata", "wav", name), Options{})
			if err != nil {
				t.Fatal(err)
			}
			if s.RateHz != want.Rate || s.Bits != want.Bits || f != (Format{Kind: WAV, Bits: want.Bits, Channels: want.Channels}) {
				t.Errorf("rate %v, bits %d, format %v; want %v, %d, %d channels", s.RateHz, s.Bits, f, want.Rate, want.Bits, want.Channels)
			}
			sameSamples(t, name, s, want)
		})
	}
}

// TestGoldenRaw reads numpy's little-endian tofile output.
func TestGoldenRaw(t *testing.T) {
	var g golden
	loadJSON(t, "golden.json", &g)
	for name, want := range g.Raw {
		t.Run(name, func(t *testing.T) {
			opt := Options{Format: Format{Kind: Raw, Bits: want.Bits, Channels: want.Channels}, RateHz: 1e6}
			s, _, err := ReadFile(filepath.Join("testdata", "raw", name), opt)
			if err != nil {
				t.Fatal(err)
			}
			sameSamples(t, name, s, want)
		})
	}
}

// TestGoldenCSV reads the csv module's output (a comment, a header, CRLF
// line ends; and a bare single column).
func TestGoldenCSV(t *testing.T) {
	var g golden
	loadJSON(t, "golden.json", &g)
	for name, want := range g.CSV {
		t.Run(name, func(t *testing.T) {
			opt := Options{Format: Format{Bits: want.Bits}, RateHz: 1e6}
			s, f, err := ReadFile(filepath.Join("testdata", "csv", name), opt)
			if err != nil {
				t.Fatal(err)
			}
			if f.Channels != want.Channels {
				t.Errorf("format %v, want %d channels", f, want.Channels)
			}
			sameSamples(t, name, s, want)
		})
	}
}

// goWritten are the signals whose WAV encodings are committed under
// testdata/gowritten and read back by scipy.io.wavfile and wave into
// gowritten.json: a ramp through the extreme codes of each width.
func goWritten() map[string]*Signal {
	out := map[string]*Signal{}
	for _, bits := range []int{16, 24, 32} {
		for _, ch := range []int{1, 2} {
			// An odd frame count: 24-bit mono then needs a pad byte.
			const n = 37
			lo, hi := codeRange(bits)
			s := &Signal{RateHz: 48000 * float64(ch), Bits: bits, Samples: make([][]int64, ch)}
			for c := range ch {
				s.Samples[c] = make([]int64, n)
				for i := range n {
					// Step across the range, both extremes included.
					v := lo + int64(float64(hi-lo)*float64((i*7+c*11)%n)/float64(n-1))
					s.Samples[c][i] = v
				}
				s.Samples[c][0], s.Samples[c][1] = lo, hi
			}
			out[fmt.Sprintf("go%d_%dch.wav", bits, ch)] = s
		}
	}
	return out
}

// TestGoWritten checks the encoder's WAV bytes against the committed
// files and what the reference readers made of them. To regenerate after
// a deliberate change of the encoder:
//
//	STEPDOWN_WRITE_GOLDEN=1 go test ./signalio -run TestGoWritten
//	/usr/bin/python3 signalio/testdata/gen_golden.py
func TestGoWritten(t *testing.T) {
	write := os.Getenv("STEPDOWN_WRITE_GOLDEN") != ""
	var gw struct {
		Files map[string]goldenSignal `json:"files"`
	}
	if !write {
		loadJSON(t, "gowritten.json", &gw)
	}
	for name, s := range goWritten() {
		b, err := Marshal(s, Format{Kind: WAV})
		if err != nil {
			t.Fatal(err)
		}
		path := filepath.Join("testdata", "gowritten", name)
		if write {
			os.MkdirAll(filepath.Dir(path), 0o755)
			if err := os.WriteFile(path, b, 0o644); err != nil {
				t.Fatal(err)
			}
			continue
		}
		old, err := os.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(b, old) {
			t.Errorf("%s: the encoder's bytes differ from the committed file", name)
		}
		want, ok := gw.Files[name]
		if !ok {
			t.Fatalf("%s: not in gowritten.json", name)
		}
		if want.Rate != s.RateHz || want.Bits != s.Bits {
			t.Errorf("%s: scipy read %v Hz, %d bits; wrote %v Hz, %d bits", name, want.Rate, want.Bits, s.RateHz, s.Bits)
		}
		sameSamples(t, name, s, want)
	}
}
