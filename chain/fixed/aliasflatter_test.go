package fixed

import (
	"testing"
)

// A bit-true alias figure stands for its band only when it is no better
// than the rounded taps' response at the tone by more than the noise in
// its bin can explain (noise rho = 10^(-m/20) times the measured alias, m
// dB below it, can have shrunk a true alias of at most 1 + rho times the
// measured one: the triangle inequality, common practice) and the 0.1 dB
// measurement slack. Worse figures are the safe side and stand.
func TestAliasFlattered(t *testing.T) {
	for _, c := range []struct {
		name           string
		bt, resp, nois float64
		want           bool
	}{
		{"agrees", 90.05, 90.0, 130, false},
		{"worse by the noise", 89.2, 90.0, 115, false},
		{"worse beyond the noise", 84.07, 84.93, 109.07, false},
		// 20 dB of margin allows 0.828 dB, plus 0.1 of slack.
		{"inside noise and slack", 100.92, 100.0, 120.92, false},
		{"just past noise and slack", 100.94, 100.0, 120.94, true},
		// A review's case: 104.5 dB bit-true against a 100.16 dB
		// response, the noise 22 dB below the alias.
		{"four dB better", 104.5, 100.16, 126.5, true},
		// The noise rule, not this one, refuses an alias the noise masks.
		{"noise above the alias", 90, 90, 80, false},
	} {
		res := &BitTrueResult{AliasRejectionDB: c.bt, AliasResponseDB: c.resp, AliasNoiseDB: c.nois}
		if got := aliasFlattered(res); got != c.want {
			t.Errorf("%s: bit-true %.2f dB, response %.2f dB, noise %.2f dB: flattered %v, want %v", c.name, c.bt, c.resp, c.nois, got, c.want)
		}
	}
}

// On real runs (TestInputMemoSameResults' 40 seeded random cascades and
// signals, short windows among them) no alias figure marked valid lies
// above the rounded taps' response at its tone (computed in the frequency
// domain, apart from the run) by more than its bin's noise and the slack
// explain, and the rule does mark some runs.
func TestAliasFlatteredRuns(t *testing.T) {
	flagged := 0
	for k, rc := range memoRunCases(t) {
		r, err := BitTrue(rc.c, rc.w, rc.sig)
		if err != nil {
			t.Fatalf("case %d: %v", k, err)
		}
		m := r.AliasNoiseDB - r.AliasRejectionDB
		allow := aliasAllowanceDB(&r) // its values: TestAliasFlattered's table
		over := r.AliasRejectionDB - r.AliasResponseDB
		if r.AliasValid && over > allow {
			t.Errorf("case %d: valid alias figure %.3f dB, %.3f dB above the response (%.3f allowed)", k, r.AliasRejectionDB, over, allow)
		}
		if m >= 20 && over > allow {
			flagged++
		}
	}
	if flagged == 0 {
		t.Error("no run's alias figure lay above its response by more than the noise explains: the rule is not exercised")
	}
	t.Logf("%d of 40 runs flattered", flagged)
}
