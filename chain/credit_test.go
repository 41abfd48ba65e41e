package chain

import (
	"math"
	"math/rand/v2"
	"reflect"
	"testing"
)

// TestLiftAtFlat checks liftAt's shortcut (the lift at fp wherever x
// folds to fp or beyond) against the full computation it stands for,
// prod |H_cic(min(fold(x, out), fp))|, bit for bit, at seeded random
// frequencies, many of them within a few ulps of the fold's edges
// k out +- fp, where the shortcut must step aside.
func TestLiftAtFlat(t *testing.T) {
	rng := rand.New(rand.NewPCG(17, 4096))
	for c := 0; c < 200; c++ {
		out := 1e3 * math.Exp(rng.Float64()*math.Log(1e4))
		fp := out * (0.05 + 0.6*rng.Float64()) // sometimes beyond out/2
		cr := &stopCredit{out: out, fp: fp}
		for k := 0; k < 1+rng.IntN(2); k++ {
			r := 2 + rng.IntN(64)
			cr.lift = append(cr.lift, CICStage{N: 1 + rng.IntN(6), M: 1 + rng.IntN(2), R: r})
			cr.liftRates = append(cr.liftRates, out*float64(r)*float64(1+rng.IntN(4)))
		}
		cr.liftFp = cr.liftGain(fp)
		for i := 0; i < 2000; i++ {
			k := float64(rng.IntN(5000))
			var x float64
			switch i % 4 {
			case 0:
				x = rng.Float64() * 5000 * out
			case 1:
				x = k*out + fp
			case 2:
				x = k*out - fp
			default:
				x = k*out + (2*rng.Float64()-1)*fp
			}
			// A few ulps either side of the chosen point.
			x = math.Abs(x + float64(rng.IntN(9)-4)*math.Abs(x)*0x1p-52)
			want := cr.liftGain(math.Min(foldFreq(x, out), fp))
			if got := cr.liftAt(x); got != want {
				t.Fatalf("out %g fp %g x %.17g: liftAt %.17g, full %.17g", out, fp, x, got, want)
			}
		}
	}
}

// TestCreditShare: credit tables built through one creditShare, for
// seeded random stopbands over the same earlier stages (so that later
// tables find some of their cells already bounded), equal the tables built
// alone, node for node, and so do their values off the table; so do the
// tables of a second FIR after the same CIC (the first FIR with its taps
// scaled), whose cells find the CIC's values from the first's (cicRow).
func TestCreditShare(t *testing.T) {
	sp := Spec{InputRate: 16e6, OutputRate: 250e3, Passband: 80e3, Protected: 100e3, RippleDB: 0.2, RejectionDB: 70}
	plan, err := ParseNotation("cic5m1r16 > fir2 > fir2")
	if err != nil {
		t.Fatal(err)
	}
	c, err := Design(sp, plan, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(3, 2026))
	share := newCreditShare()
	other := c.Stages[1].(FIRStage)
	other.Taps = append([]float64(nil), other.Taps...)
	for i := range other.Taps {
		other.Taps[i] *= 0.8
	}
	for _, prev := range [][]Stage{c.Stages[:1], c.Stages[:2], {c.Stages[0], other}} {
		alone := newStopCredit(1e-4, sp.InputRate, prev, nil)
		half := alone.rate / 2
		for i := 0; i < 12; i++ {
			var stop []Interval
			lo := rng.Float64() * half / 2
			for lo < half && len(stop) < 4 {
				hi := math.Min(half, lo+rng.Float64()*half/4)
				stop = append(stop, Interval{lo, hi})
				lo = hi + rng.Float64()*half/8
			}
			a := newStopCredit(1e-4, sp.InputRate, prev, stop)
			s := newStopCredit(1e-4, sp.InputRate, prev, stop)
			s.share = share
			ta, ts := a.table(), s.table()
			if !reflect.DeepEqual(ta.nodes, ts.nodes) || ta.w != ts.w || ta.dc != ts.dc {
				t.Fatalf("%d earlier stages, stopbands %v: the shared table differs", len(prev), stop)
			}
			// The table made, the credit lets the share go (a kept chain
			// must not hold its plan's whole share): the frequencies
			// outside the table, drawn below too, are bounded without it.
			if s.share != nil {
				t.Fatalf("%d earlier stages: the credit keeps the share after its table", len(prev))
			}
			for k := 0; k < 20; k++ {
				x := rng.Float64() * half
				if va, vs := ta.at(x), ts.at(x); va != vs {
					t.Fatalf("%d earlier stages, stopbands %v, x %g: credit %g shared, %g alone", len(prev), stop, x, vs, va)
				}
			}
		}
	}
	if len(share.pre) != 3 {
		t.Errorf("%d prefixes in the share, want 3", len(share.pre))
	}
	if len(share.cic) != 2 {
		t.Errorf("%d CIC rows in the share, want 2 (one for each rate)", len(share.cic))
	}
}

// TestMod2 checks mod2 against math.Mod(v, 2) (exact by its definition),
// bit for bit, over seeded random v from 1e-300 to 2^60, integers and
// values a few ulps from multiples of 2 among them.
func TestMod2(t *testing.T) {
	rng := rand.New(rand.NewPCG(2, 2))
	for i := 0; i < 200000; i++ {
		v := math.Exp2(rng.Float64()*1056 - 996)
		switch i % 4 {
		case 1:
			v = math.Floor(v)
		case 2:
			v = 2 * math.Round(v/2)
			v = math.Nextafter(v, math.Inf(1))
		case 3:
			v = math.Nextafter(2*math.Round(v/2), 0)
		}
		if !(v >= 0) || math.IsInf(v, 0) {
			continue
		}
		if got, want := mod2(v), math.Mod(v, 2); math.Float64bits(got) != math.Float64bits(want) {
			t.Fatalf("mod2(%.17g) = %.17g, math.Mod %.17g", v, got, want)
		}
	}
}

// TestUpperIsBoundsUp: a bounder's upper is its bounds' upper bound, bit
// for bit, for CICs and FIRs over seeded random intervals, narrow (below a
// FIR's grid step) and wide, anywhere on the frequency axis.
func TestUpperIsBoundsUp(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 1))
	for c := 0; c < 40; c++ {
		rate := 1e5 * (1 + 100*rng.Float64())
		var st Stage = CICStage{N: 1 + rng.IntN(6), M: 1 + rng.IntN(2), R: 2 + rng.IntN(200)}
		if c%2 == 1 {
			h := make([]float64, 5+rng.IntN(300))
			for i := range h {
				h[i] = rng.NormFloat64() / float64(len(h))
			}
			st = FIRStage{R: 2, Taps: h, Length: len(h)}
		}
		b, err := newStageBounder(st, rate)
		if err != nil {
			t.Fatal(err)
		}
		for i := 0; i < 3000; i++ {
			a := (rng.Float64()*4 - 1) * rate
			w := rate * math.Exp(-rng.Float64()*25)
			_, up := b.bounds(a, a+w)
			if got := b.upper(a, a+w); math.Float64bits(got) != math.Float64bits(up) {
				t.Fatalf("%T at %g Hz, [%g, %g]: upper %.17g, bounds %.17g", st, rate, a, a+w, got, up)
			}
		}
	}
}

// TestModPos checks modPos against math.Mod (exact by its definition),
// bit for bit, over seeded random x >= 0 and y > 0 whose quotient spans
// 0 to 2^60, with x an exact multiple of y or a few ulps either side of
// one among them (where x/y rounds to the wrong quotient).
func TestModPos(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 52))
	for i := 0; i < 300000; i++ {
		y := math.Exp2(rng.Float64()*80 - 40)
		q := math.Floor(math.Exp2(rng.Float64() * 60))
		x := (q + rng.Float64()) * y
		switch i % 4 {
		case 1:
			x = q * y
		case 2:
			x = math.Nextafter(q*y, math.Inf(1))
			x = math.Nextafter(x, math.Inf(1))
		case 3:
			x = math.Nextafter(q*y, 0)
		}
		if i%97 == 0 {
			x = rng.Float64() * y // below y
		}
		if got, want := modPos(x, y), math.Mod(x, y); math.Float64bits(got) != math.Float64bits(want) {
			t.Fatalf("modPos(%.17g, %.17g) = %.17g, math.Mod %.17g", x, y, got, want)
		}
	}
	for _, c := range [][2]float64{{math.Inf(1), 3}, {math.NaN(), 3}, {5, math.Inf(1)}, {0, 3}, {3, 3}} {
		got, want := modPos(c[0], c[1]), math.Mod(c[0], c[1])
		if math.Float64bits(got) != math.Float64bits(want) && !(math.IsNaN(got) && math.IsNaN(want)) {
			t.Errorf("modPos(%g, %g) = %g, math.Mod %g", c[0], c[1], got, want)
		}
	}
}

// TestFIRUpperIsFull: the upper-only FIR bounder the credit keeps
// (newFIRUpper) gives the full bounder's upper bounds and coarse upper
// bound bit for bit, and 0 or a valid lower bound below the full one's,
// for seeded random FIRs over seeded random intervals, narrow and wide.
func TestFIRUpperIsFull(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 3))
	for c := 0; c < 30; c++ {
		rate := 1e5 * (1 + 100*rng.Float64())
		h := make([]float64, 5+rng.IntN(400))
		for i := range h {
			h[i] = rng.NormFloat64() / float64(len(h))
		}
		full, err := newFIRBounder(h, rate)
		if err != nil {
			t.Fatal(err)
		}
		up, err := newFIRUpper(h, rate)
		if err != nil {
			t.Fatal(err)
		}
		_, cf := full.coarse(0, rate)
		if cl, cu := up.coarse(0, rate); cl != 0 || math.Float64bits(cu) != math.Float64bits(cf) {
			t.Fatalf("%d taps: coarse (%g, %g), full's up %g", len(h), cl, cu, cf)
		}
		for i := 0; i < 2000; i++ {
			a := (rng.Float64()*4 - 1) * rate
			w := rate * math.Exp(-rng.Float64()*25)
			fl, fu := full.bounds(a, a+w)
			ul, uu := up.bounds(a, a+w)
			if math.Float64bits(uu) != math.Float64bits(fu) || math.Float64bits(up.upper(a, a+w)) != math.Float64bits(fu) {
				t.Fatalf("%d taps, [%g, %g]: upper-only %.17g, full %.17g", len(h), a, a+w, uu, fu)
			}
			if !(ul >= 0 && ul <= fl) {
				t.Fatalf("%d taps, [%g, %g]: upper-only lower bound %g, full %g", len(h), a, a+w, ul, fl)
			}
		}
	}
}
