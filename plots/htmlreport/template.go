package htmlreport

import "html/template"

// style is the page's only stylesheet. System fonts only: a web font would
// be a fetch.
const style = `
:root { color-scheme: light; }
* { box-sizing: border-box; }
body { margin: 0; background: #fff; color: #1b1b1b;
  font: 15px/1.5 system-ui, -apple-system, "Segoe UI", Roboto, "Liberation Sans", Arial, sans-serif; }
main { max-width: 70em; margin: 0 auto; padding: 1.2em 1.2em 3em; }
header { border-bottom: 3px solid #0072b2; margin-bottom: 1em; }
h1 { font-size: 1.55em; margin: .3em 0 .1em; line-height: 1.25; }
.sub { color: #555; margin: 0 0 .8em; }
h2 { font-size: 1.22em; margin: 1.8em 0 .5em; padding-bottom: .15em; border-bottom: 1px solid #ccc; }
h3 { font-size: 1.02em; margin: 1.1em 0 .3em; }
p { margin: .45em 0; }
nav ol { margin: .3em 0; padding-left: 1.4em; columns: 2 14em; }
.caution { border-left: 4px solid #d55e00; background: #fff5ec; padding: .55em .9em; margin: .8em 0; }
.rec { border-left: 4px solid #0072b2; background: #eef6fb; padding: .6em .9em; margin: .8em 0; }
.rec .chain { font-size: 1.25em; font-weight: 700; }
code, .chain, td.chain { font-family: ui-monospace, "DejaVu Sans Mono", "Liberation Mono", Menlo, Consolas, monospace; }
td.chain { white-space: nowrap; font-size: .92em; }
.tag { font-family: system-ui, sans-serif; font-size: .85em; color: #8a2c00; white-space: nowrap; }
.scroll { overflow-x: auto; -webkit-overflow-scrolling: touch; }
table { border-collapse: collapse; margin: .4em 0 .8em; font-variant-numeric: tabular-nums; font-size: .93em; }
th, td { padding: .28em .45em; border-bottom: 1px solid #e3e3e3; text-align: left; vertical-align: top; }
thead th { background: #f3f3f3; border-bottom: 1px solid #bbb; font-weight: 600; vertical-align: bottom; }
thead th.n { white-space: normal; }
thead tr:last-child th { border-bottom: 2px solid #999; }
td.n, th.n { text-align: right; white-space: nowrap; }
tr.mark td { background: #eef6fb; font-weight: 600; }
tr.bad td { color: #8a2c00; }
table.kv th { font-weight: 600; white-space: nowrap; padding-right: 1.2em; }
.stages { display: grid; grid-template-columns: repeat(auto-fill, minmax(19em, 1fr)); gap: 0 1.4em; }
.stage table { width: 100%; table-layout: fixed; }
.stage table.kv th { white-space: normal; width: 44%; padding-right: .6em; }
.stage td { overflow-wrap: anywhere; }
.stage h3 { margin-bottom: .1em; }
.stage tr.warn td { border-left: 4px solid #d55e00; color: #8a2c00; background: #fff5ec; }
.stage td.points { font-size: .9em; }
.stage td.points ol { margin: .2em 0 0; padding-left: 1.7em; }
.stage td.points li { margin: .1em 0; }
.files { font-size: .92em; }
figure { margin: 1em 0 1.4em; }
figure svg { display: block; width: 100%; max-width: 52em; height: auto; margin: 0 auto; }
figcaption { font-size: .9em; color: #555; margin-top: .3em; }
footer { margin-top: 2.5em; font-size: .85em; color: #555; border-top: 1px solid #ccc; padding-top: .6em; }
@media (max-width: 40em) { body { font-size: 14px; } main { padding: .8em; } }
@media print {
  @page { margin: 14mm 12mm; }
  body { font-size: 10pt; color: #000; }
  main { max-width: none; padding: 0; }
  header { border-bottom-width: 1.5pt; }
  nav { display: none; }
  a { color: #000; text-decoration: none; }
  a.file::after { content: " (" attr(href) ")"; font-size: .85em; color: #333; }
  .caution, .rec, tr.mark td, thead th, .stage tr.warn td { background: none; }
  .scroll { overflow: visible; }
  table { font-size: 8pt; }
  th, td { padding: .18em .3em; }
  td.chain { white-space: normal; }
  .tag { white-space: normal; }
  table, figure, .stage, .caution, .rec { break-inside: avoid; page-break-inside: avoid; }
  h2, h3 { break-after: avoid; page-break-after: avoid; }
  figure svg { max-width: 100%; }
  section.value { break-before: auto; }
}
`

const templates = `
{{define "head"}}<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta name="generator" content="stepdown">
<title>{{.Title}}</title>
<style>{{style}}</style>
</head>
<body>
<main>
{{end}}

{{define "foot"}}<footer>Written by stepdown. {{.Caution | capitalise}}.</footer>
</main>
</body>
</html>
{{end}}

{{define "spec"}}<div class="scroll"><table class="kv"><tbody>
{{range .}}<tr><th scope="row">{{.K}}</th><td>{{.V}}</td></tr>
{{end}}</tbody></table></div>{{end}}

{{define "front"}}<div class="scroll"><table>
<thead><tr><th class="n">#</th><th>chain</th><th class="n">{{.Axis}}</th><th class="n">adds/{{.Short}}</th><th class="n">memory bits</th>{{if .Clock}}<th class="n">multi&shy;pliers</th>{{end}}<th class="n">latency ({{.Side}} samples)</th><th class="n">rejection dB</th><th class="n">margin dB</th><th class="n">ripple dB</th></tr></thead>
<tbody>
{{range .Rows}}<tr class="{{if .Rec}}mark{{end}}{{if .Misses}} bad{{end}}"><td class="n">{{.Index}}{{if .Rec}} ★{{end}}</td><td class="chain">{{.Notation}}{{if .Tag}} <span class="tag">{{.Tag}}</span>{{end}}</td><td class="n">{{.Mult}}</td><td class="n">{{.Adds}}</td><td class="n">{{.MemBits}}</td>{{if $.Clock}}<td class="n">{{.Multipliers}}</td>{{end}}<td class="n">{{.Latency}} ({{.LatOut}} {{$.Short}})</td><td class="n">{{.Rejection}}</td><td class="n">{{.Margin}}</td><td class="n">{{.Ripple}}</td></tr>
{{end}}</tbody></table></div>{{range .Rows}}{{if .Over}}<p class="note">#{{.Index}} {{.Notation}} is over the fabric's limits as built, by its word lengths: {{.Over}}.</p>{{end}}{{end}}{{end}}

{{define "stages"}}<div class="stages">
{{range .}}<div class="stage"><h3>{{.Title}}</h3><table class="kv"><tbody>
{{range .Rows}}{{if .Warn}}<tr class="warn"><td colspan="2"><strong>{{.K}}:</strong> {{.V}}</td></tr>{{else}}<tr><th scope="row">{{.K}}</th><td>{{.V}}</td></tr>{{end}}
{{end}}{{if .Links}}<tr><th scope="row">Coefficient files</th><td class="files">{{range $i, $l := .Links}}{{if $i}}<br>{{end}}<a class="file" href="{{$l}}">{{base $l}}</a>{{end}}</td></tr>
{{end}}{{if .Points}}<tr><td class="points" colspan="2"><strong>Rounding points</strong>, in signal order:<ol>
{{range .Points}}<li>{{.}}</li>
{{end}}</ol></td></tr>
{{end}}</tbody></table></div>
{{end}}</div>{{end}}

{{define "cautions"}}<ul>
{{range .}}<li>{{.}}</li>
{{end}}</ul>{{end}}

{{define "files"}}<ul class="files">
{{range .}}<li><a class="file" href="{{.}}">{{.}}</a></li>
{{end}}</ul>{{end}}

{{define "plan"}}{{template "head" .}}<header>
<h1>{{if eq .Command "check"}}Chain check{{else if eq .Side "input"}}Interpolation chain plan{{else}}Decimation chain plan{{end}}</h1>
<p class="sub">Spec: <code>{{.Source}}</code> · command: stepdown {{.Command}}{{if .Trace}} · {{.Trace}}{{end}}</p>
</header>
<p class="caution"><strong>Caution:</strong> {{.Caution}}.</p>
{{if .Partial}}<p class="caution"><strong>Partial:</strong> the search was stopped by its time limit; the front below is the best found so far.</p>{{end}}
<nav><ol>
<li><a href="#spec">Spec</a></li>
<li><a href="#recommendation">Recommendation</a></li>
<li><a href="#front">Pareto front</a></li>
<li><a href="#stages">Stages of the recommended chain</a></li>
<li><a href="#response">Response</a></li>
<li><a href="#cautions">Cautions</a></li>
<li><a href="#files">Files</a></li>
</ol></nav>

<section id="spec"><h2>Spec</h2>
{{template "spec" .Spec}}
<p>{{.Search}}</p>
</section>

<section id="recommendation"><h2>Recommendation</h2>
{{with .Rec}}<div class="rec"><p class="chain">#{{.Index}} {{.Notation}}</p>
<p>{{.Reason}}</p>
<p>{{if eq $.Axis "adders"}}{{.Figures.Mult}} adders as built (multiplierless) and {{.Figures.Adds}} adds per {{$.Side}} sample{{else}}{{.Figures.Mult}} multiplies and {{.Figures.Adds}} adds per {{$.Side}} sample{{end}}{{if $.Clock}} (hardware multipliers at the clock: {{.Figures.Multipliers}}{{with .Figures.Native}}, {{.}} native multiplier blocks by the word lengths{{end}}){{end}}; {{.Figures.MemBits}} bits of memory ({{.Figures.MemWords}} words{{with .Figures.BuiltMem}}, as priced; {{.}} bits as built by the word lengths{{end}}); latency {{.Figures.Latency}} ({{.Figures.LatOut}} {{$.Side}} samples); {{$.Unwanted}} rejection {{.Figures.Rejection}} dB (margin {{.Figures.Margin}} dB); passband ripple {{.Figures.Ripple}} dB; {{.Figures.Kind}}.{{with .Figures.Over}} Over the fabric's limits as built: {{.}}.{{end}}</p></div>
{{else}}<p>No chain meets the spec.</p>{{end}}
{{if .Compared}}<p>Compared with the front of {{.Compared}}: {{if .Beaten}}it is beaten.</p>
<ul>{{range .Beaten}}<li>{{.}}</li>{{end}}</ul>{{else}}{{.CompareText}}</p>{{end}}{{end}}
{{with .Resources}}<h3>Resources at the clock</h3>
<p>A planning estimate in the units the fabric charges; the vendor's tools decide.</p>
<div class="scroll"><table><thead><tr><th>stage</th><th>kind</th><th class="n">lanes</th><th class="n">multipliers</th><th class="n">adders</th>{{if $.ResAdders}}<th class="n">graph adders</th><th class="n">tap adders</th>{{end}}<th class="n">adder bits</th><th class="n">register bits</th><th class="n">block memory bits</th></tr></thead><tbody>
{{range .Stages}}<tr><td class="n">{{.Stage}}</td><td>{{.Kind}}</td><td class="n">{{.Lanes}}</td><td class="n">{{.Multipliers}}</td><td class="n">{{.Adders}}</td>{{if $.ResAdders}}<td class="n">{{with .CoefficientAdders}}{{.}}{{else}}-{{end}}</td><td class="n">{{with .StructuralAdders}}{{.}}{{else}}-{{end}}</td>{{end}}<td class="n">{{.AdderBits}}</td><td class="n">{{.RegisterBits}}</td><td class="n">{{.BlockMemoryBits}}</td></tr>
{{end}}<tr><td>total</td><td></td><td class="n">{{.Lanes}}</td><td class="n">{{.Multipliers}}</td><td class="n">{{.Adders}}</td>{{if $.ResAdders}}<td class="n">{{$.ResGraphAdders}}</td><td class="n">{{$.ResTapAdders}}</td>{{end}}<td></td><td class="n">{{.RegisterBits}}</td><td class="n">{{.BlockMemoryBits}}</td></tr>
</tbody></table></div>
{{if $.ResAdders}}<p>Multiplierless: adders are as built (not time-shared); graph adders multiply by the taps (a shared adder graph), tap adders sum them (transposed direct form).</p>{{end}}{{end}}
</section>

<section id="front"><h2>Pareto front</h2>
{{if .FrontSVG}}<figure>{{.FrontSVG}}<figcaption>{{if eq .Axis "adders"}}Hardware adders (as built){{else}}Multiplies per {{.Side}} sample{{end}} against memory: every feasible candidate (by estimate) faint, the front coloured by latency, the recommended chain ringed.</figcaption></figure>{{end}}
<p>Chains that no other chain beats on {{.AxisName}}, memory and latency at once, sorted by {{.AxisName}}; ★ marks the recommendation. Figures are per {{if eq .Side "input"}}input sample (the channel side){{else}}final output sample{{end}}, from real designs unless a chain is marked estimated.</p>
{{template "front" (frontArgs .Front .Clock .Axis .Short)}}
</section>

<section id="stages"><h2>Stages of the recommended chain</h2>
{{with .Rec}}{{template "stages" .Stages}}{{end}}
{{if .StagesSVG}}<figure>{{.StagesSVG}}<figcaption>{{if eq .Axis "adders"}}Multiplies (none: the chain is multiplierless) and memory of each stage of the recommended chain; its adders are in the resource table and the stage table.{{else}}Multiplies and memory of each stage of the recommended chain.{{end}}</figcaption></figure>{{end}}
</section>

<section id="response"><h2>Response</h2>
{{if .ResponseSVG}}<figure>{{.ResponseSVG}}<figcaption>{{if .Fractional}}Gain of the recommended chain against input frequency: the kept path (the tone where it is) and, at each frequency, the largest gain of any other path of the tone through the fractional stage that lands in the protected band, each stage's gain beside them.{{else}}Gain of the recommended cascade against input frequency, each stage's gain beside it; the bands that fold onto the protected band at the output are shaded.{{end}}</figcaption></figure>{{else}}<p>No response figure.</p>{{end}}
</section>

<section id="cautions"><h2>Cautions</h2>
{{template "cautions" .Cautions}}
</section>

<section id="files"><h2>Files</h2>
<p>Beside this page in the output folder (the links work while the folder is kept together):</p>
{{template "files" .Files}}
</section>
{{template "foot" .}}{{end}}

{{define "sweep"}}{{template "head" .}}<header>
<h1>Trade study: {{.Key}}</h1>
<p class="sub">Spec: <code>{{.Source}}</code> · command: stepdown sweep --vary {{.Key}}={{.Range}} · {{.Count}} values</p>
</header>
<p class="caution"><strong>Caution:</strong> {{.Caution}}.</p>
<nav><ol>
<li><a href="#spec">Spec</a></li>
<li><a href="#summary">Summary</a></li>
{{range .Values}}{{if .HasChain}}<li><a href="#{{.Anchor}}">{{.Text}}: {{.Notation}}</a></li>{{end}}{{end}}
<li><a href="#cautions">Cautions</a></li>
<li><a href="#files">Files</a></li>
</ol></nav>

<section id="spec"><h2>Spec</h2>
<p>The spec as given; the sweep sets <code>{{.SpecKey}}</code> to each value in turn and plans it afresh.</p>
{{template "spec" .Spec}}
</section>

<section id="summary"><h2>Summary</h2>
{{if .FigureSVG}}<figure>{{.FigureSVG}}<figcaption>The recommended chain's figures (solid) and the least on each front (dashed) against {{.Key}}; dashed vertical lines mark where the recommended chain's structure changes.</figcaption></figure>{{end}}
<div class="scroll"><table>
<thead><tr><th class="n" rowspan="2">#</th><th class="n" rowspan="2">{{.Key}}</th><th colspan="{{if .Clock}}6{{else}}5{{end}}">recommended chain</th><th colspan="3">least on the front</th></tr>
<tr><th>chain</th><th class="n">{{.Axis}}</th><th class="n">memory bits</th>{{if .Clock}}<th class="n">multi&shy;pliers</th>{{end}}<th class="n">latency</th><th class="n">rejection dB</th><th class="n">{{.Axis}}</th><th class="n">memory bits</th><th class="n">latency</th></tr></thead>
<tbody>
{{range .Values}}<tr class="{{if .Changed}}mark{{end}}{{if not .HasChain}} bad{{end}}"><td class="n">{{.Index}}</td><td class="n">{{.Text}}</td>{{if .HasChain}}<td class="chain"><a href="#{{.Anchor}}">{{.Notation}}</a>{{if .Changed}} <span class="tag">new structure</span>{{end}}{{if ne .Status "ok"}} <span class="tag">{{.Status}}</span>{{end}}</td><td class="n">{{.Rec.Mult}}</td><td class="n">{{.Rec.MemBits}}</td>{{if $.Clock}}<td class="n">{{.Rec.Multipliers}}</td>{{end}}<td class="n">{{.Rec.Latency}}</td><td class="n">{{.Rec.Rejection}}</td><td class="n">{{.BestMult}}</td><td class="n">{{.BestMem}}</td><td class="n">{{.BestLat}}</td>{{else}}<td colspan="{{if $.Clock}}9{{else}}8{{end}}"><strong>{{.Status}}:</strong> {{.Detail}}</td>{{end}}</tr>
{{end}}</tbody></table></div>
<p>Highlighted rows are where the recommended chain's structure changes from the previous value's. The least figures are taken one at a time over each value's front.</p>
</section>

{{range .Values}}{{if .HasChain}}<section class="value" id="{{.Anchor}}"><h2>{{$.Key}} = {{.Text}}</h2>
{{if .Detail}}<p class="caution">{{.Detail}}</p>{{end}}
<div class="rec"><p class="chain">{{.Notation}}</p><p>{{.Reason}}</p></div>
{{template "front" (frontArgs .Front $.Clock $.Axis)}}
{{template "stages" .Stages}}
<p class="files">This value's files: <a class="file" href="{{.Report}}">{{.Report}}</a></p>
</section>
{{end}}{{end}}

<section id="cautions"><h2>Cautions</h2>
{{template "cautions" .Cautions}}
</section>

<section id="files"><h2>Files</h2>
<p>Beside this page in the output folder; each value's report.json and coefficient files are under <code>values/</code>.</p>
{{template "files" .Files}}
</section>
{{template "foot" .}}{{end}}

{{define "grid"}}{{template "head" .}}<header>
<h1>Trade study: {{.Key}} by {{.ColKey}}</h1>
<p class="sub">Spec: <code>{{.Source}}</code> · command: stepdown sweep --vary {{.Key}}={{.Range}} --vary {{.ColKey}}={{.ColRange}} · {{.Count}} cells</p>
</header>
<p class="caution"><strong>Caution:</strong> {{.Caution}}.</p>
<nav><ol>
<li><a href="#spec">Spec</a></li>
<li><a href="#summary">Summary</a></li>
<li><a href="#cells">Every cell</a></li>
<li><a href="#cautions">Cautions</a></li>
<li><a href="#files">Files</a></li>
</ol></nav>

<section id="spec"><h2>Spec</h2>
<p>The spec as given; the sweep sets <code>{{.SpecKey}}</code> and <code>{{.ColSpecKey}}</code> to each pair of values in turn and plans it afresh.</p>
{{template "spec" .Spec}}
</section>

<section id="summary"><h2>Summary</h2>
{{if .FigureSVG}}<figure>{{.FigureSVG}}<figcaption>The recommended chain's {{if eq .Axis "adders"}}hardware adders as built{{else}}multiplies per output{{end}} over {{.Key}} and {{.ColKey}}; heavy lines separate cells whose recommended structure differs, grey cells have no chain.</figcaption></figure>{{end}}
<p>Multiplies per output of each cell's recommended chain (rows {{.Key}}, columns {{.ColKey}}); a cell links to its chain.</p>
<div class="scroll"><table class="grid">
<thead><tr><th>{{.Key}} \ {{.ColKey}}</th>{{range .Head}}<th class="n">{{.}}</th>{{end}}</tr></thead>
<tbody>
{{range .Rows}}<tr><th class="n">{{.Text}}</th>{{range .Cells}}{{if .HasChain}}<td class="n" title="{{.Title}}"><a href="#{{.Anchor}}">{{.Text}}</a></td>{{else}}<td class="n" title="{{.Title}}"><span class="tag">{{.Text}}</span></td>{{end}}{{end}}</tr>
{{end}}</tbody></table></div>
</section>

<section id="cells"><h2>Every cell</h2>
<div class="scroll"><table>
<thead><tr><th class="n" rowspan="2">#</th><th class="n" rowspan="2">{{.Key}}</th><th class="n" rowspan="2">{{.ColKey}}</th><th colspan="{{if .Clock}}6{{else}}5{{end}}">recommended chain</th><th colspan="3">least on the front</th></tr>
<tr><th>chain</th><th class="n">{{.Axis}}</th><th class="n">memory bits</th>{{if .Clock}}<th class="n">multi&shy;pliers</th>{{end}}<th class="n">latency</th><th class="n">rejection dB</th><th class="n">{{.Axis}}</th><th class="n">memory bits</th><th class="n">latency</th></tr></thead>
<tbody>
{{range .Values}}<tr class="{{if .Changed}}mark{{end}}{{if not .HasChain}} bad{{end}}"><td class="n">{{.Index}}</td><td class="n">{{.Text}}</td><td class="n">{{.ColText}}</td>{{if .HasChain}}<td class="chain"><a href="#{{.Anchor}}">{{.Notation}}</a>{{if .Changed}} <span class="tag">new structure</span>{{end}}{{if ne .Status "ok"}} <span class="tag">{{.Status}}</span>{{end}}</td><td class="n">{{.Rec.Mult}}</td><td class="n">{{.Rec.MemBits}}</td>{{if $.Clock}}<td class="n">{{.Rec.Multipliers}}</td>{{end}}<td class="n">{{.Rec.Latency}}</td><td class="n">{{.Rec.Rejection}}</td><td class="n">{{.BestMult}}</td><td class="n">{{.BestMem}}</td><td class="n">{{.BestLat}}</td>{{else}}<td colspan="{{if $.Clock}}9{{else}}8{{end}}"><strong>{{.Status}}:</strong> {{.Detail}}</td>{{end}}</tr>
{{end}}</tbody></table></div>
<p>Highlighted rows are where the recommended chain's structure changes from that of the cell before it in the same row ({{.Key}} fixed). The least figures are taken one at a time over each cell's front.</p>
</section>

{{range .Values}}{{if .HasChain}}<section class="value" id="{{.Anchor}}"><h2>{{$.Key}} = {{.Text}}, {{$.ColKey}} = {{.ColText}}</h2>
{{if .Detail}}<p class="caution">{{.Detail}}</p>{{end}}
<div class="rec"><p class="chain">{{.Notation}}</p><p>{{.Reason}}</p></div>
{{template "front" (frontArgs .Front $.Clock $.Axis)}}
{{template "stages" .Stages}}
<p class="files">This cell's files: <a class="file" href="{{.Report}}">{{.Report}}</a></p>
</section>
{{end}}{{end}}

<section id="cautions"><h2>Cautions</h2>
{{template "cautions" .Cautions}}
</section>

<section id="files"><h2>Files</h2>
<p>Beside this page in the output folder; each cell's report.json and coefficient files are under <code>values/</code> (<code>values/rNN-cNN/</code>, row and column from 01).</p>
{{template "files" .Files}}
</section>
{{template "foot" .}}{{end}}
`

type frontArgsT struct {
	Rows  []frontRow
	Clock bool
	Axis  string // the cost column's head: "mult/out", "mult/in", or "adders" (multiplierless)
	// Short and Side say per which samples the counts are: "out" and
	// "output" (a decimation chain), "in" and "input" (an interpolation
	// chain).
	Short, Side string
}

var pages = template.Must(template.New("").Funcs(template.FuncMap{
	"style":      func() template.CSS { return template.CSS(style) },
	"capitalise": capitalise,
	"frontArgs": func(rows []frontRow, clock bool, axis ...string) frontArgsT {
		a := frontArgsT{rows, clock, "mult/out", "out", "output"}
		if len(axis) > 0 && axis[0] != "" {
			a.Axis = axis[0]
		}
		if a.Axis == "mult/in" || len(axis) > 1 && axis[1] == "in" {
			a.Short, a.Side = "in", "input"
		}
		return a
	},
	"base": func(p string) string {
		for i := len(p) - 1; i >= 0; i-- {
			if p[i] == '/' {
				return p[i+1:]
			}
		}
		return p
	},
}).Parse(templates))
