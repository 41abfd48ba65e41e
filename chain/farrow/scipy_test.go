package farrow

import (
	"encoding/json"
	"math"
	"os"
	"testing"
)

// TestResponseSciPy holds Response to SciPy's adaptive quadrature for
// oscillatory integrands (scipy.integrate.quad, weight 'cos' and 'sin',
// QUADPACK's QAWO), made by testdata/gen_response_scipy.py for two invented
// filters at nu from 0 to about 1e5. The script's hand-written Lagrange
// table must also equal the one derived here from the Lagrange formula.
func TestResponseSciPy(t *testing.T) {
	raw, err := os.ReadFile("testdata/response_scipy.json")
	if err != nil {
		t.Fatal(err)
	}
	var ref struct {
		Filters []struct {
			Name     string
			Coef     [][]float64
			Response []struct{ Nu, Re, Im float64 }
		}
	}
	if err := json.Unmarshal(raw, &ref); err != nil {
		t.Fatal(err)
	}
	if len(ref.Filters) != 2 {
		t.Fatalf("%d filters in the reference, want 2", len(ref.Filters))
	}
	lag := lagrangeCubic()
	for i, row := range ref.Filters[0].Coef {
		for j, v := range row {
			if math.Abs(v-lag.Coef[i][j]) > 1e-15 {
				t.Errorf("Lagrange table [%d][%d]: script %v, derived %v", i, j, v, lag.Coef[i][j])
			}
		}
	}
	worst := 0.0
	for _, fl := range ref.Filters {
		f := Filter{Coef: fl.Coef}
		if err := f.Validate(); err != nil {
			t.Fatalf("%s: %v", fl.Name, err)
		}
		for _, r := range fl.Response {
			e := cabsDiff(f.Response(r.Nu), complex(r.Re, r.Im)) / absSum(f)
			worst = math.Max(worst, e)
			if e > 1e-10 {
				t.Errorf("%s: H(%v) = %v, SciPy %v", fl.Name, r.Nu, f.Response(r.Nu), complex(r.Re, r.Im))
			}
		}
	}
	t.Logf("largest difference from SciPy: %.2g of the coefficients' absolute sum", worst)
}
