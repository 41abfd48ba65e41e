package optimize_test

import (
	"context"
	"fmt"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"
	"time"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/specfile"
	"github.com/stepdown-dsp/stepdown/optimize"
)

// TestExhaustiveCompare is a measurement, not a check: for each spec file
// matching STEPDOWN_EXHAUSTIVE (a glob), it plans the spec with the
// two-tier search and with Settings.Exhaustive (every feasible candidate
// designed for real; given up after 60 s), both without design caps, and
// prints the fronts' sizes, the designs, and the exhaustive front's chains
// missing from the two-tier front. testdata/optimize/exhaustive_compare.sh
// runs it on the invented specs of front_specs.py.
func TestExhaustiveCompare(t *testing.T) {
	glob := os.Getenv("STEPDOWN_EXHAUSTIVE")
	if glob == "" {
		t.Skip("a measurement: STEPDOWN_EXHAUSTIVE=GLOB (testdata/optimize/exhaustive_compare.sh)")
	}
	files, err := filepath.Glob(glob)
	if err != nil {
		t.Fatal(err)
	}
	sort.Strings(files)
	for _, f := range files {
		name := strings.TrimSuffix(filepath.Base(f), ".toml")
		sp, err := specfile.Load(f)
		if err != nil {
			t.Fatal(err)
		}
		s := sp.SearchSettings()
		s.MaxDesigns, s.MaxWork = 1<<20, 1e15
		two, err := optimize.Plan(context.Background(), sp.Chain, s)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		s.Exhaustive = true
		ctx, cancel := context.WithTimeout(context.Background(), 60*time.Second)
		all, err := optimize.Plan(ctx, sp.Chain, s)
		cancel()
		if err != nil || all.Partial {
			fmt.Printf("%-14s exhaustive search unfinished in 60 s\n", name)
			continue
		}
		on := map[string]bool{}
		for _, c := range two.Front {
			on[chain.Notation(c.Plan)] = true
		}
		var miss []string
		for _, c := range all.Front {
			if !on[chain.Notation(c.Plan)] {
				miss = append(miss, chain.Notation(c.Plan))
			}
		}
		fmt.Printf("%-14s D = %-5d two-tier front %3d (%4d designs), exhaustive %3d (%6d designs); missing %d: %s\n",
			name, sp.Chain.Decimation(), len(two.Front), two.Designed, len(all.Front), all.Designed, len(miss), strings.Join(miss, ", "))
	}
}
