package report

import (
	"encoding/json"
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestJSONShapeAgainstDecoder counts the containers and commas of random
// JSON documents (strings full of brackets, quotes, commas and escapes),
// written by encoding/json, against a walk of what encoding/json decodes.
func TestJSONShapeAgainstDecoder(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 9))
	const tricky = `{}[],"\:ab`
	var gen func(depth int) any
	gen = func(depth int) any {
		switch k := rng.IntN(6); {
		case depth > 4 || k == 0:
			return rng.Float64()
		case k == 1:
			var sb strings.Builder
			for range rng.IntN(12) {
				sb.WriteByte(tricky[rng.IntN(len(tricky))])
			}
			return sb.String()
		case k <= 3:
			a := make([]any, rng.IntN(5))
			for i := range a {
				a[i] = gen(depth + 1)
			}
			return a
		default:
			m := map[string]any{}
			for i := range rng.IntN(5) {
				m[fmt.Sprintf("k%d%c", i, tricky[rng.IntN(len(tricky))])] = gen(depth + 1)
			}
			return m
		}
	}
	var walk func(v any) (c, n int)
	walk = func(v any) (c, n int) {
		switch v := v.(type) {
		case []any:
			c, n = 1, max(len(v)-1, 0)
			for _, e := range v {
				ce, ne := walk(e)
				c, n = c+ce, n+ne
			}
		case map[string]any:
			c, n = 1, max(len(v)-1, 0)
			for _, e := range v {
				ce, ne := walk(e)
				c, n = c+ce, n+ne
			}
		}
		return c, n
	}
	for i := range 2000 {
		v := gen(0)
		b, err := json.Marshal(v)
		if err != nil {
			t.Fatal(err)
		}
		var back any
		if err := json.Unmarshal(b, &back); err != nil {
			t.Fatal(err)
		}
		wc, wn := walk(back)
		if c, n := jsonShape(b); c != wc || n != wn {
			t.Fatalf("case %d %s: shape %d, %d, want %d, %d", i, b, c, n, wc, wn)
		}
	}
}

// A --front whose front holds 300000 empty objects (under a MB, and a
// decode of hundreds of MB) is refused before it is decoded.
func TestReadComparisonRefusesShape(t *testing.T) {
	path := filepath.Join(t.TempDir(), "report.json")
	body := `{"schema":"` + Schema + `","command":"plan","front":[` + strings.Repeat("{},", 300000) + `{}]}`
	if err := os.WriteFile(path, []byte(body), 0o644); err != nil {
		t.Fatal(err)
	}
	_, err := ReadComparison(path, nil)
	if err == nil || !strings.Contains(err.Error(), "more than a plan's report.json holds") {
		t.Errorf("got %v, want a refusal of the shape", err)
	}
}
