package report

import (
	"fmt"
	"io"
	"text/tabwriter"

	"github.com/hvshot/hvshot/waveform/impulse"
)

// SelfCheck writes the self-check's lines as a table and its count of misses.
func SelfCheck(w io.Writer, version string, lines []impulse.Check) {
	fmt.Fprintf(w, "hvshot %s self-check: reference values from SciPy/NumPy (testdata/reference/impulse_refs.py), none computed by hvshot\n\n", version)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "case\tparameter\treference\tmeasured\terror\tlimit\tresult")
	miss := 0
	for _, l := range lines {
		unit, k := "us", 1e6
		switch {
		case l.Param == "test voltage" && l.Ref > 10:
			unit, k = "kV", 1e-3
		case l.Param == "test voltage":
			unit, k = "pu", 1
		case l.Abs:
			unit, k = "%", 1
		}
		word := "ok"
		if !l.OK {
			word = "MISS"
			miss++
		}
		errU := "%"
		if l.Abs {
			errU = " pt"
		}
		fmt.Fprintf(tw, "%s\t%s\t%.5g %s\t%.5g %s\t%+.3f%s\t%.2g%s\t%s\n", l.Case, l.Param, l.Ref*k, unit, l.Got*k, unit, l.Err_pct, errU, l.Limit_pct, errU, word)
	}
	tw.Flush()
	fmt.Fprintf(w, "\n%d checks, %d within limits, %d missed\n", len(lines), len(lines)-miss, miss)
}
