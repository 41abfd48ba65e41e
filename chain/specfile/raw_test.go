package specfile

import (
	"runtime"
	"strings"
	"testing"
)

// pathological returns the files issue 17 reported and their relatives: each
// must be refused by the raw check, before the decoder sees it.
func pathological() []struct{ name, text, want string } {
	nest := func(bytes int, open, close string) string {
		n := (bytes - 20) / (len(open) + len(close))
		return "input_rate = " + strings.Repeat(open, n) + "1" + strings.Repeat(close, n) + "\n"
	}
	var keys, elems, aot strings.Builder
	for i := 0; i < 300; i++ {
		keys.WriteString("k" + strings.Repeat("x", i) + " = 1\n")
		aot.WriteString("[[a]]\n")
	}
	elems.WriteString("[search]\ncic_orders = [" + strings.Repeat("1, ", 300) + "1]\n")
	return []struct{ name, text, want string }{
		{"16 KB nested inline tables", nest(16<<10, "{a=", "}"), "nested deeper than 4"},
		{"40 KB nested inline tables", nest(40<<10, "{a=", "}"), "nested deeper than 4"},
		{"40 KB nested arrays", nest(40<<10, "[", "]"), "nested deeper than 4"},
		{"60 KB nested arrays over lines", nest(60<<10, "[\n", "\n]"), "nested deeper than 4"},
		{"dotted key", strings.Repeat("a.", 4000) + "a = 1\n", "nested deeper than 4"},
		{"dotted header", "[" + strings.Repeat("a.", 4000) + "a]\n", "nested deeper than 4"},
		{"dotted keys in inline tables", "x = {" + strings.Repeat("a.", 3) + "a = {b.c = 1}}\n", "nested deeper than 4"},
		{"hidden after a comment", "x = { # c\n a.b.c.d.e = 1 }\n", "nested deeper than 4"},
		{"nested array of tables", "[[a]]\n[[a.b]]\n[[a.b.c]]\nx = 1\n", "nested deeper than 4"},
		{"many keys", keys.String(), "more than 256 keys, values and tables"},
		{"many elements", elems.String(), "more than 256 keys, values and tables"},
		{"many tables", aot.String(), "more than 256 keys, values and tables"},
		{"over the size limit", minimal + "#" + strings.Repeat("x", MaxFileSize) + "\n", "over the 64 KiB limit"},
	}
}

func TestRawLimits(t *testing.T) {
	for _, tc := range pathological() {
		t.Run(tc.name, func(t *testing.T) {
			var before, after runtime.MemStats
			runtime.ReadMemStats(&before)
			_, err := Parse("spec.toml", []byte(tc.text))
			runtime.ReadMemStats(&after)
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Fatalf("Parse = %v, want an error containing %q", err, tc.want)
			}
			if msg := err.Error(); strings.Contains(msg, "\n") || len(msg) > 200 {
				t.Errorf("error is not one short line: %q", msg)
			}
			// Refused from the raw text: the decoder took 0.9 GB on the
			// 16 KB file. Allocation is counted, not timed.
			if n := after.TotalAlloc - before.TotalAlloc; n > 1<<20 {
				t.Errorf("refusing it allocated %d bytes, want under 1 MiB", n)
			}
		})
	}
}

// The limits sit where the README says, and what TOML keeps in strings and
// comments counts for nothing.
func TestRawAccepts(t *testing.T) {
	for _, text := range []string{
		"x = [[[[1]]]]\n",
		"a.b.c.d.e = 1\n",
		"[a.b.c.d]\nx = 1\n",
		"x = {a.b.c = {d = 1}}\n",
		"x = [{a = [[1]]}]\n",
		"[[a]]\n[[a.b]]\nx = 1\n",
		"x = \"[[[[[[{{{{{{,,,,\" # [[[[[[[[{{{{{{{{\n",
		"x = '[[[[[[[[[[' # ,,,,\ny = \"\\\"[[[[[[[[\\\" \"\n",
		"x = \"\"\"\n[[[[[[[[[\n{{{{{{{{{{\n\"\"\"\n",
		"x = '''\n[[[[[[[[[[\n'''\n",
		"x = \"\"\"a\"\"\"\"\"\ny = 1\n",
		"\"a.b.c.d.e.f\" = 1\n'[[[[[[' = 2\n",
		"# " + strings.Repeat("[{,=", 1000) + "\n" + minimal,
		"x = [\n  1, # [[[[[[[[ ,,,,\n  2,\n]\n",
		"x = { a = 1, b = [1, 2], }\n",
		ExampleText,
		full,
	} {
		if err := checkRaw("spec.toml", []byte(text)); err != nil {
			t.Errorf("checkRaw(%q) = %v, want nil", text, err)
		}
	}
	for _, text := range []string{"x = [[[[[1]]]]]\n", "a.b.c.d.e.f = 1\n", "[a.b.c.d.e]\n", "x = {a.b.c = {d.e = 1}}\n"} {
		if err := checkRaw("spec.toml", []byte(text)); err == nil || !strings.Contains(err.Error(), "nested deeper than 4") {
			t.Errorf("checkRaw(%q) = %v, want the depth limit", text, err)
		}
	}
	if _, err := Parse("spec.toml", []byte("# [[[[[[[[[[ {{{{{{ ,,,,,,\n"+minimal)); err != nil {
		t.Errorf("a spec with brackets in a comment: %v", err)
	}
}

// decodedDepth is the deepest nesting of tables and arrays in a decoded
// value, counted as checkRaw counts it (a top-level value is at depth 0).
func decodedDepth(v any, d int) int {
	deepest := d
	switch x := v.(type) {
	case map[string]any:
		for _, e := range x {
			deepest = max(deepest, decodedDepth(e, d+1))
		}
	case []map[string]any:
		for _, e := range x {
			deepest = max(deepest, decodedDepth(e, d+1))
		}
	case []any:
		for _, e := range x {
			deepest = max(deepest, decodedDepth(e, d+1))
		}
	}
	return deepest
}

func BenchmarkParseRefused(b *testing.B) {
	for _, tc := range pathological() {
		b.Run(strings.ReplaceAll(tc.name, " ", "_"), func(b *testing.B) {
			b.ReportAllocs()
			data := []byte(tc.text)
			for i := 0; i < b.N; i++ {
				if _, err := Parse("bench.toml", data); err == nil {
					b.Fatal("accepted")
				}
			}
		})
	}
}
