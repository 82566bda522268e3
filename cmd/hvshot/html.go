package main

import (
	"bytes"
	"encoding/base64"
	"html/template"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"time"
)

const safetyText = `High voltage kills. An impulse generator stores lethal energy in its capacitors and
can recharge itself from dielectric absorption after it has been discharged. Before anyone
enters the test area: switch off and lock out the charging supply, discharge every stage with
the earthing rod, apply the permanent earths, and check that they are in place. Follow the
local electrical codes, the laboratory's procedures and licensed practice. hvshot evaluates
records after the fact; it never replaces a qualified person's judgement or the laboratory's
safety system, and nothing it prints is a reason to approach energised equipment.`

var reportTmpl = template.Must(template.New("report").Funcs(template.FuncMap{
	"eng":   func(v *float64, scale float64, prec int) string { return eng(v, scale, prec) },
	"base":  shotName,
	"lower": strings.ToLower,
}).Parse(`<!DOCTYPE html>
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
{{range .Stats}}<tr><td class="l">{{.Name}}</td><td>{{.N}}</td><td>{{.Mean}}</td><td>{{.SD}}</td><td>{{.Min}}</td><td>{{.Max}}</td><td class="l">{{.Unit}}</td></tr>
{{end}}</table>
<h2>Shots (failing and unreadable first)</h2>
<table id="shots-table"><tr><th class="l">shot</th><th class="l">channel</th><th class="l">shape</th><th>Ut kV</th><th>T1 us</th><th>T2 us</th><th>beta' %</th><th>Tc us</th><th>Tp us</th><th>I kA</th><th>E kV/m</th><th class="l">verdict</th><th class="l">why</th></tr>
{{range .Rows}}<tr><td class="l"><a href="#{{.Anchor}}">{{base .R.File}}</a></td><td class="l">{{.R.Channel}}</td><td class="l">{{.R.Shape}}</td><td>{{eng .R.TestVoltageV 1e-3 1}}</td><td>{{eng .R.FrontTime_s 1e6 3}}</td><td>{{eng .R.TimeToHalf_s 1e6 2}}</td><td>{{eng .R.OvershootPct 1 1}}</td><td>{{eng .R.ChopTime_s 1e6 3}}</td><td>{{eng .R.TimeToPeak_s 1e6 0}}</td><td>{{eng .R.PeakCurrentA 1e-3 2}}</td><td>{{eng .R.PeakFieldVPerM 1e-3 2}}</td><td class="l {{.R.Verdict}}">{{.Word}}</td><td class="l">{{.Why}}</td></tr>
{{end}}</table>
{{range .Rows}}<div class="shot" id="{{.Anchor}}"><h3>{{base .R.File}} / {{.R.Channel}}: <span class="{{.R.Verdict}}">{{.Word}}</span></h3>
<p>{{.R.File}}{{if .R.Shape}} · {{.R.Shape}}, {{.R.Polarity}}{{end}}</p>
{{if .Why}}<p class="{{.R.Verdict}}">{{.Why}}</p>{{end}}
<table><tr>{{range .Params}}<th>{{.K}}</th>{{end}}</tr><tr>{{range .Params}}<td>{{.V}}</td>{{end}}</tr></table>
{{range .R.Warnings}}<p class="warn">warning {{.Code}}: {{.Text}}</p>{{end}}
{{.Plot}}</div>
{{end}}
<h2>Setup used</h2>
{{if .SetupText}}<p>{{.SetupPath}}</p><pre>{{.SetupText}}</pre>{{else}}<p>No setup file: every channel evaluated as a divider channel in volts, tolerances of IEC 60060-1:2010.</p>{{end}}
<div class="safety" id="safety"><h2>Safety</h2><p>{{.Safety}}</p></div>
</body></html>
`))

type reportRow struct {
	R      *Row
	Anchor string
	Word   string
	Why    string
	Params []struct{ K, V string }
	Plot   template.HTML
}

func renderReport(cfg *Config, rows []Row, sum Summary) ([]byte, error) {
	rank := map[string]int{"error": 0, "fail": 1, "pass": 2}
	idx := make([]int, len(rows))
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(a, b int) bool { return rank[rows[idx[a]].Verdict] < rank[rows[idx[b]].Verdict] })
	var rr []reportRow
	for n, i := range idx {
		r := &rows[i]
		x := reportRow{R: r, Anchor: "shot" + strconv.Itoa(n), Word: verdictWord(r.Verdict), Why: r.failureWords()}
		add := func(k string, v *float64, scale float64, prec int) {
			if v != nil {
				x.Params = append(x.Params, struct{ K, V string }{k, eng(v, scale, prec)})
			}
		}
		add("Ut kV", r.TestVoltageV, 1e-3, 2)
		add("Ue kV", r.ExtremeV, 1e-3, 2)
		add("Ub kV", r.BasePeakV, 1e-3, 2)
		add("beta' %", r.OvershootPct, 1, 2)
		add("T1 us", r.FrontTime_s, 1e6, 3)
		add("T2 us", r.TimeToHalf_s, 1e6, 2)
		add("O1 us", r.Origin_s, 1e6, 3)
		add("Tc us", r.ChopTime_s, 1e6, 3)
		add("Uc kV", r.ChopVoltageV, 1e-3, 2)
		add("Tp us", r.TimeToPeak_s, 1e6, 1)
		add("Td us", r.TimeAbove90_s, 1e6, 1)
		add("Tz us", r.TimeToZero_s, 1e6, 1)
		add("efficiency", r.Efficiency, 1, 3)
		add("ringing MHz", r.ResidualHz, 1e-6, 2)
		add("I kA", r.PeakCurrentA, 1e-3, 3)
		add("di/dt kA/us", r.MaxDidt, 1e-9, 3)
		add("rise us", r.RiseTime_s, 1e6, 3)
		add("Q mC", r.ChargeC, 1e3, 3)
		add("action A2s", r.ActionA2s, 1, 4)
		add("E kV/m", r.PeakFieldVPerM, 1e-3, 3)
		add("dE end kV/m", r.FieldEndVPerM, 1e-3, 3)
		add("tau us", r.DroopTau_s, 1e6, 1)
		if r.plot != "" {
			if b, err := os.ReadFile(filepath.Join(cfg.OutDir, r.plot)); err == nil {
				if strings.HasSuffix(r.plot, ".svg") {
					s := string(b)
					if i := strings.Index(s, "<svg"); i >= 0 {
						s = s[i:]
					}
					x.Plot = template.HTML(`<div class="plot">` + s + `</div>`)
				} else {
					x.Plot = template.HTML(`<img class="plot" alt="plot" src="data:image/png;base64,` + base64.StdEncoding.EncodeToString(b) + `">`)
				}
			}
		}
		rr = append(rr, x)
	}
	type statRow struct {
		Name, Unit         string
		N                  int
		Mean, SD, Min, Max string
	}
	var stats []statRow
	for _, st := range sum.display() {
		stats = append(stats, statRow{st.Name, st.Unit, st.N, trimFloat(st.Mean), trimFloat(st.SD), trimFloat(st.Min), trimFloat(st.Max)})
	}
	nominal := "standard shape of the family found (1.2/50 or 250/2500)"
	if cfg.HasNominal {
		nominal = cfg.Nominal.String() + " us"
	}
	if cfg.Nominal.Peak_v > 0 {
		nominal += ", test voltage " + trimFloat(cfg.Nominal.Peak_v/1e3) + " kV"
	}
	data := map[string]any{
		"Sum": sum, "Rows": rr, "Stats": stats, "Version": Version, "When": time.Now().Format("2006-01-02 15:04"),
		"Nominal": nominal, "Over": map[string]string{"extreme": "Ue (extreme value)", "base": "Ub (base curve maximum)"}[cfg.Settings.OvershootOver],
		"Safety": safetyText,
	}
	if cfg.Setup != nil {
		data["SetupText"], data["SetupPath"] = cfg.Setup.Text, cfg.Setup.Path
	}
	var b bytes.Buffer
	err := reportTmpl.Execute(&b, data)
	return b.Bytes(), err
}

func trimFloat(v float64) string {
	s := strings.TrimRight(strings.TrimRight(strconv.FormatFloat(v, 'f', 4, 64), "0"), ".")
	if s == "" || s == "-" {
		return "0"
	}
	return s
}
