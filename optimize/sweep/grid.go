package sweep

import (
	"bytes"
	"encoding/csv"
	"fmt"
	"io"
	"strconv"

	"github.com/stepdown-dsp/stepdown/chain/specfile"
	"github.com/stepdown-dsp/stepdown/plots"
	"github.com/stepdown-dsp/stepdown/plots/report"
)

// GridSchema names the report.json format of a two-key sweep (a grid).
const GridSchema = "stepdown.sweep-grid/1"

// MaxCells is the most cells one grid runs: each cell is a full search.
const MaxCells = 150

// Grid is a two-key sweep: every value of Rows (the first --vary) with
// every value of Columns (the second).
type Grid struct {
	Rows, Columns Vary
}

// NewGrid checks that two ranges make a grid: two different keys that do
// not set the same spec key (decimation and output_rate both set
// output_rate), and at most MaxCells cells. The error names the second
// range.
func NewGrid(rows, cols Vary) (Grid, error) {
	fail := func(rule string, args ...any) (Grid, error) {
		return Grid{}, &Error{Key: cols.Key.Name, Value: cols.Text, Rule: fmt.Sprintf(rule, args...)}
	}
	switch {
	case rows.Key.Name == cols.Key.Name:
		return fail("%s is already the first --vary; a grid steps two different keys", cols.Key.Name)
	case rows.Key.Path == cols.Key.Path:
		return fail("%s and %s both set %s (decimation as input_rate / D); step one of them", rows.Key.Name, cols.Key.Name, cols.Key.Path)
	}
	if n := len(rows.Values) * len(cols.Values); n > MaxCells {
		return fail("with %s=%s gives %d x %d = %d cells, over the limit of %d (each cell is a full search); use larger steps or narrower ranges",
			rows.Key.Name, rows.Text, len(rows.Values), len(cols.Values), n, MaxCells)
	}
	return Grid{Rows: rows, Columns: cols}, nil
}

// Study returns the study of the grid: st with Vary and Columns set.
func (g Grid) Study(st Study) Study {
	st.Vary = g.Rows
	c := g.Columns
	st.Columns = &c
	return st
}

// Cells is the number of cells, len(Rows.Values) * len(Columns.Values).
func (g Grid) Cells() int { return len(g.Rows.Values) * len(g.Columns.Values) }

// GridValueDir is the folder, relative to the output folder, of the files of
// the cell in row r and column c (from 0): "values/r03-c02" for r = 2, c = 1.
func GridValueDir(r, c int) string { return fmt.Sprintf("values/r%02d-c%02d", r+1, c+1) }

// GridChanges marks, for each cell (in the order of the results, row by
// row), whether its recommended chain's notation differs from that of the
// previous cell of the same row that has a chain.
func GridChanges(g Grid, rs []Result) []bool {
	out := make([]bool, len(rs))
	n := len(g.Columns.Values)
	for r := 0; r*n < len(rs); r++ {
		end := min(len(rs), (r+1)*n)
		copy(out[r*n:end], Changes(rs[r*n:end]))
	}
	return out
}

// Structures gives each result with a chain a short tag for its
// recommended notation: "A" for the first notation met in the order of the
// results, "B" for the next new one, ..., "Z", then "AA", "AB", .... It
// returns the tag of each result ("" without a chain) and the notations in
// the order of their tags.
func Structures(rs []Result) (tags []string, notations []string) {
	tags = make([]string, len(rs))
	seen := map[string]string{}
	for i, r := range rs {
		if !r.Status.HasChain() {
			continue
		}
		n := r.Report.Front[r.Report.Recommended].Notation
		t, ok := seen[n]
		if !ok {
			t = TagName(len(notations))
			seen[n] = t
			notations = append(notations, n)
		}
		tags[i] = t
	}
	return tags, notations
}

// TagName is the i-th structure tag (from 0): A..Z, AA..AZ, BA, ...
func TagName(i int) string {
	s := ""
	for i++; i > 0; i = (i - 1) / 26 {
		s = string(rune('A'+(i-1)%26)) + s
	}
	return s
}

// Mark is the word a grid writes in a cell without a chain: "invalid",
// "no chain" (infeasible), "stopped" or "error"; "" for a status with a
// chain.
func (s Status) Mark() string {
	switch s {
	case Invalid:
		return "invalid"
	case Infeasible:
		return "no chain"
	case Stopped:
		return "stopped"
	case Failed:
		return "error"
	}
	return ""
}

// GridCSVHeader is the first row of a grid's sweep.csv: the cell's index,
// row and column (from 1), both keys and values, then the columns of
// CSVHeader from status on.
var GridCSVHeader = append([]string{
	"index", "row", "column", "key", "value", "value_text", "column_key", "column_value", "column_value_text",
}, CSVHeader[4:]...)

// GridCSV returns a grid's sweep.csv: one row per cell, row by row.
func GridCSV(g Grid, rs []Result) []byte {
	var buf bytes.Buffer
	w := csv.NewWriter(&buf)
	_ = w.Write(GridCSVHeader)
	changed := GridChanges(g, rs)
	n := len(g.Columns.Values)
	for i, r := range rs {
		row := []string{strconv.Itoa(i + 1), strconv.Itoa(i/n + 1), strconv.Itoa(i%n + 1),
			g.Rows.Key.Name, num(r.Value), g.Rows.Key.Format(r.Value),
			g.Columns.Key.Name, num(r.Column), g.Columns.Key.Format(r.Column)}
		_ = w.Write(append(row, resultCells(r, changed[i])...))
	}
	w.Flush()
	return buf.Bytes()
}

// NewGridDoc builds a grid's report.json document (GridSchema): vary is
// the first key (the rows), vary_columns the second, and values holds
// every cell, row by row, each with its column_value, row and column.
func NewGridDoc(base *specfile.Spec, g Grid, rs []Result) *Doc {
	cols := docVary(g.Columns)
	d := &Doc{
		Schema: GridSchema, Command: "sweep", Caution: report.Caution, Spec: report.NewSpec(base),
		Vary: docVary(g.Rows), Columns: &cols, Values: []DocValue{},
	}
	changed := GridChanges(g, rs)
	n := len(g.Columns.Values)
	for i, r := range rs {
		dv := docValue(g.Rows.Key, r, changed[i], GridValueDir(i/n, i%n))
		cv := r.Column
		dv.ColumnValue, dv.ColumnValueText = &cv, g.Columns.Key.Format(r.Column)
		dv.Row, dv.Column = i/n+1, i%n+1
		d.Values = append(d.Values, dv)
	}
	return d
}

// HeatmapData is the input of RenderHeatmap.
type HeatmapData = plots.HeatmapData

// Heat map size.
const (
	HeatmapWidth  = plots.HeatmapWidth
	HeatmapHeight = plots.HeatmapHeight
)

// NewHeatmapData collects a grid's heat map: the recommended chain's
// multiplies per output (its hardware adders as built, for a
// multiplierless spec) over the two keys, Columns across and Rows up, each
// cell tagged with its structure (Structures).
func NewHeatmapData(title string, g Grid, rs []Result) HeatmapData {
	d := HeatmapData{
		Title: title,
		X:     plots.HeatmapAxis{Name: g.Columns.Key.Name, Kind: sweepKind(g.Columns.Key.Dim), Unit: g.Columns.Key.Word, Values: g.Columns.Values},
		Y:     plots.HeatmapAxis{Name: g.Rows.Key.Name, Kind: sweepKind(g.Rows.Key.Dim), Unit: g.Rows.Key.Word, Values: g.Rows.Values},
	}
	if Interpolates(rs) {
		d.ValueLabel = "multiplies / input (recommended chain)"
	}
	tags, notations := Structures(rs)
	for i, n := range notations {
		d.Tags = append(d.Tags, plots.HeatmapTag{Tag: TagName(i), Text: n})
	}
	n := len(g.Columns.Values)
	for i, r := range rs {
		if i%n == 0 {
			d.Cells = append(d.Cells, nil)
		}
		c := plots.HeatmapCell{Mark: r.Status.Mark()}
		if r.Status.HasChain() {
			ch := r.Report.Front[r.Report.Recommended]
			v := ch.MultipliesPerOutput
			if ch.Adders != nil {
				v = float64(*ch.Adders)
				d.ValueLabel = "adders as built (recommended chain)"
			}
			c = plots.HeatmapCell{OK: true, Value: v, Partial: r.Status == Partial, Tag: tags[i]}
		}
		d.Cells[len(d.Cells)-1] = append(d.Cells[len(d.Cells)-1], c)
	}
	return d
}

// RenderHeatmap draws a grid's heat map (plots.Heatmap) in "svg" or "png"
// at HeatmapWidth x HeatmapHeight.
func RenderHeatmap(w io.Writer, d HeatmapData, format string) error {
	f, err := plots.Heatmap(d)
	if err != nil {
		return err
	}
	return f.Render(w, format, HeatmapWidth, HeatmapHeight)
}

// GridFiles renders every file of a grid in memory, in the order written:
// report.json (NewGridDoc), sweep.csv (GridCSV), sweep.svg and sweep.png
// (the heat map, titled "Sweep of KEY1 by KEY2: source"), then for each
// cell with a chain its folder (GridValueDir): the cell's report.json and
// its recommended chain's coefficient files. It returns the Doc too, for
// printing.
func GridFiles(source string, base *specfile.Spec, g Grid, rs []Result) ([]report.File, *Doc, error) {
	doc := NewGridDoc(base, g, rs)
	js, err := doc.Marshal()
	if err != nil {
		return nil, nil, err
	}
	files := []report.File{{Name: "report.json", Data: js}, {Name: "sweep.csv", Data: GridCSV(g, rs)}}
	hd := NewHeatmapData("Sweep of "+g.Rows.Key.Name+" by "+g.Columns.Key.Name+": "+source, g, rs)
	for _, ext := range []string{"svg", "png"} {
		var b bytes.Buffer
		if err := RenderHeatmap(&b, hd, ext); err != nil {
			return nil, nil, err
		}
		files = append(files, report.File{Name: "sweep." + ext, Data: b.Bytes()})
	}
	n := len(g.Columns.Values)
	for i, r := range rs {
		if !r.Status.HasChain() {
			continue
		}
		vf, err := valueFiles(GridValueDir(i/n, i%n), r)
		if err != nil {
			return nil, nil, fmt.Errorf("%s = %s, %s = %s: %v", g.Rows.Key.Name, g.Rows.Key.Format(r.Value),
				g.Columns.Key.Name, g.Columns.Key.Format(r.Column), err)
		}
		files = append(files, vf...)
	}
	return files, doc, nil
}
