package report

import (
	"bytes"
	"encoding/base64"
	"fmt"
	"html/template"
	"io"
	"sort"
	"strconv"
	"strings"
	"time"

	"github.com/hvshot/hvshot/waveform/atmos"
	"github.com/hvshot/hvshot/waveform/impulse"
	"github.com/hvshot/hvshot/waveform/outcome"
	"github.com/hvshot/hvshot/waveform/shot"
)

// Safety is the caution that stands at the foot of every report.
const Safety = `High voltage kills. An impulse generator stores lethal energy in its capacitors and
can recharge itself from dielectric absorption after it has been discharged. Before anyone
enters the test area: switch off and lock out the charging supply, discharge every stage with
the earthing rod, apply the permanent earths, and check that they are in place. Follow the
local electrical codes, the laboratory's procedures and licensed practice. hvshot evaluates
records after the fact; it never replaces a qualified person's judgement or the laboratory's
safety system, and nothing it prints is a reason to approach energised equipment.`

// Page is what a report shows.
type Page struct {
	Summary shot.Summary
	Rows    []shot.Row
	Traces  []shot.Trace // for the series charts' overlay
	Config  *shot.Config
	Version string
	Made    time.Time
	// Plot returns a plot file's bytes (Row.Plot names it); the report inlines each
	// one as it is written, so only one is in memory at a time.
	Plot func(rel string) ([]byte, error)
}

// The page: a header of facts, the series summary, a table of the shots (each row's
// reasons on a line of their own below it, so the table fits a portrait page), then a
// block per shot. Print: A4 portrait, the series and page numbers in the margins, no
// shot block split across pages.
var reportTmpl = template.Must(template.New("report").Parse(`<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>{{.Title}}</title>
<style>
:root{--pass:#176117;--fail:#a00000;--error:#7a4b00;--measured:#33506e;--incomplete:#8a3c00;--discharge:#5b2a86}
*{box-sizing:border-box}
body{font-family:"Liberation Sans",Arial,Helvetica,system-ui,sans-serif;margin:1.5em auto;max-width:62em;color:#222;padding:0 1em;font-size:15px;line-height:1.35}
h1{font-size:1.45em;margin:.2em 0}h2{font-size:1.15em;margin-top:1.8em;border-bottom:1px solid #bbb}h3{font-size:1.02em;margin:.2em 0}
table{border-collapse:collapse;margin:.5em 0}td,th{border:1px solid #ccc;padding:.15em .4em;text-align:right;font-size:.88em;vertical-align:top}
th{background:#f2f2f2;font-weight:600}td.l,th.l{text-align:left}
.num{white-space:nowrap;font-variant-numeric:tabular-nums}
table.shots{width:100%}table.shots td.l{overflow-wrap:anywhere}table.shots td.shot{min-width:7em}table.shots td.v{white-space:nowrap;overflow-wrap:normal}table.shots td.shape{overflow-wrap:normal}@media (max-width:900px){table.shots{font-size:.85em}}
table.shots tbody.first tr:first-child td{border-top:2px solid #999}.shot h3,#stats-table td.l{overflow-wrap:anywhere}table.shots tr.why td{text-align:left;border-top:none;font-size:.82em;color:#444;overflow-wrap:anywhere}
.pass{color:var(--pass);font-weight:bold}.fail{color:var(--fail);font-weight:bold}.error{color:var(--error);font-weight:bold}.measured{color:var(--measured);font-weight:bold}.incomplete{color:var(--incomplete);font-weight:bold}.discharge{color:var(--discharge);font-weight:bold}
dl.facts{display:grid;grid-template-columns:max-content 1fr;gap:.1em 1em;margin:.6em 0}dl.facts dt{font-weight:600}dl.facts dd{margin:0;overflow-wrap:anywhere}
.synthetic{background:#fde8e8;border:2px solid #a00000;color:#a00000;font-weight:bold;padding:.5em .8em;margin:.8em 0}
.shot{border:1px solid #ddd;padding:.4em .8em;margin:1em 0;border-radius:4px}.charts{break-inside:avoid;margin:.5em 0}
.params{display:flex;flex-wrap:wrap;gap:.2em .4em;margin:.4em 0;padding:0}.params div{border:1px solid #ddd;border-radius:3px;padding:.05em .4em;font-size:.85em;white-space:nowrap}.params dt{display:inline;color:#555}.params dd{display:inline;margin:0 0 0 .3em;font-variant-numeric:tabular-nums}
.msg{overflow-wrap:anywhere}code .arg{display:inline-block;max-width:100%;overflow-wrap:anywhere}
.plot svg,.plot img{width:100%;height:auto;display:block}
.plot svg text{font-family:"Liberation Sans",Arial,Helvetica,sans-serif!important}
.warn{color:var(--error);font-size:.9em}.safety{background:#fff4e5;border:2px solid #e0a040;padding:.6em 1em;margin-top:2.5em}
pre{background:#f7f7f7;padding:.5em;overflow:auto;font-size:.8em;white-space:pre-wrap}
@page{size:A4 portrait;margin:16mm 12mm 16mm 12mm;
 @top-left{content:{{.TitleCSS}};font:8pt "Liberation Sans",Arial,sans-serif;color:#555}
 @bottom-right{content:"page " counter(page) " of " counter(pages);font:8pt "Liberation Sans",Arial,sans-serif;color:#555}}
@media print{body{max-width:none;margin:0;padding:0;font-size:10pt}.shot{break-inside:avoid}h2,h3{break-after:avoid}
 tr,table.shots tbody{break-inside:avoid}a{color:inherit;text-decoration:none}.safety{break-inside:avoid}}
</style></head><body>
<header>
<h1>{{.Title}}</h1>
{{if .Synthetic}}<p class="synthetic" id="synthetic">SYNTHETIC DATA: {{.Synthetic}} made by hvshot's synthesiser or demo, not measured. This is a rehearsal, not a test record.</p>{{end}}
<dl class="facts" id="facts">
<dt>Outcome</dt><dd class="{{.OutcomeClass}}">{{.Outcome}}</dd>
{{range $i, $t := .Tests}}<dt>Test outcome</dt><dd id="test-outcome-{{$i}}"><span class="{{index $.TestClass $i}}">{{index $t 0}}</span>{{range slice $t 1}}<br>{{.}}{{end}}</dd>
{{end}}{{with .Record}}<dt>Test object</dt><dd>{{or .Object "not stated"}}{{if .ObjectID}}, {{.ObjectID}}{{end}}</dd>
<dt>Laboratory</dt><dd>{{or .Laboratory "not stated"}}</dd>
<dt>Operator</dt><dd>{{or .Operator "not stated"}}</dd>
<dt>Measuring system</dt><dd>{{$.Measuring}}</dd>
{{else}}<dt>Test record</dt><dd>not described: the test object, laboratory, operator and measuring system go in the setup file (docs/setup.md)</dd>
{{end}}<dt>Shots fired</dt><dd>{{.Fired}}</dd>
<dt>Nominal</dt><dd>{{.Nominal}}</dd>
{{if .Air}}<dt>Atmosphere</dt><dd>{{.Air}}</dd>{{end}}
<dt>Tolerances</dt><dd>{{.Tolerances}}</dd>
<dt>Overshoot</dt><dd>relative to {{.Over}}</dd>
<dt>Uncertainty</dt><dd>{{.Uncert}}</dd>
<dt>Setup</dt><dd>{{if .SetupPath}}{{.SetupPath}}{{else}}none: every channel a divider channel in volts unless a role was given{{end}}</dd>
{{if .Ratios}}<dt>Ratios</dt><dd>{{.Ratios}}</dd>{{end}}
{{if .Command}}<dt>Command</dt><dd><code>{{range .Command}}<span class="arg">{{.}}</span> {{end}}</code></dd>{{end}}
<dt>Made</dt><dd>{{.When}} by hvshot {{.Version}}</dd>
</dl>
</header>
<h2 id="summary">Series summary</h2>
<table id="summary-table">
<tr><th class="l">files</th><td>{{.Sum.Files}}</td></tr>
{{if ne .Sum.Shots .Sum.Files}}<tr><th class="l">shots</th><td>{{.Sum.Shots}}</td></tr>{{end}}
<tr><th class="l">channel rows</th><td>{{.Sum.Rows}}</td></tr>
<tr><th class="l">pass</th><td class="pass">{{.Sum.Pass}}</td></tr>
<tr><th class="l">fail</th><td class="fail">{{.Sum.Fail}}</td></tr>
<tr><th class="l">error</th><td class="error">{{.Sum.Errors}}</td></tr>
{{if .Sum.Incomplete}}<tr><th class="l">incomplete (compliance not shown)</th><td class="incomplete">{{.Sum.Incomplete}}</td></tr>{{end}}
{{if .Sum.Discharge}}<tr><th class="l">disruptive discharge (in a test)</th><td class="discharge">{{.Sum.Discharge}}</td></tr>{{end}}
{{if .Sum.Measured}}<tr><th class="l">measured (no tolerance applies)</th><td class="measured">{{.Sum.Measured}}</td></tr>{{end}}
</table>
{{if .Sum.Interrupted}}<p class="fail">The run was interrupted: only the shots finished before the stop are here.</p>{{end}}
{{if .Stats}}<table id="stats-table"><tr><th class="l">parameter</th><th class="l">shots</th><th>n</th><th>mean</th><th>sd</th><th>min</th><th>max</th><th class="l">unit</th></tr>
{{range .Stats}}<tr>{{range $i, $c := .}}<td class="{{if or (eq $i 0) (eq $i 1) (eq $i 7)}}l{{else}}num{{end}}">{{$c}}</td>{{end}}</tr>
{{end}}</table>{{end}}
{{if .Charts}}<h2 id="series-charts">The series at a glance</h2>
<div class="plot charts">{{.Charts}}</div>{{end}}
<h2>Shots, failing and unreadable first</h2>
<table class="shots" id="shots-table"><thead><tr><th title="in firing order, as the series charts number it">no.</th><th class="l">shot</th><th class="l">channel</th><th class="l">shape</th><th class="l">pol.</th>{{range .Heads}}<th>{{.Label}}<br>{{.Unit}}</th>{{end}}<th class="l">verdict</th></tr></thead>
{{range $i, $r := .Rows}}{{if .First}}{{if $i}}</tbody>{{end}}<tbody class="first">{{end}}<tr><td class="num">{{if .First}}{{.No}}{{end}}</td><td class="l shot">{{if .First}}<a href="#{{.Anchor}}">{{.R.File}}</a>{{end}}</td><td class="l">{{.Channel}}</td><td class="l shape">{{.R.Shape}}</td><td class="l">{{.Pol}}</td>{{range .Cells}}<td class="num">{{.}}</td>{{end}}<td class="l v {{.R.Verdict}}">{{.R.Verdict.Word}}</td></tr>
{{if .Why}}<tr class="why"><td></td><td></td><td colspan="{{$.Span}}" class="{{.R.Verdict}}-why">{{.Why}}</td></tr>{{end}}
{{end}}{{if .Rows}}</tbody>{{end}}</table>
{{range .Rows}}<section class="shot" id="{{.Anchor}}"><h3>{{.R.File}}{{if ne .Channel "-"}} · {{.Channel}}{{end}}: <span class="{{.R.Verdict}}">{{.R.Verdict.Word}}</span></h3>
{{if .Kind}}<p>{{.Kind}}</p>{{end}}
{{if .Why}}<p class="{{.R.Verdict}} msg">{{.Why}}</p>{{end}}
{{if .R.Advice}}<p class="msg" id="{{.Anchor}}-resistors">{{.R.Advice}}</p>{{end}}
{{if .Params}}<dl class="params">{{range .Params}}<div><dt>{{.K}}</dt><dd>{{.V}}</dd></div>{{end}}</dl>{{end}}
{{range .R.Warnings}}<p class="warn msg">warning {{.Code}}: {{.Text}}</p>{{end}}
{{call $.Plot .R.Plot}}</section>
{{end}}
<h2>Setup used</h2>
{{if .SetupText}}<p>{{.SetupPath}}</p><pre>{{.SetupText}}</pre>{{else}}<p>No setup file: every channel evaluated as a divider channel in volts unless a role was given, tolerances of IEC 60060-1:2010.</p>{{end}}
<div class="safety" id="safety"><h2>Safety</h2><p>{{.Safety}}</p></div>
</body></html>
`))

type htmlRow struct {
	R       *shot.Row
	No      int  // in firing order, as the series charts number it
	First   bool // the first row of its shot
	Anchor  string
	Channel string
	Kind    string // shape and polarity in words
	Pol     string
	Why     string
	Cells   []string
	Params  []struct{ K, V string }
}

// HTML writes the self-contained report: inline CSS, plots inlined (SVG as markup,
// PNG as data), no network.
func HTML(w io.Writer, p Page) error {
	// Shots with errors first, then failures, each shot's rows together.
	rank := map[shot.Verdict]int{shot.Error: 0, shot.Fail: 1, shot.Incomplete: 2}
	worst := map[string]int{}
	synthetic := map[string]bool{}
	for i := range p.Rows {
		r := &p.Rows[i]
		k, ok := rank[r.Verdict]
		if !ok {
			k = 3
		}
		if v, seen := worst[r.File]; !seen || k < v {
			worst[r.File] = k
		}
		if r.Synthetic {
			synthetic[r.File] = true
		}
	}
	idx := make([]int, len(p.Rows))
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(a, b int) bool { return worst[p.Rows[idx[a]].File] < worst[p.Rows[idx[b]].File] })
	cols := consoleColumns()
	type head struct{ Label, Unit string }
	var heads []head
	for _, c := range cols {
		heads = append(heads, head{c.Label, strings.ReplaceAll(c.Screen, "us", "µs")})
	}
	var rows []htmlRow
	order, _ := FiringOrder(p.Rows)
	k := 0
	for n, i := range idx {
		r := &p.Rows[i]
		first := n == 0 || r.File != p.Rows[idx[n-1]].File
		if first {
			k = 0
		}
		x := htmlRow{R: r, First: first, Anchor: shot.Anchor(r.File, k), Channel: r.Channel, Why: Why(r), Pol: polWord(r.Polarity), No: order[r.File]}
		k++
		if x.Channel == "" {
			x.Channel = "-"
		}
		x.Kind = strings.TrimSuffix(string(r.Shape)+", "+string(r.Polarity), ", ")
		if r.Shape == "" {
			x.Kind = string(r.Polarity)
		}
		for _, c := range cols {
			x.Cells = append(x.Cells, Cell(r, c))
		}
		for _, c := range shot.Columns {
			if _, ok := r.Value(c); ok && c.Of == nil {
				x.Params = append(x.Params, struct{ K, V string }{c.Label, ValueWithUncertainty(r, c)})
			}
		}
		rows = append(rows, x)
	}
	var stats [][]string
	for _, st := range p.Summary.Stats {
		mean, sd, lo, hi, unit := StatCells(st)
		stats = append(stats, []string{st.Name, st.Group, strconv.Itoa(st.N), mean, sd, lo, hi, strings.ReplaceAll(unit, "us", "µs")})
	}
	cfg := p.Config
	if cfg == nil {
		cfg = shot.NewConfig()
	}
	nominal := "the standard shape of the family found (1.2/50 or 250/2500 µs)"
	if cfg.Nominal.Front_s > 0 {
		nominal = cfg.Nominal.String() + " µs"
	}
	if cfg.Nominal.Chopped {
		nominal += ", chopped impulses intended"
	}
	if cfg.Nominal.Peak_v > 0 {
		nominal += ", test voltage " + shot.FormatDigits(cfg.Nominal.Peak_v/1e3, 4, false) + " kV"
		if corr, err := cfg.Atmosphere(); err == nil && corr != nil {
			nominal += " at the standard atmosphere, judged against " + shot.FormatDigits(atmos.ToApply(cfg.Nominal.Peak_v, *corr)/1e3, 4, false) + " kV applied (U0 Kt)"
		}
	}
	t := cfg.Tolerances
	f := func(v float64) string { return strconv.FormatFloat(v, 'g', 4, 64) }
	// a tolerance other than the standard's says so beside it
	std := impulse.DefaultTolerances()
	g := func(v, s float64) string {
		if v == s {
			return f(v) + " %"
		}
		return f(v) + " % (IEC 60060-1:2010: " + f(s) + " %)"
	}
	tolerances := "test voltage ±" + g(t.TestVoltage_pct, std.TestVoltage_pct) + "; lightning T1 ±" + g(t.Front_pct, std.Front_pct) + ", T2 ±" + g(t.Tail_pct, std.Tail_pct) +
		", overshoot at most " + g(t.OvershootMax_pct, std.OvershootMax_pct) + "; switching Tp ±" + g(t.TimeToPeak_pct, std.TimeToPeak_pct) + ", T2 ±" + g(t.SwitchingTail_pct, std.SwitchingTail_pct)
	s := p.Summary
	outcome, class := "every shot evaluated and within tolerance", "pass"
	var parts []string
	for _, p := range []struct {
		n           int
		what, class string
	}{{s.Fail, "out of tolerance", "fail"}, {s.Incomplete, "incomplete (compliance not shown)", "incomplete"}, {s.Errors, "not evaluated", "error"}, {s.Discharge, "with a disruptive discharge of the test object", "discharge"}} {
		if p.n > 0 {
			if len(parts) == 0 {
				class = p.class
			}
			parts = append(parts, strconv.Itoa(p.n)+" "+map[bool]string{true: "channel row", false: "channel rows"}[p.n == 1]+" "+p.what)
		}
	}
	if len(parts) > 0 {
		outcome = strings.Join(parts, ", ")
	}
	if s.Interrupted {
		outcome += " (interrupted: not every shot is here)"
	}
	title := "hvshot report"
	if s.Series != "" {
		title += ": " + s.Series
	}
	syn := ""
	if n := len(synthetic); n > 0 {
		// a file that could not be read, or a format with no room for a note (.npy),
		// cannot say what it is: the banner says how many say so, not more
		syn = strconv.Itoa(n) + " of " + strconv.Itoa(len(worst)) + " shots are marked synthetic (the other " + strconv.Itoa(len(worst)-n) +
			" carry no mark either way: unreadable, or in a format with no room for one),"
		if n == len(worst) {
			syn = "every shot is synthetic,"
		}
	}
	plot := func(rel string) template.HTML {
		if rel == "" || p.Plot == nil {
			return ""
		}
		b, err := p.Plot(rel)
		if err != nil {
			return template.HTML(`<p class="warn msg">plot ` + template.HTMLEscapeString(rel) + ` could not be read: ` + template.HTMLEscapeString(err.Error()) + `</p>`)
		}
		if strings.HasSuffix(rel, ".svg") {
			s := string(b)
			if i := strings.Index(s, "<svg"); i >= 0 {
				s = s[i:]
			}
			return template.HTML(`<div class="plot">` + s + `</div>`)
		}
		return template.HTML(`<div class="plot"><img alt="plot of ` + template.HTMLEscapeString(rel) + `" src="data:image/png;base64,` + base64.StdEncoding.EncodeToString(b) + `"></div>`)
	}
	// The page margin's text, as a CSS string: html/template refuses text in a style
	// sheet unless it is typed as CSS, so quote it here, escaping what could end it.
	titleCSS := template.CSS(`"` + strings.NewReplacer(`\`, `\\`, `"`, `\"`, "\n", " ", "<", `\3c `, ">", `\3e `).Replace(title) + `"`)
	var charts bytes.Buffer
	if err := SeriesCharts(&charts, p.Rows, p.Traces, cfg); err != nil {
		return err
	}
	chartsHTML := template.HTML("")
	if s := charts.String(); strings.Contains(s, "<svg") {
		chartsHTML = template.HTML(s[strings.Index(s, "<svg"):])
	}
	var tests [][]string
	var testClasses []string
	for _, t := range s.Tests {
		tests, testClasses = append(tests, TestLines(t)), append(testClasses, testClass(t))
	}
	data := map[string]any{
		"Charts": chartsHTML,
		"Title":  title, "TitleCSS": titleCSS, "Sum": s, "Rows": rows, "Heads": heads, "Span": len(heads) + 4, "Stats": stats, "Version": p.Version,
		"When": p.Made.Format("2006-01-02 15:04 MST"), "Nominal": nominal, "Tolerances": tolerances, "Outcome": outcome, "OutcomeClass": class,
		"Over":   map[string]string{"extreme": "Ue, the extreme value", "base": "Ub, the base curve's maximum"}[cfg.Settings.OvershootOver],
		"Safety": Safety, "Plot": plot, "Synthetic": syn, "Command": s.Command, "Ratios": ratios(cfg),
		"Tests": tests, "TestClass": testClasses,
	}
	if cfg.Setup != nil {
		data["SetupText"], data["SetupPath"] = cfg.Setup.Text, cfg.Setup.Path
	}
	if r := cfg.Record; !r.Empty() {
		ms := []string{r.MeasuringSystem}
		if r.MeasuringSystem == "" {
			ms[0] = "not named"
		}
		if r.Uncertainty_pct > 0 {
			ms = append(ms, "expanded uncertainty "+f(r.Uncertainty_pct)+" %")
		}
		if r.Calibrated != "" {
			ms = append(ms, "calibrated "+r.Calibrated)
		}
		data["Record"], data["Measuring"] = r, strings.Join(ms, ", ")
	}
	data["Air"] = air(cfg)
	data["Uncert"] = UncertaintyNote(cfg)
	fired := "not known (no capture states it)"
	if a, b := s.FirstFired, s.LastFired; a != nil {
		fired = a.Format("2006-01-02 15:04")
		switch {
		case b.Sub(*a) < time.Minute:
		case a.Format("2006-01-02") == b.Format("2006-01-02"):
			fired += " to " + b.Format("15:04")
		default:
			fired += " to " + b.Format("2006-01-02 15:04")
		}
		fired += " UTC (as the captures state it, else as their files were saved)"
	}
	data["Fired"] = fired
	return reportTmpl.Execute(w, data)
}

// ratios says which divider ratios the command line set, which otherwise only the
// results would show the effect of.
func ratios(cfg *shot.Config) string {
	var out []string
	if cfg.Ratio != 0 {
		out = append(out, "every divider channel x "+strconv.FormatFloat(cfg.Ratio, 'g', -1, 64))
	}
	keys := make([]string, 0, len(cfg.Ratios))
	for k := range cfg.Ratios {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, k := range keys {
		out = append(out, k+" x "+strconv.FormatFloat(cfg.Ratios[k], 'g', -1, 64))
	}
	return strings.Join(out, "; ")
}

// testClass is the colour of a test's headline: its worst polarity's verdict.
func testClass(t *shot.TestOutcome) string {
	class := "pass"
	for _, r := range t.Results {
		switch r.Verdict {
		case outcome.Failed:
			return "fail"
		case outcome.NotDecided:
			class = "incomplete"
		case outcome.Determined:
			if class == "pass" {
				class = ""
			}
		}
	}
	return class
}

// air states the series' atmospheric correction with every factor, for the header.
func air(cfg *shot.Config) string {
	if cfg.Air != nil && (len(cfg.Tests) > 0 || cfg.Nominal.Peak_v == 0) {
		c := *cfg.Air
		h := fmt.Sprintf("h %.1f g/m³", c.AbsHumidity_g_per_m3)
		if c.RelHumidity_pct > 0 {
			h = fmt.Sprintf("%.0f %% relative humidity (h %.1f g/m³)", c.RelHumidity_pct, atmos.AbsoluteHumidity(c.Temperature_c, c.RelHumidity_pct))
		}
		return fmt.Sprintf("%.1f kPa, %.1f °C, %s: each test is corrected at its own level and discharge path, a withstand voltage as U0 Kt, a U50 as U50/Kt with Kt at U_B = U50 (Test outcome)",
			c.Pressure_pa/1e3, c.Temperature_c, h)
	}
	corr, err := cfg.Atmosphere()
	switch {
	case err != nil:
		return "not corrected: " + err.Error()
	case corr == nil:
		return ""
	}
	c := corr.Conditions
	g := func(v float64, n int) string { return strconv.FormatFloat(v, 'f', n, 64) }
	txt := g(c.Pressure_pa/1e3, 1) + " kPa, " + g(c.Temperature_c, 1) + " °C, "
	if c.RelHumidity_pct > 0 {
		txt += g(c.RelHumidity_pct, 0) + " % relative humidity (h " + g(corr.H_g_per_m3, 1) + " g/m³); "
	} else {
		txt += "h " + g(corr.H_g_per_m3, 1) + " g/m³; "
	}
	txt += "discharge path " + g(corr.Path_m, 2) + " m. δ " + g(corr.Delta, 4) + ", k " + g(corr.K, 4) + ", g " + g(corr.G, 3) +
		", m " + g(corr.M, 3) + ", w " + g(corr.W, 3) + ", k1 " + g(corr.K1, 4) + ", k2 " + g(corr.K2, 4) + ", Kt " + g(corr.Kt, 4) +
		". For the withstand test at " + g(cfg.Nominal.Peak_v/1e3, 1) + " kV (U_B = 1.1 × it), apply U0 Kt = " + g(atmos.ToApply(cfg.Nominal.Peak_v, *corr)/1e3, 1) +
		" kV (IEC 60060-1 clause 4.3, as docs/method.md recalls it)"
	for _, w := range corr.Warnings {
		txt += "; " + w.Text
	}
	return txt
}
