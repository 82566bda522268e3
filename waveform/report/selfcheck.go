package report

import (
	"fmt"
	"io"
	"text/tabwriter"

	"github.com/hvshot/hvshot/waveform/impulse"
)

// checkUnit is the screen unit and scale of a self-check line, chosen by its parameter.
func checkUnit(l impulse.Check) (string, float64) {
	switch {
	case l.Abs:
		return "%", 1
	case l.Param == impulse.ParamTestVoltage || l.Param == impulse.ParamChopVoltage:
		if l.Ref > 10 {
			return "kV", 1e-3
		}
		return "pu", 1
	case l.Param == impulse.ParamSteepness:
		return "kV/us", 1e-9
	case l.Param == impulse.ParamPeakCurrent:
		return "kA", 1e-3
	case l.Param == impulse.ParamPeakField || l.Param == impulse.ParamEndField:
		return "kV/m", 1e-3
	}
	return "us", 1e6
}

// SelfCheck writes the self-check's lines as a table and its count of misses. A line
// whose outcome is not a number (a verdict, "no impulse found") shows the expected
// outcome as its reference and the outcome found as its measured value.
func SelfCheck(w io.Writer, version string, lines []impulse.Check) {
	fmt.Fprintf(w, "hvshot %s self-check: reference values from SciPy/NumPy (testdata/reference/impulse_refs.py), none computed by hvshot\n\n", version)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "case\tparameter\treference\tmeasured\terror\tlimit\tresult")
	miss, known := 0, 0
	for _, l := range lines {
		word := "ok"
		switch {
		case !l.OK && l.Known:
			word = "known miss"
			known++
		case !l.OK:
			word = "MISS"
			miss++
		}
		if l.Expect != "" {
			fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t-\t-\t%s\n", l.Case, l.Param, l.Expect, l.Found, word)
			continue
		}
		unit, k := checkUnit(l)
		errU := "%"
		if l.Abs {
			errU = " pt"
		}
		fmt.Fprintf(tw, "%s\t%s\t%.5g %s\t%.5g %s\t%+.3f%s\t%.2g%s\t%s\n", l.Case, l.Param, l.Ref*k, unit, l.Got*k, unit, l.Err_pct, errU, l.Limit_pct, errU, word)
	}
	tw.Flush()
	fmt.Fprintf(w, "\n%d checks, %d within limits, %d missed", len(lines), len(lines)-miss-known, miss)
	if known > 0 {
		fmt.Fprintf(w, ", %d known misses (docs/selfcheck.md, \"Known misses\")", known)
	}
	fmt.Fprintln(w)
}
