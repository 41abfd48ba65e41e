package sweep

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"flag"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"testing"

	"github.com/stepdown-dsp/stepdown/chain/specfile"
)

var update = flag.Bool("update", false, "rewrite testdata/onekey from the current code")

func TestFormatKeys(t *testing.T) {
	tests := []struct {
		key  string
		v    float64
		want string
		unit string
	}{
		{"decimation", 64, "64", ""},
		{"max_stages", 1, "1 stage", "stages"},
		{"max_stages", 3, "3 stages", "stages"},
		{"input_bits", 12, "12 bits", "bits"},
		{"stopband", 1.28e6, "1.28 MHz", "Hz"},
		{"output_rate", 1.92e6, "1.92 MHz", "Hz"},
	}
	for _, tc := range tests {
		k, ok := LookupKey(tc.key)
		if !ok {
			t.Errorf("%s: not a key", tc.key)
			continue
		}
		if got := k.Format(tc.v); got != tc.want {
			t.Errorf("%s: Format(%v) = %q, want %q", tc.key, tc.v, got, tc.want)
		}
		if got := k.Unit(); got != tc.unit {
			t.Errorf("%s: Unit() = %q, want %q", tc.key, got, tc.unit)
		}
	}
}

// defaultsSpec is an invented scenario: a 96 MS/s sampler down to 3 MS/s,
// with the protected and stopband edges left to their defaults.
const defaultsSpec = `input_rate  = "96 MHz"
output_rate = "3 MHz"
passband    = "1 MHz"
ripple      = "0.1 dB"
rejection   = "70 dB"
`

// The spec is rewritten, not its parsed values: edges the spec leaves to
// their defaults (protected = passband, stopband = output_rate - protected)
// follow each swept value, and edges it sets stay and make values invalid.
func TestDefaultsFollow(t *testing.T) {
	key := func(n string) Key {
		k, ok := LookupKey(n)
		if !ok {
			t.Fatalf("no key %s", n)
		}
		return k
	}
	withProtected := strings.Replace(defaultsSpec, "ripple", "protected   = \"1.1 MHz\"\nripple", 1)
	withStopband := strings.Replace(defaultsSpec, "ripple", "stopband    = \"1.9 MHz\"\nripple", 1)
	tests := []struct {
		name        string
		spec        string
		sets        []Setting
		out, fa, fs float64 // want, in Hz
		errKey      string  // want an error naming this key instead
	}{
		{"passband, defaults", defaultsSpec, []Setting{{key("passband"), 0.8e6}}, 3e6, 0.8e6, 2.2e6, ""},
		{"passband 1.2 MHz, defaults", defaultsSpec, []Setting{{key("passband"), 1.2e6}}, 3e6, 1.2e6, 1.8e6, ""},
		{"output_rate, defaults", defaultsSpec, []Setting{{key("output_rate"), 6e6}}, 6e6, 1e6, 5e6, ""},
		{"decimation 24, defaults", defaultsSpec, []Setting{{key("decimation"), 24}}, 4e6, 1e6, 3e6, ""},
		{"protected, stopband default", defaultsSpec, []Setting{{key("protected"), 1.2e6}}, 3e6, 1.2e6, 1.8e6, ""},
		{"stopband", defaultsSpec, []Setting{{key("stopband"), 1.5e6}}, 3e6, 1e6, 1.5e6, ""},
		{"decimation, input_rate a TOML integer", strings.Replace(defaultsSpec, `"96 MHz"`, "96000000", 1), []Setting{{key("decimation"), 16}}, 6e6, 1e6, 5e6, ""},
		{"decimation, input_rate a TOML float", strings.Replace(defaultsSpec, `"96 MHz"`, "96e6", 1), []Setting{{key("decimation"), 24}}, 4e6, 1e6, 3e6, ""},
		{"input_rate then decimation", defaultsSpec, []Setting{{key("decimation"), 32}, {key("input_rate"), 192e6}}, 6e6, 1e6, 5e6, ""},
		{"passband below a set protected", withProtected, []Setting{{key("passband"), 0.9e6}}, 3e6, 1.1e6, 1.9e6, ""},
		{"passband above a set protected", withProtected, []Setting{{key("passband"), 1.2e6}}, 0, 0, 0, "protected"},
		{"passband 1.2 MHz with a set stopband", withStopband, []Setting{{key("passband"), 1.2e6}}, 0, 0, 0, "stopband"},
		{"decimation 64 under the passband", defaultsSpec, []Setting{{key("decimation"), 64}}, 0, 0, 0, "passband"},
		{"output_rate the input rate", defaultsSpec, []Setting{{key("output_rate"), 96e6}}, 0, 0, 0, "output_rate"},
	}
	for _, tc := range tests {
		s, err := SpecWith("invented.toml", []byte(tc.spec), tc.sets...)
		if tc.errKey != "" {
			var se *specfile.Error
			if !errors.As(err, &se) || se.Key != tc.errKey || se.Rule == "" {
				t.Errorf("%s: err %v, want a spec error naming %s", tc.name, err, tc.errKey)
			}
			continue
		}
		if err != nil {
			t.Errorf("%s: %v", tc.name, err)
			continue
		}
		c := s.Chain
		if !near(c.OutputRate, tc.out) || c.Protected != tc.fa || !near(c.Stopband, tc.fs) {
			t.Errorf("%s: output %v, protected %v, stopband %v; want %v, %v, %v", tc.name, c.OutputRate, c.Protected, c.Stopband, tc.out, tc.fa, tc.fs)
		}
	}
}

func near(a, b float64) bool { return a == b || (a-b)*(a-b) <= 1e-18*b*b }

func TestRunDescending(t *testing.T) {
	rs, _ := study(t, "rejection=100:80:5", 2)
	want := []float64{100, 95, 90, 85, 80}
	wantChanged := []bool{false, false, true, false, false} // 90 dB is the first at or below 90 dB
	changed := Changes(rs)
	if len(rs) != len(want) {
		t.Fatalf("%d results", len(rs))
	}
	for i, r := range rs {
		if r.Value != want[i] || r.Status != OK || changed[i] != wantChanged[i] {
			t.Errorf("result %d: value %v status %s changed %v; want %v ok %v", i, r.Value, r.Status, changed[i], want[i], wantChanged[i])
		}
	}
	// The figure reads left to right whatever the order swept: the same
	// picture as the upward sweep.
	up, vu := study(t, "rejection=80:100:5", 2)
	_, vd := study(t, "rejection=100:80:5", 2)
	var a, b bytes.Buffer
	if err := Render(&a, NewFigureData("t", vu, up), "svg"); err != nil {
		t.Fatal(err)
	}
	if err := Render(&b, NewFigureData("t", vd, rs), "svg"); err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(a.Bytes(), b.Bytes()) {
		t.Error("the downward sweep's figure differs from the upward one's")
	}
}

// One key writes the same bytes as before grids and the new keys came:
// testdata/onekey holds the files the code wrote then, with fakePlan.
func TestOneKeyGolden(t *testing.T) {
	for name, arg := range map[string]string{
		"rejection":   "rejection=85:145:20",                    // ok rows, a change, an infeasible row
		"output_rate": "output_rate=0.96 MHz:2.88 MHz:0.96 MHz", // an invalid row, an ok one, an infeasible fractional one
	} {
		rs, v := study(t, arg, 2)
		base, _ := specfile.Example()
		files, _, err := Files("built-in example", base, v, rs)
		if err != nil {
			t.Fatal(err)
		}
		for _, f := range files {
			if f.Name != "report.json" && f.Name != "sweep.csv" && f.Name != "sweep.svg" {
				continue
			}
			path := filepath.Join("testdata", "onekey", name, f.Name)
			if *update {
				if err := os.WriteFile(path, f.Data, 0o644); err != nil {
					t.Fatal(err)
				}
				continue
			}
			want, err := os.ReadFile(path)
			if err != nil {
				t.Fatal(err)
			}
			if !bytes.Equal(f.Data, want) {
				t.Errorf("%s: %s differs from %s", arg, f.Name, path)
			}
		}
	}
}

func TestNewGridErrors(t *testing.T) {
	tests := []struct{ rows, cols, want string }{
		{"rejection=80:90:5", "rejection=60:70:5", "rejection is already the first --vary"},
		{"output_rate=1.92:3.84:0.64 MHz", "decimation=32:64:32", "output_rate and decimation both set output_rate"},
		{"decimation=32:64:32", "output_rate=1.92:3.84:0.64 MHz", "decimation and output_rate both set output_rate"},
		{"rejection=60:100:2", "ripple=0.1:0.8:0.1", "21 x 8 = 168 cells, over the limit of 150"},
	}
	for _, tc := range tests {
		r, err := ParseVary(tc.rows)
		if err != nil {
			t.Fatal(err)
		}
		c, err := ParseVary(tc.cols)
		if err != nil {
			t.Fatal(err)
		}
		_, err = NewGrid(r, c)
		var ve *Error
		if !errors.As(err, &ve) || !strings.Contains(err.Error(), tc.want) || !strings.HasPrefix(err.Error(), "--vary "+tc.cols) {
			t.Errorf("%s by %s: %v, want an *Error on the second --vary with %q", tc.rows, tc.cols, err, tc.want)
		}
	}
	r, _ := ParseVary("rejection=60:105:5")
	c, _ := ParseVary("ripple=0.1:1.5:0.1")
	if g, err := NewGrid(r, c); err != nil || g.Cells() != MaxCells {
		t.Errorf("10 x 15 cells, at the limit: %v, %d cells", err, g.Cells())
	}
}

func gridStudy(t *testing.T, rows, cols string, workers int) (Grid, []Result) {
	t.Helper()
	r, err := ParseVary(rows)
	if err != nil {
		t.Fatal(err)
	}
	c, err := ParseVary(cols)
	if err != nil {
		t.Fatal(err)
	}
	g, err := NewGrid(r, c)
	if err != nil {
		t.Fatal(err)
	}
	st := g.Study(Study{Name: "ex", Spec: []byte(specfile.ExampleText), Workers: workers, Plan: fakePlan})
	return g, Run(context.Background(), st)
}

func TestGridRun(t *testing.T) {
	// The example sets protected = 640 kHz: a 700 kHz passband is invalid.
	g, rs := gridStudy(t, "rejection=80:100:10", "passband=500:700:100 kHz", 3)
	if len(rs) != 9 {
		t.Fatalf("%d cells, want 9", len(rs))
	}
	for i, r := range rs {
		wantV, wantC := g.Rows.Values[i/3], g.Columns.Values[i%3]
		if r.Value != wantV || r.Column != wantC {
			t.Errorf("cell %d: (%v, %v), want (%v, %v)", i, r.Value, r.Column, wantV, wantC)
		}
		if wantInvalid := wantC == 700e3; (r.Status == Invalid) != wantInvalid || (wantInvalid && !strings.Contains(r.Detail, "protected")) {
			t.Errorf("cell %d: status %s (%s)", i, r.Status, r.Detail)
		}
	}
	// Structures change along the rejection (fakePlan: CIC order 5 above
	// 90 dB), never along a row.
	tags, notations := Structures(rs)
	if strings.Join(tags, ",") != "A,A,,A,A,,B,B," || strings.Join(notations, ",") != "cic4m1r8 > fir8,cic5m1r8 > fir8" {
		t.Errorf("tags %q, notations %q", tags, notations)
	}
	for i, ch := range GridChanges(g, rs) {
		if ch {
			t.Errorf("cell %d marked changed; changes are counted along a row", i)
		}
	}

	csv := strings.Split(strings.TrimSpace(string(GridCSV(g, rs))), "\n")
	if len(csv) != 10 || csv[0] != strings.Join(GridCSVHeader, ",") {
		t.Fatalf("sweep.csv:\n%s", strings.Join(csv, "\n"))
	}
	// Row 3, column 2: 100 dB, 600 kHz, cic5m1r8 > fir8, MPO 100/10 = 10.
	if want := "8,3,2,rejection,100,100 dB,passband,600000,600 kHz,ok,cic5m1r8 > fir8,false,true,false,10,"; !strings.HasPrefix(csv[8], want) {
		t.Errorf("row 8:\n got %s\nwant %s...", csv[8], want)
	}
	if !strings.HasPrefix(csv[3], "3,1,3,rejection,80,80 dB,passband,700000,700 kHz,invalid,,") {
		t.Errorf("row 3: %s", csv[3])
	}

	base, _ := specfile.Example()
	js, err := NewGridDoc(base, g, rs).Marshal()
	if err != nil {
		t.Fatal(err)
	}
	var doc struct {
		Schema  string `json:"schema"`
		Vary    struct{ Key string }
		Columns *struct {
			Key     string    `json:"key"`
			SpecKey string    `json:"spec_key"`
			Values  []float64 `json:"values"`
		} `json:"vary_columns"`
		Values []struct {
			Value           float64  `json:"value"`
			ColumnValue     *float64 `json:"column_value"`
			ColumnValueText string   `json:"column_value_text"`
			Row             int      `json:"row"`
			Column          int      `json:"column"`
			Status          string   `json:"status"`
			Folder          string   `json:"folder"`
		} `json:"values"`
	}
	if err := json.Unmarshal(js, &doc); err != nil {
		t.Fatal(err)
	}
	if doc.Schema != GridSchema || doc.Vary.Key != "rejection" || doc.Columns == nil || doc.Columns.SpecKey != "passband" || len(doc.Columns.Values) != 3 || len(doc.Values) != 9 {
		t.Fatalf("doc: %s", js[:min(len(js), 600)])
	}
	c := doc.Values[5] // row 2, column 3
	if c.Value != 90 || c.ColumnValue == nil || *c.ColumnValue != 700e3 || c.ColumnValueText != "700 kHz" || c.Row != 2 || c.Column != 3 || c.Status != "invalid" || c.Folder != "" {
		t.Errorf("cell 6: %+v", c)
	}
	if f := doc.Values[4].Folder; f != "values/r02-c02" {
		t.Errorf("cell 5's folder %q, want values/r02-c02", f)
	}

	files, _, err := GridFiles("ex", base, g, rs)
	if err != nil {
		t.Fatal(err)
	}
	names := map[string]bool{}
	for _, f := range files {
		names[f.Name] = true
	}
	for _, n := range []string{"report.json", "sweep.csv", "sweep.svg", "sweep.png", "values/r01-c01/report.json", "values/r03-c02/report.json"} {
		if !names[n] {
			t.Errorf("GridFiles lacks %s", n)
		}
	}
	if names["values/r01-c03/report.json"] {
		t.Error("an invalid cell has a folder")
	}
}

// TestGridDeterministic checks the same bytes whatever GOMAXPROCS and the
// pool size.
func TestGridDeterministic(t *testing.T) {
	var ref []byte
	old := runtime.GOMAXPROCS(0)
	defer runtime.GOMAXPROCS(old)
	base, _ := specfile.Example()
	for _, procs := range []int{1, 3} {
		runtime.GOMAXPROCS(procs)
		for _, w := range []int{0, 1, 4} {
			g, rs := gridStudy(t, "rejection=150:60:15", "passband=400:700:100 kHz", w)
			files, _, err := GridFiles("ex", base, g, rs)
			if err != nil {
				t.Fatal(err)
			}
			var all []byte
			for _, f := range files {
				all = append(append(all, f.Name...), f.Data...)
			}
			if ref == nil {
				ref = all
			} else if !bytes.Equal(ref, all) {
				t.Fatalf("GOMAXPROCS %d, workers %d: output differs", procs, w)
			}
		}
	}
}

func TestTagName(t *testing.T) {
	for i, want := range map[int]string{0: "A", 25: "Z", 26: "AA", 27: "AB", 51: "AZ", 52: "BA", 701: "ZZ", 702: "AAA"} {
		if got := TagName(i); got != want {
			t.Errorf("TagName(%d) = %q, want %q", i, got, want)
		}
	}
}

func TestHeatmapData(t *testing.T) {
	g, rs := gridStudy(t, "rejection=150:130:10", "passband=500:700:100 kHz", 2)
	d := NewHeatmapData("t", g, rs)
	if len(d.Cells) != 3 || len(d.Cells[0]) != 3 || d.X.Name != "passband" || d.Y.Name != "rejection" {
		t.Fatalf("data: %+v", d)
	}
	// 150 dB is infeasible for fakePlan (above 140 dB), 700 kHz invalid.
	marks := []string{}
	for _, row := range d.Cells {
		for _, c := range row {
			if c.OK {
				marks = append(marks, c.Tag)
			} else {
				marks = append(marks, c.Mark)
			}
		}
	}
	if got, want := strings.Join(marks, ","), "no chain,no chain,invalid,A,A,invalid,A,A,invalid"; got != want {
		t.Errorf("cells %s, want %s", got, want)
	}
	if err := RenderHeatmap(&bytes.Buffer{}, d, "svg"); err != nil {
		t.Error(err)
	}
}
