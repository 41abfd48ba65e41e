package report

import (
	"bytes"
	"context"
	"encoding/json"
	"strings"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain/fixed"
	"github.com/stepdown-dsp/stepdown/chain/fixed/mcm"
	"github.com/stepdown-dsp/stepdown/chain/specfile"
	"github.com/stepdown-dsp/stepdown/optimize"
)

// A multiplierless plan of the built-in example (its 18-bit coefficients,
// no unity-gain correction): every front chain's adders in report.json are
// the figure the search ranked it by, stage by stage; every FIR and
// half-band stage's coefficients_int are reproduced exactly by the graph
// built on them (mcm.Eval, checked here apart from the report's own
// check) with the reported adders, never more than plain CSD; the tables
// say adders.
func TestMultiplierlessReport(t *testing.T) {
	text := strings.Replace(specfile.ExampleText, "[hardware]\n", "[hardware]\nmultiplierless = true\n", 1)
	text = strings.Replace(text, "max_stages = 5", "max_stages = 3", 1)
	s, err := specfile.Parse("ml.toml", []byte(text))
	if err != nil {
		t.Fatal(err)
	}
	res, err := optimize.Plan(context.Background(), s.Chain, s.SearchSettings())
	if err != nil {
		t.Fatal(err)
	}
	rep, err := New("plan", s, res)
	if err != nil {
		t.Fatal(err)
	}
	if len(rep.Front) == 0 || !rep.Spec.Hardware.Multiplierless {
		t.Fatalf("front %d, multiplierless %v", len(rep.Front), rep.Spec.Hardware.Multiplierless)
	}
	var graph, csd int
	for i, ch := range rep.Front {
		f := res.Front[i].Figures
		if ch.Adders == nil || *ch.Adders != f.Adders {
			t.Errorf("%s: report adders %d, search %d", ch.Notation, deref(ch.Adders), f.Adders)
		}
		for k, st := range ch.Stages {
			if st.Adders == nil || *st.Adders != f.Stages[k].Adders {
				t.Errorf("%s stage %d: adders %d (%d + %d), search %d (%d + %d)", ch.Notation, k+1, deref(st.Adders), deref(st.CoefficientAdders), deref(st.StructuralAdders), f.Stages[k].Adders, f.Stages[k].CoefficientAdders, f.Stages[k].StructuralAdders)
			}
			if st.Kind == "cic" {
				continue
			}
			ints := st.CoefficientsInt
			g, err := mcm.Build(ints)
			if err != nil {
				t.Fatal(err)
			}
			for _, x := range []int64{1, -1, 1 << 20, -77} {
				p, err := g.Eval(x)
				if err != nil {
					t.Fatal(err)
				}
				for j, c := range ints {
					if p[j] != c*x {
						t.Fatalf("%s stage %d: Eval(%d)[%d] = %d, want %d", ch.Notation, k+1, x, j, p[j], c*x)
					}
				}
			}
			if *st.CoefficientAdders != g.Adders() || g.Adders() > mcm.CSDAdders(ints) {
				t.Errorf("%s stage %d: coefficient_adders %d, graph %d, CSD %d", ch.Notation, k+1, *st.CoefficientAdders, g.Adders(), mcm.CSDAdders(ints))
			}
			graph += g.Adders()
			csd += mcm.CSDAdders(ints)
		}
		if ch.Resources != nil && ch.Resources.Multipliers != 0 {
			t.Errorf("%s: %d multipliers in the resources", ch.Notation, ch.Resources.Multipliers)
		}
	}
	t.Logf("front stages: graphs %d adders, plain CSD %d (%.1f%% fewer)", graph, csd, 100*(1-float64(graph)/float64(csd)))
	var b bytes.Buffer
	WriteTable(&b, rep)
	WriteResources(&b, rep)
	for _, frag := range []string{"adders  adds/out", "graph adders", "tap adders", "multiplierless"} {
		if !strings.Contains(b.String(), frag) {
			t.Errorf("tables lack %q:\n%s", frag, b.String())
		}
	}
	if strings.Contains(b.String(), "mult/out") {
		t.Errorf("table still says mult/out:\n%s", b.String())
	}
	js, err := rep.Marshal()
	if err != nil {
		t.Fatal(err)
	}
	var back map[string]any
	if err := json.Unmarshal(js, &back); err != nil {
		t.Fatal(err)
	}
	for _, key := range []string{`"coefficient_adders"`, `"structural_adders"`, `"adders"`, `"multiplierless": true`} {
		if !bytes.Contains(js, []byte(key)) {
			t.Errorf("report.json lacks %s", key)
		}
	}
}

// AddAdders errors, naming the chain and stage, rather than count a
// graph it cannot build (a coefficient wider than mcm takes).
func TestAddAddersRefuses(t *testing.T) {
	s, err := specfile.Example()
	if err != nil {
		t.Fatal(err)
	}
	s.Multiplierless = true
	c := Chain{Notation: "fir64", Stages: []Stage{{Kind: "fir", InputRateHz: 1e6,
		StageReport: &fixed.StageReport{CoefficientsInt: []int64{1 << 62, 3}}}}}
	if err := AddAdders(&c, s); err == nil || !strings.Contains(err.Error(), "stage 1") {
		t.Errorf("AddAdders: %v", err)
	}
}

func deref(p *int) int {
	if p == nil {
		return -1
	}
	return *p
}

// AddAdders keeps a non-recursive CIC's adders as cost priced them on its
// sub-stages (here 9, as set), and counts a recursive CIC's integrators
// and combs: order 3 at one lane, 3 + 3 (Hogenauer's structure).
func TestAddAddersCICForms(t *testing.T) {
	s, err := specfile.Example()
	if err != nil {
		t.Fatal(err)
	}
	s.Multiplierless, s.Signal, s.Clock = true, "real", 0
	nine := 9
	c := Chain{Notation: "cic3m1r4nr > cic3m1r4", Stages: []Stage{
		{Kind: "cic", CICOrder: 3, CICForm: "nonrecursive", InputRateHz: 1e6, Adders: &nine},
		{Kind: "cic", CICOrder: 3, CICForm: "recursive", InputRateHz: 25e4},
	}}
	if err := AddAdders(&c, s); err != nil {
		t.Fatal(err)
	}
	if *c.Stages[0].Adders != 9 || *c.Stages[1].Adders != 6 || *c.Adders != 15 {
		t.Errorf("adders %d, %d, chain %d; want 9, 6, 15", *c.Stages[0].Adders, *c.Stages[1].Adders, *c.Adders)
	}
}
