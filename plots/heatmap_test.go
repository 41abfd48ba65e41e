package plots

import (
	"bytes"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// demoHeatmap is an invented grid: rejection 80 to 100 dB (rows) by
// passband 300 to 600 kHz (columns). Multiplies grow with both; the
// structure changes above 90 dB and at 600 kHz, and one corner has no chain.
func demoHeatmap() HeatmapData {
	d := HeatmapData{
		Title: "Sweep of rejection by passband: invented chain",
		Y:     HeatmapAxis{Name: "rejection", Kind: SweepLevel, Values: []float64{80, 85, 90, 95, 100}},
		X:     HeatmapAxis{Name: "passband", Kind: SweepFrequency, Values: []float64{300e3, 400e3, 500e3, 600e3}},
		Tags:  []HeatmapTag{{"A", "cic6m1r32 > fir2"}, {"B", "cic5m1r16 > fir4"}, {"C", "cic5m1r16 > fir2 > fir2"}},
	}
	for i, rej := range d.Y.Values {
		var row []HeatmapCell
		for j, pb := range d.X.Values {
			c := HeatmapCell{OK: true, Value: 10 + 2*float64(i) + 6*float64(j), Tag: "A"}
			if rej > 90 {
				c.Tag = "B"
			}
			if pb >= 600e3 {
				c.Tag = "C"
			}
			if rej == 100 && pb == 600e3 {
				c = HeatmapCell{Mark: "no chain"}
			}
			row = append(row, c)
		}
		d.Cells = append(d.Cells, row)
	}
	d.Cells[1][2].Partial = true
	return d
}

func TestHeatmapLabels(t *testing.T) {
	f, err := Heatmap(demoHeatmap())
	if err != nil {
		t.Fatal(err)
	}
	var b bytes.Buffer
	if err := f.Render(&b, "svg", HeatmapWidth, HeatmapHeight); err != nil {
		t.Fatal(err)
	}
	svg := b.String()
	for _, want := range []string{
		"rejection (dB)", "passband (kHz)", "multiplies / output (recommended chain)",
		"cic5m1r16 &gt; fir2 &gt; fir2", ">no chain<", ">28<", ">24*<", "heavy lines", "grey: no chain",
	} {
		if !strings.Contains(svg, want) {
			t.Errorf("SVG lacks %q", want)
		}
	}
	var png bytes.Buffer
	if err := f.Render(&png, "png", HeatmapWidth, HeatmapHeight); err != nil || png.Len() < 1000 {
		t.Errorf("png: %v, %d bytes", err, png.Len())
	}
	if dir := os.Getenv("STEPDOWN_PLOTS_DIR"); dir != "" {
		// For looking at the figure: STEPDOWN_PLOTS_DIR=/tmp go test ./plots
		_ = os.WriteFile(filepath.Join(dir, "heatmap.svg"), b.Bytes(), 0o644)
		_ = os.WriteFile(filepath.Join(dir, "heatmap.png"), png.Bytes(), 0o644)
	}
}

func TestHeatmapErrors(t *testing.T) {
	for _, c := range []struct {
		name string
		edit func(*HeatmapData)
		want string // the field the message must name
	}{
		{"no X values", func(d *HeatmapData) { d.X.Values = nil }, "X.Values is empty"},
		{"Y kind", func(d *HeatmapData) { d.Y.Kind = 9 }, "Y.Kind 9"},
		{"NaN X", func(d *HeatmapData) { d.X.Values[1] = math.NaN() }, "X.Values[1]"},
		{"repeated Y", func(d *HeatmapData) { d.Y.Values[3] = d.Y.Values[0] }, "Y.Values[3]"},
		{"rows", func(d *HeatmapData) { d.Cells = d.Cells[:2] }, "Cells has 2 rows"},
		{"columns", func(d *HeatmapData) { d.Cells[1] = d.Cells[1][:3] }, "Cells[1] has 3 cells"},
		{"Inf value", func(d *HeatmapData) { d.Cells[2][1].Value = math.Inf(1) }, "Cells[2][1].Value"},
		{"no chain", func(d *HeatmapData) {
			for i := range d.Cells {
				for j := range d.Cells[i] {
					d.Cells[i][j].OK = false
				}
			}
		}, "no cell has a chain"},
	} {
		d := demoHeatmap()
		c.edit(&d)
		_, err := Heatmap(d)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %v, want one naming %q", c.name, err, c.want)
		}
	}
	// A cell without a chain may carry anything: its value is ignored.
	d := demoHeatmap()
	d.Cells[4][3].Value = math.NaN()
	if _, err := Heatmap(d); err != nil {
		t.Errorf("NaN value of a cell without a chain: %v", err)
	}
}

// The map reads with its axes rising whatever the order swept, and the
// same data give the same bytes.
func TestHeatmapOrder(t *testing.T) {
	render := func(d HeatmapData) []byte {
		f, err := Heatmap(d)
		if err != nil {
			t.Fatal(err)
		}
		var b bytes.Buffer
		if err := f.Render(&b, "svg", HeatmapWidth, HeatmapHeight); err != nil {
			t.Fatal(err)
		}
		return b.Bytes()
	}
	up := demoHeatmap()
	down := demoHeatmap()
	n := len(down.Y.Values)
	for i := 0; i < n/2; i++ {
		down.Y.Values[i], down.Y.Values[n-1-i] = down.Y.Values[n-1-i], down.Y.Values[i]
		down.Cells[i], down.Cells[n-1-i] = down.Cells[n-1-i], down.Cells[i]
	}
	a, b := render(up), render(down)
	if !bytes.Equal(a, b) {
		t.Error("rows given downwards draw a different map")
	}
	if !bytes.Equal(a, render(demoHeatmap())) {
		t.Error("the same data drew different bytes")
	}
}

// With more structures than the key can hold, the tags are left out and
// the figure says so.
func TestHeatmapManyTags(t *testing.T) {
	d := demoHeatmap()
	d.Tags = nil
	for i := 0; i < 150; i++ {
		d.Tags = append(d.Tags, HeatmapTag{Tag: strconv.Itoa(i), Text: "cic5m1r16 > hb > fir" + strconv.Itoa(i)})
	}
	f, err := Heatmap(d)
	if err != nil {
		t.Fatal(err)
	}
	var b bytes.Buffer
	if err := f.Render(&b, "svg", HeatmapWidth, HeatmapHeight); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(b.String(), "150 structures, too many to key here") || strings.Contains(b.String(), "fir149") {
		t.Error("the key of 150 tags was not left out")
	}
}
