package main

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"text/tabwriter"
)

// writeAtomic writes data to a temporary file beside path and renames it into place,
// so a reader, or a run killed mid-way, never sees half a file.
func writeAtomic(path string, data []byte) error {
	dir := filepath.Dir(path)
	f, err := os.CreateTemp(dir, "."+filepath.Base(path)+".tmp-*")
	if err != nil {
		return err
	}
	tmp := f.Name()
	// CreateTemp makes the file private; results are for the whole lab to read.
	if err := f.Chmod(0o644); err != nil {
		f.Close()
		os.Remove(tmp)
		return err
	}
	if _, err := f.Write(data); err != nil {
		f.Close()
		os.Remove(tmp)
		return err
	}
	if err := f.Sync(); err != nil {
		f.Close()
		os.Remove(tmp)
		return err
	}
	if err := f.Close(); err != nil {
		os.Remove(tmp)
		return err
	}
	return os.Rename(tmp, path)
}

// csvColumns are the CSV header, the JSON keys in a fixed order.
var csvColumns = []string{"file", "channel", "role", "shape", "polarity", "test_voltage_v", "extreme_v", "base_peak_v",
	"overshoot_pct", "front_time_s", "time_to_half_s", "virtual_origin_s", "chop_time_s", "chop_voltage_v", "collapse_time_s",
	"time_to_peak_s", "time_above_90_s", "time_to_zero_s", "efficiency", "base_tau1_s", "base_tau2_s", "fit_rms_v", "residual_freq_hz",
	"peak_current_a", "max_didt_a_per_s", "rise_time_s", "current_front_time_s", "current_time_to_half_s", "charge_c",
	"action_integral_a2s", "peak_field_v_per_m", "field_change_v_per_m", "droop_tau_s", "verdict", "failures", "warnings", "error"}

func f2s(v *float64) string {
	if v == nil {
		return ""
	}
	return strconv.FormatFloat(*v, 'g', 10, 64)
}

func (r *Row) fields() map[string]string {
	var w []string
	for _, x := range r.Warnings {
		w = append(w, x.Code)
	}
	return map[string]string{
		"file": r.File, "channel": r.Channel, "role": r.Role, "shape": r.Shape, "polarity": r.Polarity,
		"test_voltage_v": f2s(r.TestVoltageV), "extreme_v": f2s(r.ExtremeV), "base_peak_v": f2s(r.BasePeakV),
		"overshoot_pct": f2s(r.OvershootPct), "front_time_s": f2s(r.FrontTime_s), "time_to_half_s": f2s(r.TimeToHalf_s),
		"virtual_origin_s": f2s(r.Origin_s), "chop_time_s": f2s(r.ChopTime_s), "chop_voltage_v": f2s(r.ChopVoltageV),
		"collapse_time_s": f2s(r.Collapse_s), "time_to_peak_s": f2s(r.TimeToPeak_s), "time_above_90_s": f2s(r.TimeAbove90_s),
		"time_to_zero_s": f2s(r.TimeToZero_s), "efficiency": f2s(r.Efficiency), "base_tau1_s": f2s(r.BaseTau1_s),
		"base_tau2_s": f2s(r.BaseTau2_s), "fit_rms_v": f2s(r.FitRMSV), "residual_freq_hz": f2s(r.ResidualHz),
		"peak_current_a": f2s(r.PeakCurrentA), "max_didt_a_per_s": f2s(r.MaxDidt), "rise_time_s": f2s(r.RiseTime_s),
		"current_front_time_s": f2s(r.CurrentFront_s), "current_time_to_half_s": f2s(r.CurrentHalf_s), "charge_c": f2s(r.ChargeC),
		"action_integral_a2s": f2s(r.ActionA2s), "peak_field_v_per_m": f2s(r.PeakFieldVPerM), "field_change_v_per_m": f2s(r.FieldEndVPerM),
		"droop_tau_s": f2s(r.DroopTau_s), "verdict": r.Verdict, "failures": strings.Join(r.Failures, ";"),
		"warnings": strings.Join(w, ";"), "error": r.Error,
	}
}

func encodeCSV(rows []Row) []byte {
	var b bytes.Buffer
	w := csv.NewWriter(&b)
	w.Write(csvColumns)
	for i := range rows {
		f := rows[i].fields()
		rec := make([]string, len(csvColumns))
		for k, c := range csvColumns {
			rec[k] = f[c]
		}
		w.Write(rec)
	}
	w.Flush()
	return b.Bytes()
}

func encodeJSONL(rows []Row) []byte {
	var b bytes.Buffer
	enc := json.NewEncoder(&b)
	for i := range rows {
		enc.Encode(&rows[i])
	}
	return b.Bytes()
}

func eng(v *float64, scale float64, prec int) string {
	if v == nil {
		return "-"
	}
	return strconv.FormatFloat(*v*scale, 'f', prec, 64)
}

// failureWords describes what failed, in words, for screens.
func (r *Row) failureWords() string {
	if r.Verdict == "error" {
		return r.Error
	}
	var p []string
	for _, f := range r.failures {
		p = append(p, f.String())
	}
	if len(p) == 0 && len(r.Failures) > 0 {
		p = r.Failures
	}
	return strings.Join(p, "; ")
}

func verdictWord(v string) string {
	switch v {
	case "pass":
		return "PASS"
	case "fail":
		return "FAIL"
	}
	return "ERROR"
}

// writeTable prints the per-shot table in engineering units, then the summary.
func writeTable(w io.Writer, rows []Row, sum Summary) {
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "shot\tchannel\tshape\tUt kV\tT1 us\tT2 us\tbeta' %\tTc/Tp us\tI kA\tE kV/m\tverdict\twhy / warnings")
	for i := range rows {
		r := &rows[i]
		tcp := eng(r.ChopTime_s, 1e6, 3)
		if r.TimeToPeak_s != nil {
			tcp = eng(r.TimeToPeak_s, 1e6, 0)
		}
		t2prec := 2
		if r.Shape == "switching" {
			t2prec = 0
		}
		why := r.failureWords()
		var codes []string
		for _, x := range r.Warnings {
			if x.Code != "tau-sensitivity" {
				codes = append(codes, x.Code)
			}
		}
		if len(codes) > 0 {
			if why != "" {
				why += "; "
			}
			why += "warn: " + strings.Join(codes, ",")
		}
		shape := r.Shape
		if shape == "" {
			shape = "-"
		}
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\n", shotName(r.File), dash(r.Channel), shape,
			eng(r.TestVoltageV, 1e-3, 1), eng(r.FrontTime_s, 1e6, 3), eng(r.TimeToHalf_s, 1e6, t2prec), eng(r.OvershootPct, 1, 1),
			tcp, eng(r.PeakCurrentA, 1e-3, 2), eng(r.PeakFieldVPerM, 1e-3, 2), verdictWord(r.Verdict), why)
	}
	tw.Flush()
	fmt.Fprintln(w)
	writeSummary(w, sum)
}

func dash(s string) string {
	if s == "" {
		return "-"
	}
	return s
}

// Stat is the spread of one parameter over a series.
type Stat struct {
	Name  string  `json:"name"`
	Unit  string  `json:"unit"`
	N     int     `json:"n"`
	Mean  float64 `json:"mean"`
	SD    float64 `json:"sd"`
	Min   float64 `json:"min"`
	Max   float64 `json:"max"`
	scale float64
	eunit string
}

// Summary is the series summary.
type Summary struct {
	Series      string `json:"series,omitempty"`
	Files       int    `json:"files"`
	Rows        int    `json:"rows"`
	Pass        int    `json:"pass"`
	Fail        int    `json:"fail"`
	Errors      int    `json:"error"`
	Stats       []Stat `json:"stats"`
	Efficiency  *Stat  `json:"efficiency,omitempty"`
	Interrupted bool   `json:"interrupted,omitempty"`
}

func summarize(series string, files int, rows []Row) Summary {
	s := Summary{Series: series, Files: files, Rows: len(rows)}
	params := []struct {
		name, unit, eunit string
		scale             float64
		get               func(*Row) *float64
	}{
		{"test voltage Ut", "V", "kV", 1e-3, func(r *Row) *float64 { return r.TestVoltageV }},
		{"front time T1", "s", "us", 1e6, func(r *Row) *float64 { return r.FrontTime_s }},
		{"time to half-value T2", "s", "us", 1e6, func(r *Row) *float64 { return r.TimeToHalf_s }},
		{"overshoot beta'", "%", "%", 1, func(r *Row) *float64 { return r.OvershootPct }},
		{"peak current", "A", "kA", 1e-3, func(r *Row) *float64 { return r.PeakCurrentA }},
		{"peak field", "V/m", "kV/m", 1e-3, func(r *Row) *float64 { return r.PeakFieldVPerM }},
	}
	for i := range rows {
		switch rows[i].Verdict {
		case "pass":
			s.Pass++
		case "fail":
			s.Fail++
		default:
			s.Errors++
		}
	}
	stat := func(name, unit, eunit string, scale float64, get func(*Row) *float64) Stat {
		st := Stat{Name: name, Unit: unit, eunit: eunit, scale: scale, Min: math.Inf(1), Max: math.Inf(-1)}
		var sum, sq float64
		for i := range rows {
			if v := get(&rows[i]); v != nil {
				st.N++
				sum += *v
				sq += *v * *v
				st.Min = math.Min(st.Min, *v)
				st.Max = math.Max(st.Max, *v)
			}
		}
		if st.N > 0 {
			st.Mean = sum / float64(st.N)
			if st.N > 1 {
				st.SD = math.Sqrt(math.Max(0, (sq-float64(st.N)*st.Mean*st.Mean)/float64(st.N-1)))
			}
		}
		return st
	}
	for _, p := range params {
		if st := stat(p.name, p.unit, p.eunit, p.scale, p.get); st.N > 0 {
			s.Stats = append(s.Stats, st)
		}
	}
	if st := stat("generator efficiency", "", "", 1, func(r *Row) *float64 { return r.Efficiency }); st.N > 0 {
		s.Efficiency = &st
	}
	return s
}

func writeSummary(w io.Writer, s Summary) {
	title := "series summary"
	if s.Series != "" {
		title += ": " + s.Series
	}
	fmt.Fprintln(w, title)
	fmt.Fprintf(w, "  %d files, %d channel rows: %d pass, %d fail, %d error\n", s.Files, s.Rows, s.Pass, s.Fail, s.Errors)
	if s.Interrupted {
		fmt.Fprintln(w, "  interrupted: the rows above are the files finished before the stop")
	}
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "  parameter\tn\tmean\tsd\tmin\tmax\tunit")
	for _, st := range s.display() {
		fmt.Fprintf(tw, "  %s\t%d\t%.4g\t%.3g\t%.4g\t%.4g\t%s\n", st.Name, st.N, st.Mean, st.SD, st.Min, st.Max, st.Unit)
	}
	tw.Flush()
}

// display returns every statistic, the efficiency last, in engineering units for
// screens and the report.
func (s Summary) display() []Stat {
	all := append([]Stat(nil), s.Stats...)
	if s.Efficiency != nil {
		all = append(all, *s.Efficiency)
	}
	for i := range all {
		k := all[i].scale
		if k == 0 {
			k = 1
		}
		all[i].Mean, all[i].SD, all[i].Min, all[i].Max, all[i].Unit = all[i].Mean*k, all[i].SD*k, all[i].Min*k, all[i].Max*k, all[i].eunit
	}
	return all
}
