package plots

import (
	"bytes"
	"math"
	"testing"

	"gonum.org/v1/plot/vg"
)

func TestResponseEdgeCases(t *testing.T) {
	base := demoResponse(1000)
	allInf := make([]float64, len(base.FreqHz))
	for i := range allInf {
		allInf[i] = math.Inf(-1)
	}
	offset := base
	offset.FreqHz = make([]float64, len(base.FreqHz))
	for i, f := range base.FreqHz {
		offset.FreqHz[i] = f + 1e3
	}
	many := base
	for i := range 8 {
		many.Stages = append(many.Stages, Series{DB: base.Stages[i%3].DB})
	}
	coarse := base
	coarse.ZoomHz = 1e3 // below the second grid point
	cases := map[string]ResponseData{
		"all-inf":      {FreqHz: base.FreqHz, TotalDB: allInf, TargetDB: 80},
		"offset-grid":  offset,
		"many-stages":  many,
		"coarse-zoom":  coarse,
		"two-points":   {FreqHz: []float64{0, 1}, TotalDB: []float64{0, -3}},
		"flat-no-band": {FreqHz: []float64{0, 1e6, 2e6}, TotalDB: []float64{0, 0, 0}, PassbandHz: 5e6},
	}
	for name, d := range cases {
		t.Run(name, func(t *testing.T) {
			f, err := Response(d)
			if err != nil {
				t.Fatal(err)
			}
			var buf bytes.Buffer
			if err := f.Render(&buf, "svg", 0, 0); err != nil {
				t.Fatal(err)
			}
			if bytes.Contains(buf.Bytes(), []byte("NaN")) {
				t.Errorf("SVG contains NaN")
			}
		})
	}
}

func TestSizes(t *testing.T) {
	f, err := Front(demoFront())
	if err != nil {
		t.Fatal(err)
	}
	for _, s := range [][2]vg.Length{{4 * vg.Inch, 3 * vg.Inch}, {12 * vg.Inch, 8 * vg.Inch}} {
		if err := f.Render(&bytes.Buffer{}, "png", s[0], s[1]); err != nil {
			t.Errorf("Render at %v x %v: %v", s[0], s[1], err)
		}
	}
	if err := f.Render(&bytes.Buffer{}, "svg", vg.Inch, vg.Inch); err == nil {
		t.Errorf("Render at 1 x 1 inch: no error, want one (too small to lay out)")
	}
}
