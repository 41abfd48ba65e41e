package plots_test

import (
	"bytes"
	"fmt"
	"log"
	"math"

	"github.com/stepdown-dsp/stepdown/plots"
)

// An invented chain: 122.88 MHz decimated by 64 to 1.92 MHz.
func ExampleFront() {
	fig, err := plots.Front(plots.FrontData{
		Title: "Pareto front, 122.88 MHz to 1.92 MHz",
		Front: []plots.Point{
			{Multiplies: 38, MemoryBits: 23800, LatencyS: 5.2e-6, RejectionDB: 88.4, Label: "CIC5 R16 > HB > FIR 77"},
			{Multiplies: 57, MemoryBits: 9800, LatencyS: 4.4e-6, RejectionDB: 87.0, Label: "CIC5 R32 > FIR 131"},
			{Multiplies: 260, MemoryBits: 3900, LatencyS: 3.1e-6, RejectionDB: 95.0, Label: "FIR 4 > FIR 4 > FIR 4"},
			// Beaten on multiplies and memory, on the front by its latency.
			{Multiplies: 64, MemoryBits: 18400, LatencyS: 2.9e-6, RejectionDB: 86.8, Label: "CIC4 R8 > FIR 8"},
		},
		Recommended: 1,
		// A chain to compare with the front, as stepdown check draws it.
		Checked:  &plots.Point{Multiplies: 90, MemoryBits: 16500, LatencyS: 5.9e-6, RejectionDB: 88.1, Label: "CIC4 R16 > HB > FIR 97"},
		TargetDB: 85,
	})
	if err != nil {
		log.Fatal(err)
	}
	// The command line writes files with fig.Save("front.svg", 0, 0).
	var buf bytes.Buffer
	if err := fig.Render(&buf, "svg", 0, 0); err != nil {
		log.Fatal(err)
	}
	fmt.Println(bytes.HasPrefix(buf.Bytes(), []byte("<?xml")))
	// Output: true
}

func ExampleResponse() {
	// A CIC of order 5 decimating 122.88 MHz by 16 alone, on a 4001-point
	// grid from 0 to half the input rate.
	const f0, r, n = 122.88e6, 16, 4001
	d := plots.ResponseData{TargetDB: 85, PassbandHz: 0.6e6, OutputRateHz: f0 / r}
	for i := range n {
		f := f0 / 2 * float64(i) / (n - 1)
		x := math.Pi * f / f0
		h := 1.0
		if i > 0 {
			h = math.Abs(math.Sin(r*x) / (r * math.Sin(x)))
		}
		d.FreqHz = append(d.FreqHz, f)
		d.TotalDB = append(d.TotalDB, 5*20*math.Log10(h)) // -Inf at the nulls is allowed
	}
	for k := 1.0; k*f0/r-0.7e6 < f0/2; k++ {
		d.AliasBands = append(d.AliasBands, [2]float64{k*f0/r - 0.7e6, math.Min(k*f0/r+0.7e6, f0/2)})
	}
	fig, err := plots.Response(d)
	if err != nil {
		log.Fatal(err)
	}
	fmt.Println(len(fig.Plots()), "panels")
	// Output: 2 panels
}

func ExampleStages() {
	fig, err := plots.Stages(plots.StagesData{
		Names:      []string{"CIC5 R16", "half-band 11", "FIR 77"},
		Multiplies: []float64{0, 6, 39},
		MemoryBits: []float64{1650, 2400, 11050},
	})
	if err != nil {
		log.Fatal(err)
	}
	var buf bytes.Buffer
	if err := fig.Render(&buf, "png", 0, 0); err != nil {
		log.Fatal(err)
	}
	fmt.Println(bytes.HasPrefix(buf.Bytes(), []byte("\x89PNG")))
	// Output: true
}

// An invented sweep of the rejection target whose recommended structure
// changes at 90 dB.
func ExampleSweep() {
	d := plots.SweepData{Name: "rejection", Kind: plots.SweepLevel}
	for i, v := range []float64{80, 85, 90, 95} {
		n := "cic6m1r32 > fir2"
		if v >= 90 {
			n = "cic5m1r16 > fir4"
		}
		m := 18 + 6*float64(i)
		d.Points = append(d.Points, plots.SweepPoint{Value: v, OK: true, Notation: n,
			Multiplies: m, MemoryBits: 1900, LatencyS: 2.5e-6,
			BestMultiplies: m - 1, BestMemoryBits: 1800, BestLatencyS: 2e-6})
	}
	fig, err := plots.Sweep(d)
	if err != nil {
		log.Fatal(err)
	}
	var buf bytes.Buffer
	if err := fig.Render(&buf, "png", plots.SweepWidth, plots.SweepHeight); err != nil {
		log.Fatal(err)
	}
	fmt.Println(bytes.HasPrefix(buf.Bytes(), []byte("\x89PNG")))
	// Output: true
}
