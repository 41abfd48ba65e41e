package plots

import (
	"math"
	"math/rand/v2"
)

// The demo data below is an invented scenario: a 122.88 MHz ADC decimated
// by 64 to 1.92 MHz, passband 0.6 MHz, protected band 0.7 MHz, 85 dB
// rejection target. The numbers are shaped like real chains but come from
// no design.

const (
	demoF0     = 122.88e6
	demoFK     = 1.92e6
	demoFp     = 0.6e6
	demoFa     = 0.7e6
	demoTarget = 85.0
)

func demoFront() FrontData {
	front := []Point{
		{Multiplies: 31, MemoryBits: 41200, LatencyS: 6.1e-6, RejectionDB: 86.1, Label: "CIC5 R8 > HB > HB > FIR 95"},
		{Multiplies: 38, MemoryBits: 23800, LatencyS: 5.2e-6, RejectionDB: 88.4, Label: "CIC5 R16 > HB > FIR 77"},
		{Multiplies: 44, MemoryBits: 15100, LatencyS: 5.6e-6, RejectionDB: 90.2, Label: "CIC6 R16 > HB > FIR 83"},
		{Multiplies: 57, MemoryBits: 9800, LatencyS: 4.4e-6, RejectionDB: 87.0, Label: "CIC5 R32 > FIR 131"},
		{Multiplies: 73, MemoryBits: 7400, LatencyS: 4.9e-6, RejectionDB: 85.6, Label: "CIC6 R32 > FIR 145"},
		{Multiplies: 118, MemoryBits: 5200, LatencyS: 3.8e-6, RejectionDB: 92.3, Label: "FIR 2 > CIC5 R16 > FIR 71"},
		{Multiplies: 260, MemoryBits: 3900, LatencyS: 3.1e-6, RejectionDB: 95.0, Label: "FIR 4 > FIR 4 > FIR 4"},
		{Multiplies: 610, MemoryBits: 3100, LatencyS: 2.6e-6, RejectionDB: 99.5, Label: "FIR 8 > FIR 8"},
		// Beaten on multiplies and memory, on the front by latency.
		{Multiplies: 64, MemoryBits: 18400, LatencyS: 2.9e-6, RejectionDB: 86.8, Label: "CIC4 R8 > FIR 8"},
		{Multiplies: 150, MemoryBits: 11900, LatencyS: 2.2e-6, RejectionDB: 88.0, Label: "CIC3 R4 > FIR 16"},
	}
	r := rand.New(rand.NewPCG(1, 2))
	var cands []Point
	for range 600 {
		f := front[r.IntN(len(front))]
		cands = append(cands, Point{
			Multiplies: f.Multiplies * (1 + 2.5*r.Float64()*r.Float64()),
			MemoryBits: f.MemoryBits * (1 + 3*r.Float64()*r.Float64()),
		})
	}
	cands = append(cands, front...)
	return FrontData{
		Title:         "Pareto front, 122.88 MHz to 1.92 MHz (D = 64)",
		Candidates:    cands,
		FeasibleTotal: 12875,
		Front:         front,
		Recommended:   2,
		TargetDB:      demoTarget,
	}
}

// demoResponse returns gains shaped like a CIC5 (R = 16) followed by a
// half-band (2) and a 77-tap droop-correcting lowpass (2): sinc^N for the
// CIC (Hogenauer 1981, eq. for the CIC gain) and idealised raised-cosine
// transitions with a flat stopband for the FIR stages.
func demoResponse(n int) ResponseData {
	f := make([]float64, n)
	cic := make([]float64, n)
	hb := make([]float64, n)
	fir := make([]float64, n)
	total := make([]float64, n)
	const r1 = 16
	f1 := demoF0 / r1
	f2 := f1 / 2
	lowpass := func(g, rate, pass, stop, atten float64) float64 {
		g = math.Mod(g, rate) // the stage's response repeats at its input rate
		if g > rate/2 {
			g = rate - g
		}
		switch {
		case g <= pass:
			return 0.02 * math.Sin(40*g/pass)
		case g >= stop:
			return -atten - 6*math.Abs(math.Sin(9*g/stop))
		}
		t := (g - pass) / (stop - pass)
		lin := 0.5 * (1 + math.Cos(math.Pi*t))
		return math.Max(20*math.Log10(lin+1e-12), -atten)
	}
	for i := range f {
		g := demoF0 / 2 * float64(i) / float64(n-1)
		f[i] = g
		x := math.Pi * g / demoF0
		h := 1.0
		if i > 0 {
			h = math.Abs(math.Sin(x*r1) / (r1 * math.Sin(x)))
		}
		cic[i] = 5 * 20 * math.Log10(h)
		hb[i] = lowpass(g, f1, demoFp, f1/2-demoFa+f1/4-f1/4, 90)
		fir[i] = lowpass(g, f2, demoFp, demoFK-demoFa, 88)
		total[i] = cic[i] + hb[i] + fir[i]
	}
	var bands [][2]float64
	for k := 1; float64(k)*demoFK-demoFa < demoF0/2; k++ {
		bands = append(bands, [2]float64{float64(k)*demoFK - demoFa, math.Min(float64(k)*demoFK+demoFa, demoF0/2)})
	}
	return ResponseData{
		Title:        "Cascade response, CIC5 R16 > HB > FIR 77",
		FreqHz:       f,
		TotalDB:      total,
		Stages:       []Series{{Name: "CIC5 R16", DB: cic}, {Name: "half-band", DB: hb}, {Name: "FIR 77 (droop corr.)", DB: fir}},
		AliasBands:   bands,
		TargetDB:     demoTarget,
		PassbandHz:   demoFp,
		OutputRateHz: demoFK,
	}
}

func demoStages() StagesData {
	return StagesData{
		Title:      "Cost by stage, CIC5 R16 > HB > FIR 77",
		Names:      []string{"CIC5 R16", "half-band 11", "FIR 77"},
		Multiplies: []float64{0, 6, 39},
		MemoryBits: []float64{1650, 2400, 11050},
	}
}
