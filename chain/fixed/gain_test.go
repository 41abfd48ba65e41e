package fixed

import (
	"math"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain"
)

// designed designs an invented chain with the remez engine.
func designed(t *testing.T, spec chain.Spec, notation string) *chain.Chain {
	t.Helper()
	return designedWith(t, spec, notation, chain.Settings{})
}

func designedWith(t *testing.T, spec chain.Spec, notation string, s chain.Settings) *chain.Chain {
	t.Helper()
	plan, err := chain.ParseNotation(notation)
	if err != nil {
		t.Fatal(err)
	}
	c, err := chain.Design(spec, plan, s)
	if err != nil {
		t.Fatalf("%s: %v", notation, err)
	}
	return c
}

func TestUnityGain(t *testing.T) {
	// Issue 11: with Settings.UnityGain the chain's DC gain is 1, so a
	// passband tone at -1 dBFS leaves the integer chain at -1 dBFS within
	// 0.1 dB, on invented chains whose CIC gain (RM)^N is not a power of two
	// (R = 5, 6, 10, 12) or is one (guard bit, gain 1/2), with the correction
	// in the last FIR, or in a half-band when there is no other FIR. The
	// quantised chain must still meet its bands and the spec (chain.Analyze).
	// The tone sits at 0.2 fp, where the passband (0.05 dB peak to peak)
	// holds the gain within 0.05 dB of DC.
	for _, tc := range []struct {
		out      float64
		notation string
		target   int // stage that takes the correction
	}{
		{1e6, "cic3m1r5 > fir4", 1},
		{1e6, "cic4m1r6 > hb > fir2", 2},
		{1e6, "cic4m1r10 > fir2 > hb", 1},
		{500e3, "cic3m2r12 > hb > fir2", 2},
		{1e6, "cic4m1r8 > fir4", 1},
		{1e6, "cic4m1r6 > hb > hb", 2},
	} {
		t.Run(tc.notation, func(t *testing.T) {
			plan, _ := chain.ParseNotation(tc.notation)
			d := 1
			for _, p := range plan {
				d *= p.Factor
			}
			spec := chain.Spec{InputRate: tc.out * float64(d), OutputRate: tc.out, Passband: 0.1 * tc.out, RippleDB: 0.05, RejectionDB: 80, InputBits: 16, OutputBits: 24}
			c := designed(t, spec, tc.notation)
			fp := spec.Passband
			for _, unity := range []bool{false, true} {
				res, err := Evaluate(spec, c, Settings{UnityGain: unity}, Signal{Tones: []Tone{{Freq: 0.2 * fp, Level: -1}}})
				if err != nil {
					t.Fatal(err)
				}
				w := res.Widths
				out := res.BitTrue.OutputLevels[0]
				t.Logf("unity %v: DC gain %.4f dB, correction %.6f at stage %d; tone -1 dBFS -> %.4f dBFS; quantised rejection %.2f dB, ripple %.4f dB",
					unity, gainDB(w.DCGain), w.GainCorrection, w.CorrectedStage+1, out, res.Quantised.AliasRejectionDB, res.Quantised.PassbandRippleDB)
				for i, sw := range w.Stages {
					if !sw.MeetsBands {
						t.Errorf("unity %v: stage %d misses its bands: %v", unity, i+1, sw.Deviations)
					}
				}
				if !unity {
					if w.GainCorrection != 1 || w.CorrectedStage != -1 {
						t.Errorf("no UnityGain, yet correction %g at stage %d", w.GainCorrection, w.CorrectedStage)
					}
					continue
				}
				if w.CorrectedStage != tc.target {
					t.Errorf("correction in stage %d, want %d", w.CorrectedStage+1, tc.target+1)
				}
				// The corrected stage's taps each lie within one code of
				// their scaled float values (rounding, then at most the
				// local search's other rounding), so its sum, and with it
				// the chain's DC gain, is off by at most n codes times the
				// other stages' gain.
				sw := w.Stages[tc.target]
				bound := w.DCGain / sw.Gain * float64(len(sw.Coefficients.Ints)) * math.Ldexp(1, -sw.Coefficients.Frac)
				if math.Abs(w.DCGain-1) > bound {
					t.Errorf("DC gain %.6f with UnityGain, want 1 +- %.2g", w.DCGain, bound)
				}
				rep := res.Report(false)
				var sum float64
				for _, st := range rep.Stages {
					sum += st.DCGainDB
				}
				if rep.GainCorrection != w.GainCorrection || rep.Stages[tc.target].GainCorrection != w.GainCorrection || math.Abs(sum-rep.DCGainDB) > 1e-9 {
					t.Errorf("report: gain_correction %g (stage %g), dc_gain_db %g, stages sum to %g", rep.GainCorrection, rep.Stages[tc.target].GainCorrection, rep.DCGainDB, sum)
				}
				if math.Abs(out+1) > 0.1 {
					t.Errorf("tone at -1 dBFS leaves at %.4f dBFS", out)
				}
				if res.Quantised.AliasRejectionDB < spec.RejectionDB-0.01 || res.Quantised.PassbandRippleDB > spec.RippleDB+1e-4 {
					t.Errorf("quantised chain misses the spec: %+v", res.Quantised)
				}
				if sw := w.Stages[tc.target]; sw.HalfBand {
					mid := len(sw.Coefficients.Ints) / 2
					for k := 2; k <= mid; k += 2 {
						if sw.Coefficients.Ints[mid-k] != 0 || sw.Coefficients.Ints[mid+k] != 0 {
							t.Errorf("corrected half-band: tap at offset %d is not zero", k)
						}
					}
				}
			}
		})
	}
}

func TestAutoWidthsMeetChain(t *testing.T) {
	// Issue 11: "auto" widths are chosen per stage on the stage's own bands;
	// PlanChain then widens the stage(s) responsible until the whole
	// quantised chain meets the spec (chain.Analyze, 0.01 dB rejection and
	// 1e-4 dB ripple slack). Invented chains are designed for the spec, then
	// handed to the planner with looser stage requirements (designed for a
	// 60 dB, 0.5 dB spec), so that the per-stage widths alone fall short of
	// the spec the float chain meets.
	for _, tc := range []struct {
		notation      string
		rej, rippleDB float64
	}{
		{"cic4m1r8 > hb > fir2", 90, 0.05},
		{"cic3m1r5 > fir4", 90, 0.05},
		{"fir4 > hb > fir2", 90, 0.05},
		{"cic4m1r6 > fir4", 65, 0.005},
		{"fir4 > fir2", 65, 0.005},
	} {
		t.Run(tc.notation, func(t *testing.T) {
			plan, _ := chain.ParseNotation(tc.notation)
			d := 1
			for _, p := range plan {
				d *= p.Factor
			}
			spec := chain.Spec{InputRate: 1e6 * float64(d), OutputRate: 1e6, Passband: 0.1e6, RippleDB: tc.rippleDB, RejectionDB: tc.rej, InputBits: 16, OutputBits: 24}
			// The stage-alone rule, whose requirements (chain.Requirements)
			// the loose spec below replaces the stages' with.
			c := designedWith(t, spec, tc.notation, chain.Settings{StageAlone: true})
			loose := spec
			loose.RejectionDB, loose.RippleDB = 60, 0.5
			reqs, err := chain.Requirements(loose, plan)
			if err != nil {
				t.Fatal(err)
			}
			lc := *c
			lc.Stages = append([]chain.Stage(nil), c.Stages...)
			for i, s := range lc.Stages {
				if f, ok := s.(chain.FIRStage); ok {
					f.Req = reqs[i]
					lc.Stages[i] = f
				}
			}
			fa, err := chain.Analyze(c, spec)
			if err != nil {
				t.Fatal(err)
			}
			cas, w, err := FromChain(spec, &lc)
			if err != nil {
				t.Fatal(err)
			}
			own, err := Plan(cas, w, Settings{})
			if err != nil {
				t.Fatal(err)
			}
			oa, err := chain.Analyze(QuantisedChain(&lc, own), spec)
			if err != nil {
				t.Fatal(err)
			}
			ws, a, err := PlanChain(spec, &lc, Settings{})
			if err != nil {
				t.Fatal(err)
			}
			var ownBits, bits []int
			for i := range ws.Stages {
				ownBits = append(ownBits, own.Stages[i].Coefficients.Bits)
				bits = append(bits, ws.Stages[i].Coefficients.Bits)
			}
			t.Logf("float %.2f dB / %.4f dB; per-stage widths %v: %.2f dB / %.4f dB; widened %v: %.2f dB / %.4f dB",
				fa.AliasRejectionDB, fa.PassbandRippleDB, ownBits, oa.AliasRejectionDB, oa.PassbandRippleDB, bits, a.AliasRejectionDB, a.PassbandRippleDB)
			if oa.AliasRejectionDB >= spec.RejectionDB && oa.PassbandRippleDB <= spec.RippleDB {
				t.Errorf("the per-stage widths already meet the spec: the case has no teeth")
			}
			if a.AliasRejectionDB < spec.RejectionDB || a.PassbandRippleDB > spec.RippleDB {
				t.Errorf("widened chain misses the spec: %+v", a)
			}
			for i := range bits {
				if bits[i] < ownBits[i] {
					t.Errorf("stage %d narrowed from %d to %d bits", i+1, ownBits[i], bits[i])
				}
			}
		})
	}
}
