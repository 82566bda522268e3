package main

import (
	"bufio"
	"encoding/csv"
	"encoding/json"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/hvshot/hvshot/waveform/shot"
)

// --chopped without --nominal: chops are intended, so a full impulse fails on shape and
// a chopped one passes (the standard shape of the family found is judged). Without it,
// full impulses are intended: a flashover never passes unless someone said chops were
// wanted.
func TestChoppedIntentWithoutNominal(t *testing.T) {
	dir := t.TempDir()
	full, chop := filepath.Join(dir, "full.csv"), filepath.Join(dir, "chop.csv")
	writeShot(t, full, spec(1.2, 50, 300e3, 1), "text")
	s := spec(1.2, 50, 300e3, 2)
	s.Chop_s, s.Collapse_s = 3e-6, 0.1e-6
	writeShot(t, chop, s, "text")
	verdicts := func(args ...string) map[string]map[string]any {
		code, out, stderr := runCmd(append([]string{"analyze", "--quiet", "--plots", "none", "--format", "jsonl", "--out", filepath.Join(t.TempDir(), "o")}, args...)...)
		require.Contains(t, []int{exitOK, exitOutOfTol}, code, stderr)
		rows := map[string]map[string]any{}
		for _, l := range strings.Split(strings.TrimSpace(out), "\n") {
			var m map[string]any
			require.NoError(t, json.Unmarshal([]byte(l), &m))
			rows[m["file"].(string)] = m
		}
		return rows
	}
	rows := verdicts("--chopped", full, chop)
	assert.Equal(t, "fail", rows["full.csv"]["verdict"])
	assert.Equal(t, []any{"shape"}, rows["full.csv"]["failures"])
	assert.Equal(t, "pass", rows["chop.csv"]["verdict"])
	// the same with the shape named, as before
	rows = verdicts("--chopped", "--nominal", "1.2/50", full, chop)
	assert.Equal(t, "fail", rows["full.csv"]["verdict"])
	assert.Equal(t, "pass", rows["chop.csv"]["verdict"])
	// nothing said about chops: full impulses intended
	rows = verdicts(full, chop)
	assert.Equal(t, "pass", rows["full.csv"]["verdict"])
	assert.Equal(t, "fail", rows["chop.csv"]["verdict"])
	assert.Equal(t, []any{"shape"}, rows["chop.csv"]["failures"])
}

// Captures with the same base name, in two folders and in two formats, keep their own
// identity, rows, plot files and report sections: a filed record never shows another
// shot's waveform.
func TestSameNamedCapturesKeepTheirOwnPlots(t *testing.T) {
	caps := t.TempDir()
	fronts := map[string]float64{"day1/shot01.csv": 1.2, "day2/shot01.csv": 1.8, "day1/shot01.npy": 1.5}
	for id, front := range fronts {
		p := filepath.Join(caps, filepath.FromSlash(id))
		require.NoError(t, os.MkdirAll(filepath.Dir(p), 0o755))
		writeShot(t, p, spec(front, 50, 300e3, uint64(100*front)), map[bool]string{true: "npy", false: "text"}[strings.HasSuffix(id, ".npy")])
	}
	out := filepath.Join(t.TempDir(), "out")
	code, stdout, stderr := runCmd("analyze", "--quiet", "--format", "jsonl", "--out", out, caps)
	require.Contains(t, []int{exitOK, exitOutOfTol}, code, stderr)
	html := string(mustRead(t, filepath.Join(out, "report.html")))
	plots := map[string]bool{}
	sc := bufio.NewScanner(strings.NewReader(stdout))
	for sc.Scan() {
		var row struct {
			File    string  `json:"file"`
			T1      float64 `json:"front_time_s"`
			Channel string  `json:"channel"`
		}
		require.NoError(t, json.Unmarshal(sc.Bytes(), &row))
		front, ok := fronts[row.File]
		require.True(t, ok, "identity %q is the path below the common folder", row.File)
		assert.InEpsilon(t, front*1e-6, row.T1, 0.03, row.File)
		plot := shot.PlotPath(row.File, 0, row.Channel, "svg")
		require.FileExists(t, filepath.Join(out, filepath.FromSlash(plot)))
		plots[plot] = true
		svg := string(mustRead(t, filepath.Join(out, filepath.FromSlash(plot))))
		assert.Contains(t, svg, row.File, "the plot is titled with its own shot")
		// the report's section for this shot holds this shot's plot
		anchor := `id="` + shot.Anchor(row.File, 0) + `"`
		i := strings.Index(html, anchor)
		require.GreaterOrEqual(t, i, 0, anchor)
		section := html[i:]
		section = section[:strings.Index(section, "</div>")]
		assert.Contains(t, section, row.File)
		assert.Contains(t, html[i:], "<svg")
		nextSvg := html[i+strings.Index(html[i:], "<svg"):]
		assert.Contains(t, nextSvg[:strings.Index(nextSvg, "</svg>")], row.File, "the plot under %s is its own", row.File)
	}
	assert.Len(t, plots, 3, "three shots, three plot files")
}

// The output keys are declared once: the CSV header, the JSON Lines keys (in order) and
// the table in docs/output.md name the same keys.
func TestOutputKeysAgree(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "s.csv")
	code, _, stderr := runCmd("synth", "--out", p, "--coil", "mutual=1nH,inductance=50nH,load_resistance=50,peak=2kA,tau1=20us,tau2=1us",
		"--antenna", "kind=calibrated,calibration=16.6667,droop_tau=26us,peak=20kV/m")
	require.Equal(t, exitOK, code, stderr)
	out := filepath.Join(dir, "out")
	runCmd("analyze", "--quiet", "--plots", "none", "--out", out, "--stages", "8", "--charging", "40kV",
		"--role", "coil=coil", "--coil", "mutual=1nH,inductance=50nH,load_resistance=50",
		"--role", "antenna=antenna", "--antenna", "kind=calibrated,calibration=16.6667,droop_tau=26us", p)
	f, err := os.Open(filepath.Join(out, "results.csv"))
	require.NoError(t, err)
	header, err := csv.NewReader(f).Read()
	f.Close()
	require.NoError(t, err)
	assert.Equal(t, shot.CSVHeader(), header)
	// every JSON key is a CSV column, in the same order
	sc := bufio.NewScanner(strings.NewReader(string(mustRead(t, filepath.Join(out, "results.jsonl")))))
	seen := map[string]bool{}
	for sc.Scan() {
		keys := regexp.MustCompile(`"([a-z0-9_]+)":`).FindAllStringSubmatch(sc.Text(), -1)
		last := -1
		for _, k := range keys {
			if k[1] == "code" || k[1] == "text" {
				continue
			}
			i := indexOf(header, k[1])
			require.GreaterOrEqual(t, i, 0, "JSON key %s is a CSV column", k[1])
			assert.Greater(t, i, last, "JSON key %s in CSV order", k[1])
			last = i
			seen[k[1]] = true
		}
	}
	assert.True(t, seen["efficiency"])
	assert.True(t, seen["peak_field_v_per_m"])
	assert.Contains(t, header, "droop_tau_estimated", "every JSON key is a CSV column, this one too")
	// docs/output.md's table lists exactly the keys, in order
	var doc []string
	for _, l := range strings.Split(string(mustRead(t, "../../docs/output.md")), "\n") {
		if !strings.HasPrefix(l, "| `") {
			continue
		}
		cell := strings.SplitN(l, "|", 3)[1]
		for _, m := range regexp.MustCompile("`([a-z0-9_]+)`").FindAllStringSubmatch(cell, -1) {
			doc = append(doc, m[1])
		}
	}
	assert.Equal(t, header, doc, "docs/output.md lists the output keys in order")
}

func indexOf(s []string, x string) int {
	for i, v := range s {
		if v == x {
			return i
		}
	}
	return -1
}

// A segmented capture is one shot a segment, each with its own identity and plot; the
// self-describing binaries need no description beside them.
func TestSegmentedAndSelfDescribingCaptures(t *testing.T) {
	dir := t.TempDir()
	for _, name := range []string{"py_descriptor_sequence.cap", "py_fixed_header.cap", "py_preamble_block.cap"} {
		require.NoError(t, os.WriteFile(filepath.Join(dir, name), mustRead(t, filepath.Join("../../testdata/readers", name)), 0o644))
	}
	out := filepath.Join(t.TempDir(), "out")
	code, stdout, stderr := runCmd("analyze", "--quiet", "--format", "jsonl", "--out", out, dir)
	require.NotEqual(t, exitUsage, code, stderr)
	ids := map[string]bool{}
	for _, l := range strings.Split(strings.TrimSpace(stdout), "\n") {
		var m map[string]any
		require.NoError(t, json.Unmarshal([]byte(l), &m))
		assert.NotEqual(t, "error", m["verdict"], m["error"])
		ids[m["file"].(string)] = true
	}
	for _, id := range []string{"py_descriptor_sequence.cap#1", "py_descriptor_sequence.cap#4", "py_fixed_header.cap", "py_preamble_block.cap"} {
		assert.True(t, ids[id], id)
	}
	assert.FileExists(t, filepath.Join(out, "plots", "py_descriptor_sequence.cap#4.1-CH2.svg"))
	var sum shot.Summary
	require.NoError(t, json.Unmarshal(mustRead(t, filepath.Join(out, "summary.json")), &sum))
	assert.Equal(t, 3, sum.Files)
	assert.Equal(t, 6, sum.Shots)
}
