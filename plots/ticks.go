package plots

import (
	"math"
	"strconv"

	"gonum.org/v1/plot"
)

// logThreshold is the max/min ratio above which an axis of positive values
// is drawn on a log scale: beyond it a linear axis crowds the small values
// into a few pixels.
const logThreshold = 20

// unit is a display unit: values are divided by scale and the axis label
// names the unit.
type unit struct {
	scale float64
	name  string
}

// freqUnit picks Hz, kHz, MHz or GHz so that maxHz shows as at most 4 digits
// before the point.
func freqUnit(maxHz float64) unit {
	switch {
	case maxHz >= 1e9:
		return unit{1e9, "GHz"}
	case maxHz >= 1e6:
		return unit{1e6, "MHz"}
	case maxHz >= 1e3:
		return unit{1e3, "kHz"}
	}
	return unit{1, "Hz"}
}

// bitsUnit picks bit, kbit or Mbit (SI prefixes, powers of ten).
func bitsUnit(maxBits float64) unit {
	switch {
	case maxBits >= 1e6:
		return unit{1e6, "Mbit"}
	case maxBits >= 1e4:
		return unit{1e3, "kbit"}
	}
	return unit{1, "bits"}
}

// timeUnit picks s, ms, µs or ns so that maxS shows as at most 3 digits
// before the point.
func timeUnit(maxS float64) unit {
	switch {
	case maxS >= 1:
		return unit{1, "s"}
	case maxS >= 1e-3:
		return unit{1e-3, "ms"}
	case maxS >= 1e-6:
		return unit{1e-6, "µs"}
	}
	return unit{1e-9, "ns"}
}

// scaledTicks places about seven (or n) labelled ticks at round values of a
// display unit (1, 2, 2.5 or 5 times a power of ten), with minor ticks
// between: gonum's default of three labels is too sparse for reading
// frequencies off a filter plot.
type scaledTicks struct {
	scale float64
	n     int // labels wanted; zero means 7
}

func (t scaledTicks) Ticks(vmin, vmax float64) []plot.Tick {
	lo, hi := vmin/t.scale, vmax/t.scale
	if !(hi > lo) {
		return nil
	}
	n := t.n
	if n == 0 {
		n = 7
	}
	raw := (hi - lo) / float64(n)
	mag := math.Pow(10, math.Floor(math.Log10(raw)))
	step, minor := 10*mag, 2*mag
	for _, c := range []struct{ s, m float64 }{{1, 0.2}, {2, 0.5}, {2.5, 0.5}, {5, 1}} {
		if c.s*mag >= raw {
			step, minor = c.s*mag, c.m*mag
			break
		}
	}
	prec := max(0, -int(math.Floor(math.Log10(step)+1e-9)))
	if math.Abs(step/math.Pow(10, -float64(prec))-math.Round(step/math.Pow(10, -float64(prec)))) > 1e-9 {
		prec++ // 2.5 times a power of ten needs one more digit
	}
	var ts []plot.Tick
	for k := math.Ceil(lo/minor - 1e-9); k*minor <= hi*(1+1e-12); k++ {
		v := k * minor
		if v == 0 {
			v = 0 // no "-0" label
		}
		tk := plot.Tick{Value: v * t.scale}
		if r := v / step; math.Abs(r-math.Round(r)) < 1e-6 {
			tk.Label = strconv.FormatFloat(v, 'f', prec, 64)
		}
		ts = append(ts, tk)
	}
	return ts
}

// logTicks labels decades with SI prefixes (1, 10, 100, 1k, ...) and, when
// the axis spans fewer than three decades, the 2 and 5 of each decade too,
// so that a short log axis still carries several labels.
type logTicks struct{}

func (logTicks) Ticks(min, max float64) []plot.Tick {
	if !(min > 0) || !(max > min) {
		return nil
	}
	lo := math.Floor(math.Log10(min))
	hi := math.Ceil(math.Log10(max))
	dense := hi-lo <= 3
	var ts []plot.Tick
	for e := lo; e <= hi; e++ {
		dec := math.Pow(10, e)
		for m := 1; m <= 9; m++ {
			v := float64(m) * dec
			if v < min*(1-1e-9) || v > max*(1+1e-9) {
				continue
			}
			t := plot.Tick{Value: v}
			if m == 1 || (dense && (m == 2 || m == 5)) {
				t.Label = siLabel(v)
			}
			ts = append(ts, t)
		}
	}
	return ts
}

// siLabel formats v compactly with an SI prefix: 2500 -> "2.5k".
func siLabel(v float64) string {
	a := math.Abs(v)
	switch {
	case a >= 1e9:
		return trimFloat(v/1e9) + "G"
	case a >= 1e6:
		return trimFloat(v/1e6) + "M"
	case a >= 1e3:
		return trimFloat(v/1e3) + "k"
	}
	return trimFloat(v)
}

// trimFloat formats v with at most 3 significant digits and no trailing
// zeros.
func trimFloat(v float64) string {
	return strconv.FormatFloat(v, 'g', 3, 64)
}

// amount formats a cost figure for a label: 3 significant digits with an SI
// prefix, integers below 1000 shown whole.
func amount(v float64) string {
	if v == math.Trunc(v) && math.Abs(v) < 1000 {
		return strconv.FormatFloat(v, 'f', 0, 64)
	}
	return siLabel(v)
}

// axisKind decides between a linear and a log axis for the given values,
// and returns the padded axis range.
func axisRange(vals []float64) (min, max float64, log bool) {
	min, max = math.Inf(1), math.Inf(-1)
	for _, v := range vals {
		min = math.Min(min, v)
		max = math.Max(max, v)
	}
	if min > 0 && max/min > logThreshold {
		// Pad by 8% of the span in log terms.
		r := math.Pow(max/min, 0.08)
		return min / r, max * r, true
	}
	span := max - min
	if span == 0 {
		span = math.Max(math.Abs(max), 1)
	}
	lo := min - 0.08*span
	if min >= 0 && lo < 0 {
		lo = 0 // costs cannot be negative
	}
	return lo, max + 0.08*span, false
}
