package plots

import (
	"bytes"
	"math"
	"strings"
	"testing"
)

// demoSweep is an invented sweep of the rejection target from 80 to 100 dB
// whose recommended structure changes once, at 90 dB.
func demoSweep() SweepData {
	d := SweepData{Title: "Sweep of rejection: invented chain", Name: "rejection", Kind: SweepLevel}
	for i, v := range []float64{80, 85, 90, 95, 100} {
		n := "cic6m1r32 > fir2"
		if v >= 90 {
			n = "cic5m1r16 > fir4"
		}
		f := float64(i)
		d.Points = append(d.Points, SweepPoint{
			Value: v, OK: true, Notation: n,
			Multiplies: 18 + 5*f, MemoryBits: 1850 + 260*f, LatencyS: 3e-6 - 1e-7*f,
			BestMultiplies: 18 + 4*f, BestMemoryBits: 1850 + 130*f, BestLatencyS: 2e-6 + 1e-7*f,
			Multipliers: 1, BestMultipliers: 1,
		})
	}
	return d
}

func TestSweepLabels(t *testing.T) {
	f, err := Sweep(demoSweep())
	if err != nil {
		t.Fatal(err)
	}
	var b bytes.Buffer
	if err := f.Render(&b, "svg", SweepWidth, SweepHeight); err != nil {
		t.Fatal(err)
	}
	svg := b.String()
	for _, want := range []string{"cic6m1r32 &gt; fir2", "cic5m1r16 &gt; fir4", "rejection (dB)", "latency (µs)", "memory (bits)"} {
		if !strings.Contains(svg, want) {
			t.Errorf("SVG lacks %q", want)
		}
	}
	if len(f.Plots()) != 3 {
		t.Errorf("%d panels, want 3 without Clock", len(f.Plots()))
	}
	d := demoSweep()
	d.Clock = true
	if f, _ := Sweep(d); len(f.Plots()) != 4 {
		t.Errorf("%d panels, want 4 with Clock", len(f.Plots()))
	}
}

func TestSweepErrors(t *testing.T) {
	for _, c := range []struct {
		name string
		edit func(*SweepData)
		want string // the field the message must name
	}{
		{"empty", func(d *SweepData) { d.Points = nil }, "Points"},
		{"no chain", func(d *SweepData) {
			for i := range d.Points {
				d.Points[i].OK = false
			}
		}, "no value has a chain"},
		{"kind", func(d *SweepData) { d.Kind = 7 }, "Kind 7"},
		{"NaN value", func(d *SweepData) { d.Points[2].Value = math.NaN() }, "Points[2].Value"},
		{"NaN multiplies", func(d *SweepData) { d.Points[1].Multiplies = math.NaN() }, "Points[1].Multiplies"},
		{"Inf latency", func(d *SweepData) { d.Points[3].BestLatencyS = math.Inf(1) }, "Points[3].BestLatencyS"},
		{"Inf multipliers", func(d *SweepData) { d.Points[0].Multipliers = math.Inf(-1) }, "Points[0].Multipliers"},
	} {
		d := demoSweep()
		c.edit(&d)
		_, err := Sweep(d)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %v, want one naming %q", c.name, err, c.want)
		}
	}
	// A value without a chain may carry anything: its figures are ignored.
	d := demoSweep()
	d.Points[1].OK, d.Points[1].Multiplies = false, math.NaN()
	if _, err := Sweep(d); err != nil {
		t.Errorf("NaN figure of a value without a chain: %v", err)
	}
}

// A sweep drawn downwards is the same picture as drawn upwards: the axis
// runs from the least value, and changes are marked left to right.
func TestSweepDownwards(t *testing.T) {
	up := demoSweep()
	down := demoSweep()
	for i, j := 0, len(down.Points)-1; i < j; i, j = i+1, j-1 {
		down.Points[i], down.Points[j] = down.Points[j], down.Points[i]
	}
	svg := func(d SweepData) []byte {
		f, err := Sweep(d)
		if err != nil {
			t.Fatal(err)
		}
		var b bytes.Buffer
		if err := f.Render(&b, "svg", SweepWidth, SweepHeight); err != nil {
			t.Fatal(err)
		}
		return b.Bytes()
	}
	if !bytes.Equal(svg(up), svg(down)) {
		t.Error("the downward sweep draws differently")
	}
}

func TestSweepCountAxis(t *testing.T) {
	for _, c := range []struct{ name, unit, want, not string }{
		{"decimation", "", ">decimation<", "decimation ("},
		{"max_stages", "stages", ">max_stages (stages)<", ""},
	} {
		d := demoSweep()
		d.Name, d.Kind, d.Unit = c.name, SweepCount, c.unit
		for i := range d.Points {
			d.Points[i].Value = float64(16 * (i + 1))
		}
		f, err := Sweep(d)
		if err != nil {
			t.Fatal(err)
		}
		var b bytes.Buffer
		if err := f.Render(&b, "svg", SweepWidth, SweepHeight); err != nil {
			t.Fatal(err)
		}
		if !strings.Contains(b.String(), c.want) || (c.not != "" && strings.Contains(b.String(), c.not)) {
			t.Errorf("%s: axis label is not %q", c.name, c.want)
		}
	}
}
