package plots

import (
	"bytes"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gonum.org/v1/plot/plotter"
)

// highRatio is an invented 100 MS/s to 10 kS/s chain (D = 10 000), whose
// 5 000 alias bands exercise the band merging and the SVG size bound.
func highRatio() ResponseData {
	const f0, fk, fa, n = 100e6, 10e3, 4e3, 50001
	d := ResponseData{TargetDB: 90, PassbandHz: 3e3, OutputRateHz: fk}
	d.FreqHz = make([]float64, n)
	d.TotalDB = make([]float64, n)
	cic := make([]float64, n)
	for i := range d.FreqHz {
		g := f0 / 2 * float64(i) / (n - 1)
		d.FreqHz[i] = g
		x := math.Pi * g / f0
		h := 1.0
		if i > 0 {
			h = math.Abs(math.Sin(x*2500) / (2500 * math.Sin(x)))
		}
		cic[i] = 4 * 20 * math.Log10(h) // exact nulls give -Inf
		d.TotalDB[i] = cic[i] - 100*math.Min(1, g/fk)
	}
	d.Stages = []Series{{Name: "CIC4 R2500", DB: cic}}
	for k := 1; float64(k)*fk-fa < f0/2; k++ {
		d.AliasBands = append(d.AliasBands, [2]float64{float64(k)*fk - fa, math.Min(float64(k)*fk+fa, f0/2)})
	}
	return d
}

func figures(t *testing.T) map[string]func() (*Figure, error) {
	return map[string]func() (*Figure, error){
		"front": func() (*Figure, error) { return Front(demoFront()) },
		"front/one-point": func() (*Figure, error) {
			return Front(FrontData{Front: []Point{{Multiplies: 40, MemoryBits: 12000, RejectionDB: 90, Label: "CIC5 R16 > FIR 2"}}})
		},
		"front/checked": func() (*Figure, error) {
			// A chain a check names, beaten by the front on all three axes.
			d := demoFront()
			d.Checked = &Point{Multiplies: 90, MemoryBits: 16500, LatencyS: 5.9e-6, RejectionDB: 88.1, Label: "CIC4 R16 > HB > FIR 97"}
			return Front(d)
		},
		"front/no-latency": func() (*Figure, error) {
			d := demoFront()
			d.Front = d.Front[:8] // the chains beaten on multiplies and memory need their latency
			for i := range d.Front {
				d.Front[i].LatencyS = 0
			}
			return Front(d)
		},
		"front/no-cloud-no-recommendation": func() (*Figure, error) {
			d := demoFront()
			d.Candidates, d.Recommended = nil, -1
			return Front(d)
		},
		"front/linear-zero-multiplies": func() (*Figure, error) {
			// A pure CIC chain has no multiplies, which rules out a log axis.
			return Front(FrontData{
				Front: []Point{
					{Multiplies: 0, MemoryBits: 900, RejectionDB: 70, Label: "CIC4 R64"},
					{Multiplies: 12, MemoryBits: 700, RejectionDB: 82, Label: "CIC4 R32 > HB"},
					{Multiplies: 20, MemoryBits: 650, RejectionDB: 88, Label: "CIC3 R32 > HB"},
				},
			})
		},
		"response": func() (*Figure, error) { return Response(demoResponse(20000)) },
		"response/single-stage": func() (*Figure, error) {
			d := demoResponse(2000)
			d.Stages = d.Stages[:1]
			d.AliasBands, d.TargetDB, d.PassbandHz, d.OutputRateHz = nil, 0, 0, 0
			return Response(d)
		},
		"response/no-zoom": func() (*Figure, error) {
			d := demoResponse(3000)
			d.ZoomHz = -1
			return Response(d)
		},
		"response/high-ratio": func() (*Figure, error) { return Response(highRatio()) },
		"stages":              func() (*Figure, error) { return Stages(demoStages()) },
		"stages/single": func() (*Figure, error) {
			return Stages(StagesData{Names: []string{"FIR 95"}, Multiplies: []float64{48}, MemoryBits: []float64{3100}})
		},
		"stages/no-multiplies": func() (*Figure, error) {
			return Stages(StagesData{Names: []string{"CIC5 R8", ""}, Multiplies: []float64{0, 0}, MemoryBits: []float64{800, 600}})
		},
		"sweep": func() (*Figure, error) { return Sweep(demoSweep()) },
		"sweep/gaps": func() (*Figure, error) {
			d := demoSweep()
			d.Points[1].OK, d.Points[3].OK = false, false
			return Sweep(d)
		},
		"sweep/clock": func() (*Figure, error) {
			d := demoSweep()
			d.Kind, d.Name, d.Clock = SweepFrequency, "clock", true
			return Sweep(d)
		},
		"sweep/one": func() (*Figure, error) { d := demoSweep(); d.Points = d.Points[:1]; return Sweep(d) },
	}
}

func render(t *testing.T, f *Figure, format string) []byte {
	t.Helper()
	var buf bytes.Buffer
	if err := f.Render(&buf, format, 0, 0); err != nil {
		t.Fatalf("Render(%s): %v", format, err)
	}
	return buf.Bytes()
}

func TestRender(t *testing.T) {
	for name, make := range figures(t) {
		t.Run(name, func(t *testing.T) {
			f, err := make()
			if err != nil {
				t.Fatal(err)
			}
			svg := render(t, f, "svg")
			if !bytes.HasPrefix(svg, []byte("<?xml")) {
				t.Errorf("SVG output does not start with an XML header")
			}
			if bytes.Contains(svg, []byte("NaN")) {
				t.Errorf("SVG output contains NaN")
			}
			// Files must stay small enough to put in a report.
			if len(svg) > 2<<20 {
				t.Errorf("SVG is %d bytes, want under 2 MiB", len(svg))
			}
			png := render(t, f, "png")
			if !bytes.HasPrefix(png, []byte("\x89PNG")) {
				t.Errorf("PNG output lacks the PNG signature")
			}
			if dir := os.Getenv("STEPDOWN_PLOTS_DIR"); dir != "" {
				// For looking at the figures: STEPDOWN_PLOTS_DIR=/tmp go test ./plots
				base := filepath.Join(dir, strings.ReplaceAll(name, "/", "_"))
				os.WriteFile(base+".svg", svg, 0o644)
				os.WriteFile(base+".png", png, 0o644)
			}
		})
	}
}

func TestDeterministic(t *testing.T) {
	for name, make := range figures(t) {
		t.Run(name, func(t *testing.T) {
			for _, format := range []string{"svg", "png"} {
				var out [2][]byte
				for i := range out {
					f, err := make()
					if err != nil {
						t.Fatal(err)
					}
					out[i] = render(t, f, format)
				}
				if !bytes.Equal(out[0], out[1]) {
					t.Errorf("%s output differs between two renders of the same input", format)
				}
				// Rendering must not change the figure either: the same
				// drawing for both formats, so checked on the quicker SVG.
				if format != "svg" {
					continue
				}
				f, _ := make()
				a, b := render(t, f, format), render(t, f, format)
				if !bytes.Equal(a, b) {
					t.Errorf("%s output differs between two renders of the same figure", format)
				}
			}
		})
	}
}

func TestSave(t *testing.T) {
	f, err := Stages(demoStages())
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	for _, name := range []string{"a.svg", "a.PNG"} {
		path := filepath.Join(dir, name)
		if err := f.Save(path, 6*72, 4*72); err != nil {
			t.Fatalf("Save(%s): %v", name, err)
		}
		if st, err := os.Stat(path); err != nil || st.Size() == 0 {
			t.Errorf("Save(%s) wrote nothing: %v", name, err)
		}
	}
	if err := f.Save(filepath.Join(dir, "a.bmp"), 0, 0); err == nil || !strings.Contains(err.Error(), `"bmp"`) {
		t.Errorf("Save(a.bmp) error = %v, want an unsupported-format error naming bmp", err)
	}
	if err := f.Render(&bytes.Buffer{}, "svg", -1, 0); err == nil {
		t.Errorf("Render with negative width: no error")
	}
	ents, _ := os.ReadDir(dir)
	if len(ents) != 2 {
		t.Errorf("directory holds %d entries, want 2 (temporary files left behind?)", len(ents))
	}
}

func TestErrors(t *testing.T) {
	nan := math.NaN()
	good := demoResponse(100)
	tests := []struct {
		name string
		run  func() error
		want string // a part of the message naming the field
	}{
		{"front/empty", func() error { _, err := Front(FrontData{}); return err }, "FrontData.Front"},
		{"front/nan", func() error {
			_, err := Front(FrontData{Front: []Point{{Multiplies: nan, MemoryBits: 1}}})
			return err
		}, "Front[0].Multiplies"},
		{"front/negative-memory", func() error {
			_, err := Front(FrontData{Front: []Point{{Multiplies: 1, MemoryBits: -5}}})
			return err
		}, "Front[0].MemoryBits"},
		{"front/inf-rejection", func() error {
			_, err := Front(FrontData{Front: []Point{{Multiplies: 1, MemoryBits: 1, RejectionDB: math.Inf(1)}}})
			return err
		}, "Front[0].RejectionDB"},
		{"front/candidate-nan", func() error {
			_, err := Front(FrontData{Front: []Point{{Multiplies: 1, MemoryBits: 1, RejectionDB: 80}}, Candidates: []Point{{Multiplies: 1, MemoryBits: 1}, {Multiplies: 2, MemoryBits: nan}}})
			return err
		}, "Candidates[1].MemoryBits"},
		{"front/recommended", func() error {
			_, err := Front(FrontData{Front: []Point{{Multiplies: 1, MemoryBits: 1, RejectionDB: 80}}, Recommended: 1})
			return err
		}, "FrontData.Recommended = 1"},
		{"front/target", func() error {
			_, err := Front(FrontData{Front: []Point{{Multiplies: 1, MemoryBits: 1, RejectionDB: 80}}, TargetDB: math.NaN()})
			return err
		}, "FrontData.TargetDB"},
		{"response/short", func() error { _, err := Response(ResponseData{FreqHz: []float64{0}}); return err }, "FreqHz"},
		{"response/order", func() error {
			_, err := Response(ResponseData{FreqHz: []float64{0, 2, 1}, TotalDB: []float64{0, 0, 0}})
			return err
		}, "FreqHz[2]"},
		{"response/total-length", func() error {
			d := good
			d.TotalDB = d.TotalDB[:50]
			_, err := Response(d)
			return err
		}, "TotalDB has 50 values"},
		{"response/stage-length", func() error {
			d := good
			d.Stages = append([]Series{}, d.Stages...)
			d.Stages[1] = Series{Name: "x", DB: []float64{0}}
			_, err := Response(d)
			return err
		}, "Stages[1].DB"},
		{"response/nan", func() error {
			d := good
			d.TotalDB = append([]float64{}, d.TotalDB...)
			d.TotalDB[7] = nan
			_, err := Response(d)
			return err
		}, "TotalDB[7]"},
		{"response/band", func() error {
			d := good
			d.AliasBands = [][2]float64{{5, 3}}
			_, err := Response(d)
			return err
		}, "AliasBands[0]"},
		{"response/target", func() error {
			d := good
			d.TargetDB = -80
			_, err := Response(d)
			return err
		}, "TargetDB"},
		{"stages/empty", func() error { _, err := Stages(StagesData{}); return err }, "StagesData.Names"},
		{"stages/length", func() error {
			_, err := Stages(StagesData{Names: []string{"a", "b"}, Multiplies: []float64{1}, MemoryBits: []float64{1, 2}})
			return err
		}, "StagesData.Multiplies has 1"},
		{"stages/nan", func() error {
			_, err := Stages(StagesData{Names: []string{"a"}, Multiplies: []float64{1}, MemoryBits: []float64{nan}})
			return err
		}, "MemoryBits[0]"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			err := tt.run()
			if err == nil {
				t.Fatalf("no error, want one naming %q", tt.want)
			}
			if !strings.Contains(err.Error(), tt.want) {
				t.Errorf("error %q does not name %q", err, tt.want)
			}
		})
	}
}

func TestMerged(t *testing.T) {
	got := merged([][2]float64{{10, 12}, {1, 3}, {2, 5}, {5, 6}, {6.5, 7}, {20, 21}}, 0.5, 0.01)
	want := [][2]float64{{1, 7}, {10, 12}, {20, 21}}
	if len(got) != len(want) {
		t.Fatalf("merged = %v, want %v", got, want)
	}
	for i := range want {
		if got[i] != want[i] {
			t.Errorf("merged[%d] = %v, want %v", i, got[i], want[i])
		}
	}
}

// TestDecimate checks that the envelope keeps every column's extremes, so
// that no peak of a stopband is lost on the way to the figure.
func TestDecimate(t *testing.T) {
	const n = 100000
	x := make([]float64, n)
	y := make([]float64, n)
	for i := range x {
		x[i] = float64(i)
		y[i] = -100 + 10*math.Sin(float64(i)*0.37)
	}
	y[54321] = -3 // a lone spike
	y[777] = math.Inf(-1)
	up, down, _ := decimate(x, y, 0, n-1, -120, 3, false)
	var peak, low float64 = -1000, 0
	for _, out := range []plotter.XYs{up, down} {
		if len(out) > 1510 {
			t.Errorf("decimate kept %d points on an edge, want at most about 1500", len(out))
		}
		for i, p := range out {
			peak = math.Max(peak, p.Y)
			low = math.Min(low, p.Y)
			if i > 0 && p.X <= out[i-1].X {
				t.Fatalf("decimate output not increasing in x at %d", i)
			}
		}
	}
	if peak != -3 || low != -120 {
		t.Errorf("decimate kept peak %v and low %v, want -3 and the floor -120", peak, low)
	}
	// Every sample lies within the envelope of its column: between the
	// edges interpolated at its frequency, within a column's width.
	for i := 1; i < n-1; i += 97 {
		v := math.Max(y[i], -120)
		hiY, loY := edgeAt(up, x[i], 100), edgeAt(down, x[i], 100)
		if v > hiY[1]+1e-9 || v < loY[0]-1e-9 {
			t.Fatalf("sample %d (%g dB) outside the envelope [%g, %g]", i, v, loY[0], hiY[1])
		}
	}
}

// edgeAt is the range of an edge's values within w of x.
func edgeAt(e plotter.XYs, x, w float64) [2]float64 {
	r := [2]float64{math.Inf(1), math.Inf(-1)}
	for _, p := range e {
		if math.Abs(p.X-x) <= w {
			r[0], r[1] = math.Min(r[0], p.Y), math.Max(r[1], p.Y)
		}
	}
	return r
}

func TestTicks(t *testing.T) {
	// Expected labels worked by hand.
	labels := func(lo, hi, scale float64) string {
		var s []string
		for _, tk := range (scaledTicks{scale: scale}).Ticks(lo, hi) {
			if tk.Label != "" {
				s = append(s, tk.Label)
			}
		}
		return strings.Join(s, " ")
	}
	if got := labels(0, 61.44e6, 1e6); got != "0 10 20 30 40 50 60" {
		t.Errorf("MHz labels = %q", got)
	}
	if got := labels(0, 4.8e6, 1e6); got != "0 1 2 3 4" {
		t.Errorf("MHz labels = %q", got)
	}
	if got := labels(0, 1.7, 1); got != "0.0 0.5 1.0 1.5" && got != "0.00 0.25 0.50 0.75 1.00 1.25 1.50" {
		t.Errorf("labels = %q", got)
	}
	var logs []string
	for _, tk := range (logTicks{}).Ticks(28, 2100) {
		if tk.Label != "" {
			logs = append(logs, tk.Label)
		}
	}
	if got := strings.Join(logs, " "); got != "50 100 200 500 1k 2k" {
		t.Errorf("log labels = %q", got)
	}
}
