package plots

import (
	"bytes"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// demoSpectrum is an invented Welch spectrum: a noise floor with seeded
// scatter (an averaged periodogram's bins vary by about a dB), tones of
// Blackman-Harris shape (main lobe 4 bins each side, sidelobes under -92
// dB) at the given frequencies and levels.
func demoSpectrum(label string, rate float64, bins int, twoSided bool, floorDB float64, tones [][2]float64, seed uint64) Spectrum {
	r := rand.New(rand.NewPCG(seed, 1))
	s := Spectrum{Label: label, RateHz: rate}
	n := bins
	lo := 0.0
	if twoSided {
		lo = -rate / 2
	}
	step := rate / 2 / float64(bins-1)
	if twoSided {
		n = 2*bins - 2
	}
	s.Hz = make([]float64, n)
	s.DB = make([]float64, n)
	s.RBWHz = 2 * step
	for i := range n {
		f := lo + float64(i)*step
		p := math.Pow(10, (floorDB+1.2*r.NormFloat64())/10)
		for _, t := range tones {
			if k := math.Abs(f-t[0]) / step; k < 4 {
				p += math.Pow(10, t[1]/10) * math.Pow(math.Cos(k*math.Pi/8), 6)
			}
		}
		s.Hz[i], s.DB[i] = f, 10*math.Log10(p)
	}
	return s
}

// demoSpectra is the demo scenario of demo_test.go (122.88 MHz to 1.92
// MHz, passband 0.6 MHz, protected band 0.7 MHz) with a wanted tone at
// 0.3 MHz, an interferer in the first alias band at 3.64 MHz (folding to
// 0.28 MHz) and a blocker at 20 MHz; the output holds the tone and the
// interferer's residue 90 dB down.
func demoSpectra() SpectraData {
	d := SpectraData{
		In: demoSpectrum("capture.wav", demoF0, 2049, false, -128,
			[][2]float64{{0.3e6, -6}, {3.64e6, -20}, {20e6, -10}}, 1),
		Out: demoSpectrum("out.wav", demoFK, 513, false, -122,
			[][2]float64{{0.3e6, -6.1}, {0.28e6, -110}}, 2),
		PassbandHz: demoFp,
		Levels: []string{
			"wanted tone 300 kHz: in -6.0, out -6.1 dBFS",
			"alias residue 280 kHz: -110 dBFS",
			"output noise: -92.4 dBFS in the passband",
		},
	}
	for k := 1; float64(k)*demoFK-demoFa < demoF0/2; k++ {
		d.AliasBands = append(d.AliasBands, [2]float64{float64(k)*demoFK - demoFa, math.Min(float64(k)*demoFK+demoFa, demoF0/2)})
	}
	return d
}

func spectraFigures() map[string]func() SpectraData {
	return map[string]func() SpectraData{
		"spectra": demoSpectra,
		"spectra/iq": func() SpectraData {
			d := demoSpectra()
			d.In = demoSpectrum("iq.csv", demoF0, 2049, true, -128, [][2]float64{{-0.3e6, -6}, {3.64e6, -20}, {-20e6, -10}}, 3)
			// 3.64 MHz folds to 3.64 - 2 x 1.92 = -0.2 MHz at the complex output.
			d.Out = demoSpectrum("", demoFK, 257, true, -122, [][2]float64{{-0.3e6, -6.1}, {-0.2e6, -110}}, 4)
			d.Levels = []string{"wanted tone -300 kHz: in -6.0, out -6.1 dBFS", "alias residue -200 kHz: -110 dBFS"}
			return d
		},
		"spectra/bare": func() SpectraData {
			d := demoSpectra()
			d.AliasBands, d.Levels, d.PassbandHz, d.Title = nil, nil, 0, "A bare figure"
			d.In.RBWHz, d.Out.RBWHz, d.In.Label, d.Out.Label = 0, 0, "", ""
			return d
		},
		"spectra/silent": func() SpectraData {
			// An all-zero output: every bin -Inf.
			d := demoSpectra()
			for i := range d.Out.DB {
				d.Out.DB[i] = math.Inf(-1)
			}
			return d
		},
	}
}

// TestSpectra renders each figure in both formats, twice: the bytes must
// be the same, the SVG free of NaN and under 2 MiB, and the text must
// carry the legend's entries, the levels and the panel titles.
func TestSpectra(t *testing.T) {
	for name, mk := range spectraFigures() {
		t.Run(name, func(t *testing.T) {
			var outs [2][2][]byte
			for i := range outs {
				f, err := Spectra(mk())
				if err != nil {
					t.Fatal(err)
				}
				outs[i] = [2][]byte{render(t, f, "svg"), render(t, f, "png")}
			}
			svg, png := outs[0][0], outs[0][1]
			if !bytes.Equal(svg, outs[1][0]) || !bytes.Equal(png, outs[1][1]) {
				t.Errorf("two renders of the same input differ")
			}
			if bytes.Contains(svg, []byte("NaN")) || len(svg) > 2<<20 {
				t.Errorf("SVG of %d bytes, NaN %v", len(svg), bytes.Contains(svg, []byte("NaN")))
			}
			if !bytes.HasPrefix(png, []byte("\x89PNG")) {
				t.Errorf("PNG output lacks the PNG signature")
			}
			d := mk()
			want := []string{"input spectrum", "output spectrum", "Input frequency (MHz)", "Output frequency (kHz)", "122.88 MS/s", "1.92 MS/s"}
			if d.PassbandHz > 0 {
				want = append(want, "passband edge 600 kHz")
			}
			if len(d.AliasBands) > 0 {
				want = append(want, "alias bands (input)")
			}
			want = append(want, d.Levels...)
			if name == "spectra/silent" {
				want = append(want, "every bin empty (all-zero signal)")
			}
			for _, w := range want {
				if !bytes.Contains(svg, []byte(w)) {
					t.Errorf("SVG lacks %q", w)
				}
			}
			if dir := os.Getenv("STEPDOWN_PLOTS_DIR"); dir != "" {
				base := filepath.Join(dir, strings.ReplaceAll(name, "/", "_"))
				os.WriteFile(base+".svg", svg, 0o644)
				os.WriteFile(base+".png", png, 0o644)
			}
		})
	}
}

func TestSpectraErrors(t *testing.T) {
	nan := math.NaN()
	tests := []struct {
		name string
		edit func(d *SpectraData)
		want string
	}{
		{"rate", func(d *SpectraData) { d.In.RateHz = 0 }, "SpectraData.In.RateHz = 0"},
		{"short", func(d *SpectraData) { d.Out.Hz, d.Out.DB = d.Out.Hz[:1], d.Out.DB[:1] }, "SpectraData.Out.Hz has 1 points"},
		{"length", func(d *SpectraData) { d.In.DB = d.In.DB[:10] }, "SpectraData.In.DB has 10 values: must match Hz (2049)"},
		{"order", func(d *SpectraData) { d.Out.Hz[5] = d.Out.Hz[4] }, "SpectraData.Out.Hz[5]"},
		{"beyond nyquist", func(d *SpectraData) { d.Out.Hz[512] = 2e6 }, "must lie within ±RateHz/2"},
		{"nan level", func(d *SpectraData) { d.In.DB[7] = nan }, "SpectraData.In.DB[7] = NaN"},
		{"inf level", func(d *SpectraData) { d.In.DB[7] = math.Inf(1) }, "SpectraData.In.DB[7] = +Inf"},
		{"rbw", func(d *SpectraData) { d.In.RBWHz = -1 }, "SpectraData.In.RBWHz"},
		{"passband", func(d *SpectraData) { d.PassbandHz = nan }, "SpectraData.PassbandHz"},
		{"band", func(d *SpectraData) { d.AliasBands = [][2]float64{{5, 3}} }, "SpectraData.AliasBands[0]"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			d := demoSpectra()
			tt.edit(&d)
			_, err := Spectra(d)
			if err == nil || !strings.Contains(err.Error(), tt.want) {
				t.Errorf("error %v, want one containing %q", err, tt.want)
			}
		})
	}
}
