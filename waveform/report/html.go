package report

import (
	"encoding/base64"
	"html/template"
	"io"
	"sort"
	"strconv"
	"strings"
	"time"

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
	Config  *shot.Config
	Version string
	Made    time.Time
	// Plot returns a plot file's bytes (Row.Plot names it); the report inlines each
	// one as it is written, so only one is in memory at a time.
	Plot func(rel string) ([]byte, error)
}

var reportTmpl = template.Must(template.New("report").Parse(`<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8">
<title>hvshot report{{if .Sum.Series}}: {{.Sum.Series}}{{end}}</title>
<style>
body{font-family:system-ui,sans-serif;margin:1.5em auto;max-width:70em;color:#222;padding:0 1em}
h1{font-size:1.5em}h2{font-size:1.2em;margin-top:2em;border-bottom:1px solid #ccc}
table{border-collapse:collapse;margin:.5em 0}td,th{border:1px solid #ccc;padding:.2em .5em;text-align:right;font-size:.9em}
th{background:#f2f2f2}td.l,th.l{text-align:left}
.pass{color:#176117;font-weight:bold}.fail{color:#a00;font-weight:bold}.error{color:#7a4b00;font-weight:bold}
.shot{border:1px solid #ddd;padding:.5em 1em;margin:1em 0;border-radius:4px}
.shot img,.shot svg{max-width:100%;height:auto}
.warn{color:#7a4b00}.safety{background:#fff4e5;border:2px solid #e0a040;padding:.8em 1em;margin-top:3em}
pre{background:#f7f7f7;padding:.5em;overflow:auto;font-size:.85em}
</style></head><body>
<h1>hvshot report{{if .Sum.Series}}: {{.Sum.Series}}{{end}}</h1>
<p>Made {{.When}} by hvshot {{.Version}}. Nominal: {{.Nominal}}. Overshoot denominator: {{.Over}}.</p>
<h2 id="summary">Series summary</h2>
<table id="summary-table">
<tr><th class="l">files</th><td>{{.Sum.Files}}</td></tr>
<tr><th class="l">channel rows</th><td>{{.Sum.Rows}}</td></tr>
<tr><th class="l">pass</th><td class="pass">{{.Sum.Pass}}</td></tr>
<tr><th class="l">fail</th><td class="fail">{{.Sum.Fail}}</td></tr>
<tr><th class="l">error</th><td class="error">{{.Sum.Errors}}</td></tr>
</table>
{{if .Sum.Interrupted}}<p class="fail">The run was interrupted: only the shots finished before the stop are here.</p>{{end}}
<table id="stats-table"><tr><th class="l">parameter</th><th>n</th><th>mean</th><th>sd</th><th>min</th><th>max</th><th class="l">unit</th></tr>
{{range .Stats}}<tr>{{range $i, $c := .}}<td{{if or (eq $i 0) (eq $i 6)}} class="l"{{end}}>{{$c}}</td>{{end}}</tr>
{{end}}</table>
<h2>Shots (failing and unreadable first)</h2>
<table id="shots-table"><tr><th class="l">shot</th><th class="l">channel</th><th class="l">shape</th>{{range .Heads}}<th>{{.}}</th>{{end}}<th class="l">verdict</th><th class="l">why</th></tr>
{{range .Rows}}<tr><td class="l"><a href="#{{.Anchor}}">{{.R.File}}</a></td><td class="l">{{.R.Channel}}</td><td class="l">{{.R.Shape}}</td>{{range .Cells}}<td>{{.}}</td>{{end}}<td class="l {{.R.Verdict}}">{{.R.Verdict.Word}}</td><td class="l">{{.Why}}</td></tr>
{{end}}</table>
{{range .Rows}}<div class="shot" id="{{.Anchor}}"><h3>{{.R.File}} / {{.R.Channel}}: <span class="{{.R.Verdict}}">{{.R.Verdict.Word}}</span></h3>
{{if .R.Shape}}<p>{{.R.Shape}}, {{.R.Polarity}}</p>{{end}}
{{if .Why}}<p class="{{.R.Verdict}}">{{.Why}}</p>{{end}}
<table><tr>{{range .Params}}<th>{{.K}}</th>{{end}}</tr><tr>{{range .Params}}<td>{{.V}}</td>{{end}}</tr></table>
{{range .R.Warnings}}<p class="warn">warning {{.Code}}: {{.Text}}</p>{{end}}
{{call $.Plot .R.Plot}}</div>
{{end}}
<h2>Setup used</h2>
{{if .SetupText}}<p>{{.SetupPath}}</p><pre>{{.SetupText}}</pre>{{else}}<p>No setup file: every channel evaluated as a divider channel in volts unless a role was given, tolerances of IEC 60060-1:2010.</p>{{end}}
<div class="safety" id="safety"><h2>Safety</h2><p>{{.Safety}}</p></div>
</body></html>
`))

type htmlRow struct {
	R      *shot.Row
	Anchor string
	Why    string
	Cells  []string
	Params []struct{ K, V string }
}

// HTML writes the self-contained report: inline CSS, plots inlined (SVG as markup,
// PNG as data), no network.
func HTML(w io.Writer, p Page) error {
	// Shots with failures and errors first, each shot's rows together.
	rank := map[shot.Verdict]int{shot.Error: 0, shot.Fail: 1}
	worst := map[string]int{}
	for i := range p.Rows {
		r := &p.Rows[i]
		k, ok := rank[r.Verdict]
		if !ok {
			k = 2
		}
		if v, seen := worst[r.File]; !seen || k < v {
			worst[r.File] = k
		}
	}
	idx := make([]int, len(p.Rows))
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(a, b int) bool { return worst[p.Rows[idx[a]].File] < worst[p.Rows[idx[b]].File] })
	cols := consoleColumns()
	var heads []string
	for _, c := range cols {
		heads = append(heads, Header(c))
	}
	var rows []htmlRow
	k := 0
	for n, i := range idx {
		r := &p.Rows[i]
		if n > 0 && r.File != p.Rows[idx[n-1]].File {
			k = 0
		}
		x := htmlRow{R: r, Anchor: shot.Anchor(r.File, k), Why: Why(r)}
		k++
		for _, c := range cols {
			x.Cells = append(x.Cells, Cell(r, c))
		}
		for _, c := range shot.Columns {
			if v, ok := r.Value(c); ok {
				x.Params = append(x.Params, struct{ K, V string }{Header(c), c.Format(v)})
			}
		}
		rows = append(rows, x)
	}
	var stats [][]string
	for _, st := range p.Summary.Stats {
		mean, sd, lo, hi, unit := StatCells(st)
		stats = append(stats, []string{st.Name, strconv.Itoa(st.N), mean, sd, lo, hi, unit})
	}
	cfg := p.Config
	if cfg == nil {
		cfg = shot.NewConfig()
	}
	nominal := "standard shape of the family found (1.2/50 or 250/2500)"
	if cfg.Nominal.Front_s > 0 {
		nominal = cfg.Nominal.String() + " us"
	}
	if cfg.Nominal.Chopped {
		nominal += ", chopped"
	}
	if cfg.Nominal.Peak_v > 0 {
		nominal += ", test voltage " + shot.FormatDigits(cfg.Nominal.Peak_v/1e3, 4, false) + " kV"
	}
	plot := func(rel string) template.HTML {
		if rel == "" || p.Plot == nil {
			return ""
		}
		b, err := p.Plot(rel)
		if err != nil {
			return template.HTML(`<p class="warn">plot ` + template.HTMLEscapeString(rel) + ` could not be read: ` + template.HTMLEscapeString(err.Error()) + `</p>`)
		}
		if strings.HasSuffix(rel, ".svg") {
			s := string(b)
			if i := strings.Index(s, "<svg"); i >= 0 {
				s = s[i:]
			}
			return template.HTML(`<div class="plot">` + s + `</div>`)
		}
		return template.HTML(`<img class="plot" alt="plot of ` + template.HTMLEscapeString(rel) + `" src="data:image/png;base64,` + base64.StdEncoding.EncodeToString(b) + `">`)
	}
	data := map[string]any{
		"Sum": p.Summary, "Rows": rows, "Heads": heads, "Stats": stats, "Version": p.Version, "When": p.Made.Format("2006-01-02 15:04"),
		"Nominal": nominal, "Over": map[string]string{"extreme": "Ue (extreme value)", "base": "Ub (base curve maximum)"}[cfg.Settings.OvershootOver],
		"Safety": Safety, "Plot": plot,
	}
	if cfg.Setup != nil {
		data["SetupText"], data["SetupPath"] = cfg.Setup.Text, cfg.Setup.Path
	}
	return reportTmpl.Execute(w, data)
}
