package plots

import (
	"math"
	"strings"
	"testing"
)

// TestDenseStretches checks that a stretch where the curve swings many
// times within a few points of width is marked dense and drawn with its
// upper edge on the peaks, that a slowly varying stretch with a deep lone
// null is not, and that no peak is lost either way.
func TestDenseStretches(t *testing.T) {
	const n = 60000 // 40 samples a column
	x := make([]float64, n)
	y := make([]float64, n)
	for i := range x {
		x[i] = float64(i)
		if i < n/2 {
			// Period 8 samples: five swings a column, 100 dB deep.
			y[i] = -70 + 50*math.Cos(2*math.Pi*float64(i)/8)
		} else {
			// Period 6000 samples: 150 columns a swing.
			y[i] = -60 + 40*math.Cos(2*math.Pi*float64(i)/6000)
		}
	}
	y[12345] = -3           // a spike in the dense stretch
	y[45000] = math.Inf(-1) // a lone null in the slow one
	up, down, dense := decimate(x, y, 0, n-1, -150, 3, false)
	if len(up) != len(down) || len(up) != len(dense) {
		t.Fatalf("edges of %d, %d points, %d density flags: want equal", len(up), len(down), len(dense))
	}
	const margin = 1000 // samples: the density window reaches 10 columns
	peak := math.Inf(-1)
	for k, p := range up {
		peak = math.Max(peak, p.Y)
		switch {
		case p.X > margin && p.X < n/2-margin:
			if !dense[k] {
				t.Fatalf("point %d (x %v) of the fast stretch not dense", k, p.X)
			}
			if p.Y < -20-1e-9 {
				t.Fatalf("upper edge at x %v is %v dB: dips below the peaks (-20 dB)", p.X, p.Y)
			}
		case p.X > n/2+margin:
			if dense[k] {
				t.Fatalf("point %d (x %v) of the slow stretch dense", k, p.X)
			}
		}
	}
	if peak != -3 {
		t.Errorf("highest point of the upper edge %v, want the spike's -3 dB", peak)
	}
	low := math.Inf(1)
	for _, p := range down {
		if p.X > n/2 {
			low = math.Min(low, p.Y)
		}
	}
	if low != -150 {
		t.Errorf("the lone null reaches %v dB on the lower edge, want the floor -150", low)
	}
	// Every sample lies within the envelope near its frequency.
	for i := 1; i < n-1; i += 7 {
		v := math.Max(y[i], -150)
		hi, lo := edgeAt(up, x[i], 40), edgeAt(down, x[i], 40)
		if v > hi[1]+1e-9 || v < lo[0]-1e-9 {
			t.Fatalf("sample %d (%g dB) outside the envelope [%g, %g]", i, v, lo[0], hi[1])
		}
	}
}

// With two samples a column or fewer the edges pass through the samples,
// but a curve that alternates between them is still a solid block: it is
// dense, and its upper edge runs on the peaks.
func TestDenseSparseSamples(t *testing.T) {
	const n = 3000
	x := make([]float64, n)
	y := make([]float64, n)
	for i := range x {
		x[i] = float64(i)
		y[i] = -100
		if i%2 == 0 {
			y[i] = -10
		}
	}
	up, _, dense := decimate(x, y, 0, n-1, -150, 3, false)
	for k, p := range up {
		if p.X < 50 || p.X > n-50 {
			continue
		}
		if !dense[k] || p.Y != -10 {
			t.Fatalf("point %d (x %v): dense %v, upper edge %v dB; want dense at -10", k, p.X, dense[k], p.Y)
		}
	}
}

// The response legend explains the pale fill when, and only when, a
// curve has a dense stretch.
func TestDenseLegend(t *testing.T) {
	has := func(d ResponseData) bool {
		f, err := Response(d)
		if err != nil {
			t.Fatal(err)
		}
		svg := string(render(t, f, "svg"))
		return strings.Contains(svg, "dense swings")
	}
	if !has(highRatio()) {
		t.Errorf("a CIC of ratio 2500 over 50001 points: no legend entry for dense stretches")
	}
	d := demoResponse(2000)
	d.Stages = d.Stages[:1]
	d.ZoomHz = -1
	if has(d) {
		t.Errorf("a CIC of ratio 16 alone: legend explains dense stretches it does not have")
	}
}

// TestResponseAliasCurve draws a second curve (a fractional chain's
// largest alias) under its own legend entry and the cascade's given name,
// and refuses one whose length is not the grid's.
func TestResponseAliasCurve(t *testing.T) {
	n := 400
	d := ResponseData{FreqHz: make([]float64, n), TotalDB: make([]float64, n), AliasDB: make([]float64, n),
		TotalName: "kept path (K = 0)", AliasName: "largest alias into [0, 1 kHz]", TargetDB: 60, OutputRateHz: 4000}
	for i := range d.FreqHz {
		f := 50 * float64(i)
		d.FreqHz[i] = f
		d.TotalDB[i] = -math.Min(120, f/50)
		d.AliasDB[i] = -60 - 20*math.Abs(math.Sin(f/700))
	}
	d.AliasDB[0] = math.Inf(-1) // no path lands: drawn at the floor
	fig, err := Response(d)
	if err != nil {
		t.Fatal(err)
	}
	var b strings.Builder
	if err := fig.Render(&b, "svg", 0, 0); err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"kept path (K = 0)", "largest alias into [0, 1 kHz]"} {
		if !strings.Contains(b.String(), want) {
			t.Errorf("legend lacks %q", want)
		}
	}
	if strings.Contains(b.String(), ">cascade<") {
		t.Errorf("the cascade is named \"cascade\", not TotalName")
	}
	d.AliasDB = d.AliasDB[:n-1]
	if _, err := Response(d); err == nil || !strings.Contains(err.Error(), "AliasDB has 399 values") {
		t.Errorf("short AliasDB: err %v", err)
	}
}
