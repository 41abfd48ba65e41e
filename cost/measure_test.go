package cost

import (
	"os"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/fixed/mcm"
)

// TestMeasureStages prints the adders of the shared graphs of the FIR and
// half-band stages stepdown designs for the built-in example and invented
// specs, against plain CSD (the table in the package doc); it checks that
// no graph costs more than CSD. Run it with
//
//	STEPDOWN_LONG=1 go test -count=1 -run TestMeasureStages -v ./cost
func TestMeasureStages(t *testing.T) {
	if os.Getenv("STEPDOWN_LONG") == "" {
		t.Skip("set STEPDOWN_LONG=1 to measure")
	}
	for _, tc := range []struct {
		name     string
		spec     chain.Spec
		notation string
	}{
		{"example (122.88 -> 1.92 MHz, 90 dB)", chain.Spec{InputRate: 122.88e6, OutputRate: 1.92e6, Passband: 480e3, Protected: 640e3, RippleDB: 0.2, RejectionDB: 90}, "cic5m1r16 > hb > fir2"},
		{"example", chain.Spec{InputRate: 122.88e6, OutputRate: 1.92e6, Passband: 480e3, Protected: 640e3, RippleDB: 0.2, RejectionDB: 90}, "cic3m1r2 > fir32"},
		{"receiver (122.88 MHz -> 30 kHz, 90 dB)", chain.Spec{InputRate: 122.88e6, OutputRate: 30e3, Passband: 10e3, RippleDB: 0.1, RejectionDB: 90}, "cic5m1r256 > hb > hb > fir4"},
		{"radar (2.4 GHz -> 60 MHz, 70 dB)", chain.Spec{InputRate: 2.4e9, OutputRate: 60e6, Passband: 20e6, RippleDB: 0.2, RejectionDB: 70}, "cic4m1r10 > hb > fir2"},
		{"audio (3.072 MHz -> 48 kHz, 100 dB)", chain.Spec{InputRate: 3.072e6, OutputRate: 48e3, Passband: 20e3, RippleDB: 0.05, RejectionDB: 100}, "cic4m1r8 > hb > hb > fir2"},
		{"narrowband (64 MHz -> 250 kHz, 80 dB)", chain.Spec{InputRate: 64e6, OutputRate: 250e3, Passband: 80e3, Protected: 100e3, RippleDB: 0.3, RejectionDB: 80}, "fir4 > fir4 > fir4 > fir4"},
	} {
		plan, err := chain.ParseNotation(tc.notation)
		if err != nil {
			t.Fatal(err)
		}
		c, err := chain.Design(tc.spec, plan, chain.Settings{})
		if err != nil {
			t.Fatalf("%s %s: %v", tc.name, tc.notation, err)
		}
		for _, bits := range []int{16, 18} {
			for i, st := range c.Stages {
				v, ok := st.(chain.FIRStage)
				if !ok {
					continue
				}
				ints, err := RoundTaps(v.Taps, v.HalfBand, bits)
				if err != nil {
					t.Fatal(err)
				}
				b, err := IntsBlock(ints)
				if err != nil {
					t.Fatal(err)
				}
				csd := mcm.CSDAdders(ints)
				if b.Coefficient > csd {
					t.Errorf("graph %d > CSD %d", b.Coefficient, csd)
				}
				t.Logf("%-40s %-28s %d %-8s %4d taps %2d bits: CSD %4d graph %4d saving %5.1f%%, tap adders %4d",
					tc.name, tc.notation, i+1, v.Kind(), len(v.Taps), bits, csd, b.Coefficient, 100*(1-float64(b.Coefficient)/float64(max(csd, 1))), b.Structural)
			}
		}
	}
}
