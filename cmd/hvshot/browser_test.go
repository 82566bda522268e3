package main

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"image/png"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func chromium(t *testing.T) string {
	for _, c := range []string{"chromium", "chromium-browser"} {
		if p, err := exec.LookPath(c); err == nil {
			return p
		}
	}
	if os.Getenv("CI") != "" {
		t.Fatal("chromium is required in CI (.ci/run installs Debian's chromium)")
	}
	t.Skip("chromium not installed: apt-get install chromium to run the browser test")
	return ""
}

func chromiumArgs(dir string) []string {
	return []string{"--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
		"--disable-background-networking", "--disable-component-update", "--disable-sync", "--user-data-dir=" + dir}
}

// The report renders in a real browser with its summary table and a plot visible.
func TestReportInBrowser(t *testing.T) {
	bin := chromium(t)
	dir := t.TempDir()
	code, out, stderr := runCmd("demo", "--out", dir)
	require.Equal(t, exitOK, code, out+stderr)
	report := filepath.Join(dir, "report", "report.html")
	html := mustRead(t, report)
	ctx, cancel := context.WithTimeout(context.Background(), 5*time.Minute) // a busy CI machine renders the demo's 55 shots slowly
	defer cancel()
	probeWidths(ctx, t, bin, report, "demo")
	// long names, as lab scripts make them, and a long error: they wrap, the page does not widen
	caps := filepath.Join(dir, "captures")
	long := "bay2_generator-8stage_2026-11-30_lightning-full-wave_positive_withstand-series-object-T4711_shot0001.csv"
	require.NoError(t, os.Rename(filepath.Join(caps, "shot01.csv"), filepath.Join(caps, long)))
	require.NoError(t, os.WriteFile(filepath.Join(caps, "another_extremely_long_capture_file_name_from_a_lab_script_20261130T101112Z.csv"),
		[]byte("t,U\n0,1\n1e-9,a_very_long_cell_value_without_any_spaces_at_all_that_a_broken_export_could_leave_in_a_row\n"), 0o644))
	code, out, stderr = runCmd("analyze", "--quiet", "--out", filepath.Join(dir, "long"), caps)
	require.Equal(t, exitFileErrors, code, out+stderr)
	probeWidths(ctx, t, bin, filepath.Join(dir, "long", "report.html"), "long names")

	shot := filepath.Join(dir, "report.png")
	args := append(chromiumArgs(filepath.Join(dir, "profile2")), "--window-size=1280,1600", "--screenshot="+shot, "file://"+report)
	_, err := exec.CommandContext(ctx, bin, args...).CombinedOutput()
	require.NoError(t, err)
	f, err := os.Open(shot)
	require.NoError(t, err)
	defer f.Close()
	img, err := png.Decode(f)
	require.NoError(t, err)
	// Not a blank page: count non-white pixels.
	b := img.Bounds()
	ink := 0
	for y := b.Min.Y; y < b.Max.Y; y += 4 {
		for x := b.Min.X; x < b.Max.X; x += 4 {
			r, g, bl, _ := img.At(x, y).RGBA()
			if r < 0xe000 || g < 0xe000 || bl < 0xe000 {
				ink++
			}
		}
	}
	assert.Greater(t, ink, 2000, "the screenshot shows content")
	if keep := os.Getenv("HVSHOT_KEEP_SCREENSHOT"); keep != "" {
		os.WriteFile(keep, mustRead(t, shot), 0o644)
	}
	assert.True(t, strings.Contains(string(html), "High voltage kills"))
}

// Printed (Chromium's print to PDF, read back with poppler's pdftotext), the report's
// first page holds the header's facts and the synthetic-data warning, every page is
// numbered, and no shot's block is split across pages: each block's heading and its
// plot stand on one page.
func TestReportPrints(t *testing.T) {
	bin := chromium(t)
	pdftotext, err := exec.LookPath("pdftotext")
	if err != nil {
		if os.Getenv("CI") != "" {
			t.Fatal("pdftotext is required in CI (.ci/run installs poppler-utils)")
		}
		t.Skip("pdftotext not installed: apt-get install poppler-utils to run the print test")
	}
	dir := t.TempDir()
	code, out, stderr := runCmd("demo", "--out", dir)
	require.Equal(t, exitOK, code, out+stderr)
	ctx, cancel := context.WithTimeout(context.Background(), 5*time.Minute) // a busy CI machine renders the demo's 55 shots slowly
	defer cancel()
	pdf := filepath.Join(dir, "report.pdf")
	args := append(chromiumArgs(filepath.Join(dir, "profile")), "--no-pdf-header-footer", "--print-to-pdf="+pdf, "file://"+filepath.Join(dir, "report", "report.html"))
	_, err = exec.CommandContext(ctx, bin, args...).CombinedOutput()
	require.NoError(t, err)
	text, err := exec.CommandContext(ctx, pdftotext, pdf, "-").Output()
	require.NoError(t, err)
	pages := strings.Split(string(text), "\f")
	require.Greater(t, len(pages), 3)
	for _, want := range []string{"SYNTHETIC DATA", "Outcome", "Test object", "PI-7-0042", "Laboratory", "Operator", "Measuring system", "calibrated 2026-03-14", "Shots fired", "Atmosphere", "Kt 0.99", "Test outcome", "procedure B", "PASSED", "DETERMINED: U50", "Nominal", "Tolerances", "1.2/50 µs", "page 1 of"} {
		assert.Contains(t, pages[0], want, "page 1")
	}
	heading := regexp.MustCompile(`(\S+?)(?: · (\S+))?: (PASS|FAIL|ERROR|MEASURED|INCOMPLETE|DISCHARGE)\b`)
	blocks := 0
	for i, pg := range pages {
		if strings.TrimSpace(pg) == "" {
			continue
		}
		assert.Contains(t, pg, fmt.Sprintf("page %d of", i+1))
		for _, m := range heading.FindAllStringSubmatch(pg, -1) {
			blocks++
			if m[3] == "ERROR" {
				continue // no plot
			}
			assert.Contains(t, pg, m[1]+" "+m[2], "the plot of %s %s on the page of its heading (page %d)", m[1], m[2], i+1)
		}
	}
	var sum struct{ Rows int }
	require.NoError(t, json.Unmarshal(mustRead(t, filepath.Join(dir, "report", "summary.json")), &sum))
	assert.Equal(t, sum.Rows, blocks, "every row's block is printed")
}

// probeWidths opens the report at a portrait page's width and at a desktop's with a
// probe script that reports what the page shows (element boxes and visibility), and
// asserts the summary, a plot and the safety note are visible and nothing is wider than
// the window.
func probeWidths(ctx context.Context, t *testing.T, bin, report, what string) {
	probe := `<script>window.addEventListener('load',function(){
function vis(el){if(!el)return false;var r=el.getBoundingClientRect();var s=getComputedStyle(el);return r.width>50&&r.height>20&&s.visibility!=='hidden'&&s.display!=='none';}
var svg=document.querySelector('.plot svg');
var wide=document.documentElement.scrollWidth>document.documentElement.clientWidth;
document.title='PROBE summary='+vis(document.getElementById('summary-table'))+' plot='+vis(svg)+' safety='+vis(document.getElementById('safety'))+' overflow='+wide;
});</script>`
	dir := filepath.Dir(report)
	probed := filepath.Join(dir, "probe.html")
	require.NoError(t, os.WriteFile(probed, bytes.Replace(mustRead(t, report), []byte("</body>"), []byte(probe+"</body>"), 1), 0o644))
	defer os.Remove(probed)
	for _, width := range []string{"800", "1400"} {
		args := append(chromiumArgs(t.TempDir()), "--window-size="+width+",1200", "--virtual-time-budget=5000", "--dump-dom", "file://"+probed)
		dom, err := exec.CommandContext(ctx, bin, args...).Output()
		require.NoError(t, err)
		m := regexp.MustCompile(`<title>PROBE ([^<]*)</title>`).FindSubmatch(dom)
		require.NotNil(t, m, "probe ran")
		assert.Equal(t, "summary=true plot=true safety=true overflow=false", string(m[1]), "%s at %s px", what, width)
	}
}
