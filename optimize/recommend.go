package optimize

import (
	"fmt"
	"math"

	"github.com/stepdown-dsp/stepdown/chain"
)

// normalised returns each front point's figures divided by the front's best
// on that axis, with the axis floors added to both so a zero best stays
// finite. Every value is at least 1.
func normalised(fs []figs) [][3]float64 {
	best := [3]float64{math.Inf(1), math.Inf(1), math.Inf(1)}
	for i := range fs {
		x := fs[i].axes()
		for j := range x {
			best[j] = math.Min(best[j], x[j])
		}
	}
	out := make([][3]float64, len(fs))
	for i := range fs {
		x := fs[i].axes()
		for j := range x {
			out[i][j] = (x[j] + axisFloor[j]) / (best[j] + axisFloor[j])
		}
	}
	return out
}

// recommend picks one point of a front sorted by multiplies and says why.
// It returns -1 and an empty reason for an empty front.
// interp says the counts are per input sample (an interpolation chain's).
func recommend(fs []figs, s *Settings, interp bool) (int, string) {
	if len(fs) == 0 {
		return -1, ""
	}
	what := s.axisName()
	if len(fs) == 1 {
		return 0, "It is the only chain on the front, so it is the best on " + what + ", memory and latency at once."
	}
	u := normalised(fs)
	switch s.Rule {
	case WeightedCost:
		w := s.weights()
		best, second := -1, -1
		cost := make([]float64, len(fs))
		for i := range u {
			cost[i] = w[0]*u[i][0] + w[1]*u[i][1] + w[2]*u[i][2]
			switch {
			case best < 0 || cost[i] < cost[best]:
				best, second = i, best
			case second < 0 || cost[i] < cost[second]:
				second = i
			}
		}
		return best, fmt.Sprintf("Chosen for the least weighted cost (weights %g, %g and %g on %s, memory bits and latency, each relative to the front's best): %.3f against %.3f for the next chain.",
			w[0], w[1], w[2], what, cost[best], cost[second])
	default:
		best := 0
		dist := make([]float64, len(fs))
		for i := range u {
			dist[i] = math.Hypot(math.Hypot(u[i][0]-1, u[i][1]-1), u[i][2]-1)
			if dist[i] < dist[best] {
				best = i
			}
		}
		return best, kneeReason(fs, u, best, what, interp)
	}
}

// axisName names the front's cost axis: "multiplies", or "adders" when
// the chains are priced multiplierless.
func (s *Settings) axisName() string {
	if s.Cost.Multiplierless {
		return "adders"
	}
	return "multiplies"
}

func (s *Settings) weights() [3]float64 {
	w := [3]float64{s.WeightMultiplies, s.WeightMemory, s.WeightLatency}
	for i := range w {
		if w[i] == 0 {
			w[i] = 1
		}
	}
	return w
}

// kneeReason compares the knee with the chain of fewest multiplies (the
// front's first point); what names the cost axis ("multiplies" or
// "adders").
func kneeReason(fs []figs, u [][3]float64, k int, what string, interp bool) string {
	lead := "Chosen as the knee of the front, the chain nearest the ideal of the fewest " + what + ", least memory and least latency at once"
	if k == 0 {
		near := func(u float64, what string) string {
			switch {
			case u-1 < 0.005:
				return "has the least " + what
			case u >= 1.5:
				return fmt.Sprintf("has %.1f times the least %s", u, what)
			}
			return fmt.Sprintf("is within %.0f%% of the least %s", math.Floor(100*(u-1)+0.5+1e-9), what)
		}
		fewest := "the fewest multiplies per output"
		if interp {
			fewest = "the fewest multiplies per input"
		}
		if what == "adders" {
			fewest = "the fewest adders"
		}
		return fmt.Sprintf("%s: it has %s, %s and %s on the front.",
			lead, fewest, near(u[0][1], "memory"), near(u[0][2], "latency"))
	}
	c, x := fs[0], fs[k]
	mult := change(x.mpo, c.mpo, "more", "fewer") + " " + what + " than the cheapest chain"
	if mult == "the same "+what+" than the cheapest chain" {
		mult = "as few " + what + " as the cheapest chain"
	}
	return fmt.Sprintf("%s: %s, for %s memory and %s latency.",
		lead, mult, change(x.bits, c.bits, "more", "less"), change(x.lat, c.lat, "more", "less"))
}

// change says how a compares with b in percent.
func change(a, b float64, more, less string) string {
	if b <= 0 {
		if a <= 0 {
			return "the same"
		}
		return "some " + more
	}
	r := a/b - 1
	switch {
	case math.Abs(r) < 0.005:
		return "the same"
	case r > 0:
		// A tie rounds against the chain: 12.5% more is 13% more (fmt
		// would round it to the even 12), 14.5% less is 14% less; within
		// 1e-9 of a half is a tie (171/200 - 1 is not -0.145 exactly).
		return fmt.Sprintf("%.0f%% %s", math.Floor(100*r+0.5+1e-9), more)
	default:
		return fmt.Sprintf("%.0f%% %s", math.Ceil(-100*r-0.5-1e-9), less)
	}
}

// WithChains returns a copy of res whose front also holds cs: chains
// designed and measured elsewhere (Candidate.Chain set) that meet res's
// spec, such as the front of a stricter spec's search in a sweep, their
// MarginDB over this spec's target. The front is taken again over both,
// the recommendation made again by s's rule (Result.Reason is the new
// recommendation's), and the rest of res kept. res is not changed.
func WithChains(res *Result, cs []Candidate, s Settings) *Result {
	out := *res
	all := append(append([]Candidate(nil), res.Front...), cs...)
	out.Front = designedFront(all)
	fs := make([]figs, len(out.Front))
	interp := false
	for i := range out.Front {
		fs[i] = candFigs(&out.Front[i])
		interp = interp || out.Front[i].Chain != nil && out.Front[i].Chain.Direction == chain.Interpolate
	}
	out.Recommended, out.Reason = recommend(fs, &s, interp)
	return &out
}
