package sweep

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"math"
	"strconv"
	"strings"

	"github.com/stepdown-dsp/stepdown/chain"
	"github.com/stepdown-dsp/stepdown/chain/specfile"
	"github.com/stepdown-dsp/stepdown/plots/report"
)

// Schema names the sweep's report.json format.
const Schema = "stepdown.sweep/1"

// ValueDir is the folder, relative to the output folder, of value i's
// report.json and coefficient files.
func ValueDir(i int) string { return fmt.Sprintf("values/%02d", i+1) }

// CSVHeader is the first row of sweep.csv. The recommended chain's figures
// come first; best_* are the least of each figure over that value's front
// (each may come from a different chain of the front).
var CSVHeader = []string{
	"index", "key", "value", "value_text", "status", "recommended", "structure_changed",
	"designed", "meets_targets", "multiplies_per_output", "adds_per_output", "memory_bits",
	"latency_s", "latency_samples", "multipliers_at_clock", "alias_rejection_db", "passband_ripple_db",
	"front_size", "best_multiplies_per_output", "best_memory_bits", "best_latency_s", "best_multipliers_at_clock",
	"bittrue_snr_db", "bittrue_enob", "quantised_alias_rejection_db", "coefficient_bits",
	"quantised_passband_ripple_db", "dc_gain_db", "bittrue_snr_valid", "verdict_basis",
	"adders", "best_adders", "detail",
}

// csvHeader is CSVHeader, with an interpolation spec's columns named as
// its report.json names them (multiplies_per_input, image_rejection_db,
// ...; report.InterpolationKey).
func csvHeader(rs []Result) []string {
	if !Interpolates(rs) {
		return CSVHeader
	}
	h := make([]string, len(CSVHeader))
	for i, k := range CSVHeader {
		if b, ok := strings.CutPrefix(k, "best_"); ok {
			h[i] = "best_" + report.InterpolationKey(b)
			continue
		}
		h[i] = report.InterpolationKey(k)
	}
	return h
}

// CSV returns sweep.csv: one row per value, in the order of the values.
// Cells of a value without a chain are empty, and its detail says why.
func CSV(v Vary, rs []Result) []byte {
	var buf bytes.Buffer
	w := csv.NewWriter(&buf)
	_ = w.Write(csvHeader(rs))
	changed := Changes(rs)
	for i, r := range rs {
		row := append([]string{strconv.Itoa(i + 1), v.Key.Name, num(r.Value), v.Key.Format(r.Value)}, resultCells(r, changed[i])...)
		_ = w.Write(row)
	}
	w.Flush()
	return buf.Bytes()
}

// resultCells are a row's cells from status to detail (CSVHeader[4:]).
func resultCells(r Result, changed bool) []string {
	row := []string{string(r.Status)}
	if r.Status.HasChain() {
		rep := r.Report
		c := rep.Front[rep.Recommended]
		b := BestOf(rep)
		mult, bestMult := "", ""
		if b.Multipliers >= 0 {
			bestMult = strconv.Itoa(b.Multipliers)
		}
		if c.MultipliersAtClock != nil {
			mult = strconv.Itoa(*c.MultipliersAtClock)
		}
		row = append(row, c.Notation, strconv.FormatBool(changed),
			strconv.FormatBool(c.Designed), strconv.FormatBool(c.MeetsTargets),
			num(c.MultipliesPerOutput), num(c.AddsPerOutput), strconv.Itoa(c.MemoryBits),
			num(c.LatencyS), num(c.LatencySamples), mult, num(c.AliasRejectionDB), num(c.PassbandRippleDB),
			strconv.Itoa(len(rep.Front)), num(b.Multiplies), strconv.Itoa(b.MemoryBits), num(b.LatencyS), bestMult)
		row = append(row, wordCells(c)...)
		adders, bestAdders := "", ""
		if c.Adders != nil {
			adders = strconv.Itoa(*c.Adders)
		}
		if b.Adders >= 0 {
			bestAdders = strconv.Itoa(b.Adders)
		}
		row = append(row, adders, bestAdders)
	} else {
		row = append(row, make([]string, len(CSVHeader)-6)...)
	}
	return append(row, r.Detail)
}

// wordCells are the recommended chain's word-length figures: bit-true SNR
// and ENOB (empty when the run was not made or is not meaningful), the
// alias rejection with rounded coefficients, the FIR and half-band stages'
// coefficient widths in stage order (separated by spaces), the passband
// ripple with rounded coefficients, the DC gain, whether the SNR is
// meaningful, and the verdict's basis. All but the basis are empty when the
// chain has no word-length plan.
func wordCells(c report.Chain) []string {
	if c.ChainReport == nil {
		return append(make([]string, 7), c.VerdictBasis)
	}
	var bits []string
	for _, st := range c.Stages {
		if st.StageReport != nil && st.CoefficientBits > 0 {
			bits = append(bits, strconv.Itoa(st.CoefficientBits))
		}
	}
	snr, enob := "", ""
	if c.BitTrueReport != nil && c.BitTrueSNRDB != nil && c.BitTrueENOB != nil {
		snr, enob = num(*c.BitTrueSNRDB), num(*c.BitTrueENOB)
	}
	return []string{snr, enob, num(c.QuantisedRejectionDB), strings.Join(bits, " "),
		num(c.QuantisedRippleDB), num(c.DCGainDB), strconv.FormatBool(c.BitTrueSNRValid), c.VerdictBasis}
}

// num writes a finite float in Go's shortest round-trip form; a NaN or
// infinity (which the library never returns) is left empty rather than
// written.
func num(v float64) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return ""
	}
	return strconv.FormatFloat(v, 'g', -1, 64)
}

// JSON types of the sweep's report.json.
type (
	// Doc is the sweep's report.json.
	Doc struct {
		Schema  string      `json:"schema"`
		Command string      `json:"command"` // "sweep"
		Caution string      `json:"caution"`
		Spec    report.Spec `json:"spec"` // the spec as given, before the sweep
		Vary    DocVary     `json:"vary"`
		// Columns is a grid's second key (GridSchema); nil for one key.
		Columns *DocVary   `json:"vary_columns,omitempty"`
		Values  []DocValue `json:"values"`
	}
	// DocVary describes the swept key.
	DocVary struct {
		Key     string    `json:"key"`
		SpecKey string    `json:"spec_key"`
		Unit    string    `json:"unit"`
		From    float64   `json:"from"`
		To      float64   `json:"to"`
		Step    float64   `json:"step"`
		Range   string    `json:"range"` // as typed
		Values  []float64 `json:"values"`
	}
	// DocValue is one value: its front without the coefficient arrays (they
	// are in the value's own report.json under Folder).
	DocValue struct {
		Value     float64 `json:"value"`
		ValueText string  `json:"value_text"`
		// In a grid: the second key's value, and the cell's row and
		// column, from 1 (omitted for one key).
		ColumnValue      *float64       `json:"column_value,omitempty"`
		ColumnValueText  string         `json:"column_value_text,omitempty"`
		Row              int            `json:"row,omitempty"`
		Column           int            `json:"column,omitempty"`
		Status           string         `json:"status"`
		Detail           string         `json:"detail,omitempty"`
		Folder           string         `json:"folder,omitempty"`
		StructureChanged bool           `json:"structure_changed"`
		Search           *report.Search `json:"search,omitempty"`
		Front            []report.Chain `json:"front"`
		Recommended      int            `json:"recommended"`
		Reason           string         `json:"reason,omitempty"`
		Best             *DocBest       `json:"best,omitempty"`
	}
	// DocBest is the least of each figure over the front.
	DocBest struct {
		MultipliesPerOutput float64 `json:"multiplies_per_output"`
		MemoryBits          int     `json:"memory_bits"`
		LatencyS            float64 `json:"latency_s"`
		MultipliersAtClock  *int    `json:"multipliers_at_clock,omitempty"`
		// Adders is the least hardware adders as built (multiplierless
		// only).
		Adders *int `json:"adders,omitempty"`
		// perInput: an interpolation spec's, whose multiplies are per
		// input sample (MarshalJSON writes multiplies_per_input).
		perInput bool
	}
)

// NewDoc builds the sweep's report.json document.
func NewDoc(base *specfile.Spec, v Vary, rs []Result) *Doc {
	d := &Doc{
		Schema: Schema, Command: "sweep", Caution: report.Caution, Spec: report.NewSpec(base),
		Vary: docVary(v), Values: []DocValue{},
	}
	changed := Changes(rs)
	for i, r := range rs {
		d.Values = append(d.Values, docValue(v.Key, r, changed[i], ValueDir(i)))
	}
	return d
}

func docVary(v Vary) DocVary {
	return DocVary{Key: v.Key.Name, SpecKey: v.Key.Path, Unit: v.Key.Unit(), From: v.From, To: v.To,
		Step: v.Step, Range: v.Text, Values: append([]float64{}, v.Values...)}
}

// docValue is one value's entry; folder is where its files go when it
// has a chain.
func docValue(k Key, r Result, changed bool, folder string) DocValue {
	dv := DocValue{Value: r.Value, ValueText: k.Format(r.Value), Status: string(r.Status),
		Detail: r.Detail, StructureChanged: changed, Front: []report.Chain{}, Recommended: -1}
	if r.Status.HasChain() {
		rep := r.Report
		s := rep.Search
		dv.Search = &s
		dv.Folder = folder
		dv.Recommended = rep.Recommended
		dv.Reason = rep.Reason
		for _, c := range rep.Front {
			dv.Front = append(dv.Front, summary(c))
		}
		b := BestOf(rep)
		dv.Best = &DocBest{MultipliesPerOutput: b.Multiplies, MemoryBits: b.MemoryBits, LatencyS: b.LatencyS,
			perInput: r.Spec != nil && r.Spec.Chain.Direction() == chain.Interpolate}
		if b.Adders >= 0 {
			a := b.Adders
			dv.Best.Adders = &a
		}
		if b.Multipliers >= 0 {
			m := b.Multipliers
			dv.Best.MultipliersAtClock = &m
		}
	}
	return dv
}

// summary is a chain without its coefficient arrays.
func summary(c report.Chain) report.Chain {
	st := make([]report.Stage, len(c.Stages))
	copy(st, c.Stages)
	for i := range st {
		st[i].Coefficients = nil
		if w := st[i].StageReport; w != nil {
			cp := *w
			cp.CoefficientsInt = nil
			st[i].StageReport = &cp
		}
	}
	c.Stages = st
	return c
}

// Marshal returns the document's bytes, indented, with a final newline.
func (d *Doc) Marshal() ([]byte, error) {
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetEscapeHTML(false)
	enc.SetIndent("", "  ")
	if err := enc.Encode(d); err != nil {
		return nil, fmt.Errorf("sweep: report.json: %v", err)
	}
	return buf.Bytes(), nil
}

// Files renders every file of a sweep in memory, in the order written:
// report.json (the Doc), sweep.csv, sweep.svg and sweep.png (titled "Sweep
// of KEY: source"), then for each value with a chain its folder (ValueDir):
// the value's report.json and its recommended chain's coefficient files.
// It returns the Doc too, for printing.
func Files(source string, base *specfile.Spec, v Vary, rs []Result) ([]report.File, *Doc, error) {
	doc := NewDoc(base, v, rs)
	js, err := doc.Marshal()
	if err != nil {
		return nil, nil, err
	}
	files := []report.File{{Name: "report.json", Data: js}, {Name: "sweep.csv", Data: CSV(v, rs)}}
	fd := NewFigureData("Sweep of "+v.Key.Name+": "+source, v, rs)
	for _, ext := range []string{"svg", "png"} {
		var b bytes.Buffer
		if err := Render(&b, fd, ext); err != nil {
			return nil, nil, err
		}
		files = append(files, report.File{Name: "sweep." + ext, Data: b.Bytes()})
	}
	for i, r := range rs {
		if !r.Status.HasChain() {
			continue
		}
		vf, err := valueFiles(ValueDir(i), r)
		if err != nil {
			return nil, nil, fmt.Errorf("%s = %s: %v", v.Key.Name, v.Key.Format(r.Value), err)
		}
		files = append(files, vf...)
	}
	return files, doc, nil
}

// valueFiles are the files of one value with a chain, in its folder dir:
// its report.json and the recommended chain's coefficient files.
func valueFiles(dir string, r Result) ([]report.File, error) {
	b, err := r.Report.Marshal()
	if err != nil {
		return nil, err
	}
	files := []report.File{{Name: dir + "/report.json", Data: b}}
	cf, err := report.CoefficientFiles(r.Report.Front[r.Report.Recommended], r.Report.Spec.Words.CoefficientsMode != "float")
	if err != nil {
		return nil, err
	}
	for _, f := range cf {
		f.Name = dir + "/" + f.Name
		files = append(files, f)
	}
	return files, nil
}

// MarshalJSON writes the best figures; an interpolation spec's multiplies
// are multiplies_per_input, as its chains' are.
func (b DocBest) MarshalJSON() ([]byte, error) {
	type plain DocBest
	out, err := json.Marshal(plain(b))
	if err != nil || !b.perInput {
		return out, err
	}
	return bytes.Replace(out, []byte(`"multiplies_per_output":`), []byte(`"`+report.InterpolationKey("multiplies_per_output")+`":`), 1), nil
}
