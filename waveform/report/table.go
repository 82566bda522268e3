package report

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"sort"
	"strings"
	"text/tabwriter"

	"github.com/hvshot/hvshot/waveform/shot"
)

// consoleColumns are the number columns of the per-shot tables, from the column table.
func consoleColumns() []*shot.Column {
	var out []*shot.Column
	for _, c := range shot.Columns {
		if c.Console > 0 {
			out = append(out, c)
		}
	}
	sort.SliceStable(out, func(i, j int) bool { return out[i].Console < out[j].Console })
	return out
}

// Header is a column's heading on screens: its label and screen unit.
func Header(c *shot.Column) string {
	if c.Screen == "" {
		return c.Label
	}
	return c.Label + " " + c.Screen
}

// Cell is a row's value of a number column on screens, "-" when absent.
func Cell(r *shot.Row, c *shot.Column) string {
	v, ok := r.Value(c)
	if !ok {
		return "-"
	}
	return c.Format(v)
}

// Why says in words what failed or went wrong, then the warnings' codes.
func Why(r *shot.Row) string {
	if r.Verdict == shot.Error {
		return r.Error
	}
	var p []string
	if r.Discharge != "" && r.Discharge != "none" {
		where := map[string]string{"front": "on the front", "crest": "at the crest", "tail": "on the tail"}[r.Discharge]
		p = append(p, strings.TrimSpace("disruptive discharge "+where)+" (from the "+r.DischargeSource+")")
	}
	if r.Application != "" && !r.Counted {
		p = append(p, r.Application)
	}
	for _, f := range r.Failures {
		p = append(p, f.String())
	}
	var codes []string
	for _, w := range r.Warnings {
		switch w.Code {
		case "tau-sensitivity":
			// a figure every antenna row carries, not a concern
		case "not-measured":
			p = append(p, w.Text) // the reason of an incomplete verdict, in words
		default:
			codes = append(codes, w.Code)
		}
	}
	why := strings.Join(p, "; ")
	if len(codes) > 0 {
		if why != "" {
			why += "; "
		}
		why += "warn: " + strings.Join(codes, ",")
	}
	return why
}

// polWord is a polarity in three letters, for a narrow column.
func polWord(p shot.Polarity) string {
	if p == "" {
		return ""
	}
	return string(p[:3])
}

func dash(s string) string {
	if s == "" {
		return "-"
	}
	return s
}

// Table writes the per-shot table in engineering units.
func Table(w io.Writer, rows []shot.Row) {
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	cols := consoleColumns()
	head := []string{"shot", "channel", "shape", "pol."}
	for _, c := range cols {
		head = append(head, Header(c))
	}
	fmt.Fprintln(tw, strings.Join(append(head, "verdict", "why / warnings"), "\t"))
	for i := range rows {
		r := &rows[i]
		cells := []string{r.File, dash(r.Channel), dash(string(r.Shape)), dash(polWord(r.Polarity))}
		for _, c := range cols {
			cells = append(cells, Cell(r, c))
		}
		fmt.Fprintln(tw, strings.Join(append(cells, r.Verdict.Word(), Why(r)), "\t"))
	}
	tw.Flush()
	// the resistor advice of rows that failed on a time, each on a line of its own
	sep := "\n"
	for i := range rows {
		if r := &rows[i]; r.Advice != "" {
			fmt.Fprintf(w, "%s%s %s: %s\n", sep, r.File, dash(r.Channel), r.Advice)
			sep = ""
		}
	}
}

// Line is one row on one line, for a stream of results (watch): the shot, channel,
// shape and polarity, each number of the per-shot table present, the verdict and why.
func Line(r *shot.Row) string {
	parts := []string{r.File, dash(r.Channel)}
	if r.Shape != "" {
		parts = append(parts, string(r.Shape), polWord(r.Polarity))
	}
	for _, c := range consoleColumns() {
		if v, ok := r.Value(c); ok {
			parts = append(parts, strings.TrimSpace(c.Label+" "+c.Format(v)+" "+c.Screen))
		}
	}
	parts = append(parts, r.Verdict.Word())
	if why := Why(r); why != "" {
		parts = append(parts, why)
	}
	if r.Advice != "" {
		parts = append(parts, r.Advice)
	}
	return strings.Join(parts, "  ")
}

// StatCells are a statistic's mean, sd, min and max in its column's screen unit.
func StatCells(s shot.Stat) (mean, sd, lo, hi, unit string) {
	c := s.Column()
	if c == nil {
		f := func(v float64) string { return shot.FormatDigits(v, 4, false) }
		return f(s.Mean), f(s.SD), f(s.Min), f(s.Max), s.Unit
	}
	mean = c.Format(s.Mean)
	// the spread to the mean's last digit: no 6.14e-05 beside a mean of 18.00
	dec := 0
	if i := strings.IndexByte(mean, '.'); i >= 0 && !strings.ContainsAny(mean, "e") {
		dec = len(mean) - i - 1
	}
	sd = "-"
	if s.N > 1 {
		sd = shot.FormatDigits(s.SD*c.Scale, dec, true)
	}
	return mean, sd, c.Format(s.Min), c.Format(s.Max), c.Screen
}

// Summary writes the series summary: counts, then the statistics.
func Summary(w io.Writer, s shot.Summary) {
	title := "series summary"
	if s.Series != "" {
		title += ": " + s.Series
	}
	fmt.Fprintln(w, title)
	files := plural(s.Files, "file")
	if s.Shots != s.Files {
		files += " (" + plural(s.Shots, "shot") + ")"
	}
	more := ""
	if s.Discharge > 0 {
		more += fmt.Sprintf(", %d with a disruptive discharge (in a test)", s.Discharge)
	}
	if s.Incomplete > 0 {
		more += fmt.Sprintf(", %d incomplete (compliance not shown)", s.Incomplete)
	}
	if s.Measured > 0 {
		more += fmt.Sprintf(", %d measured (no tolerance applies)", s.Measured)
	}
	fmt.Fprintf(w, "  %s, %s: %d pass, %d fail, %d error%s\n", files, plural(s.Rows, "channel row"), s.Pass, s.Fail, s.Errors, more)
	if s.Interrupted {
		fmt.Fprintln(w, "  interrupted: the rows above are the files finished before the stop")
	}
	for _, t := range s.Tests {
		for _, l := range TestLines(t) {
			fmt.Fprintln(w, "  "+l)
		}
	}
	if len(s.Stats) == 0 {
		return
	}
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "  parameter\tshots\tn\tmean\tsd\tmin\tmax\tunit")
	for _, st := range s.Stats {
		mean, sd, lo, hi, unit := StatCells(st)
		fmt.Fprintf(tw, "  %s\t%s\t%d\t%s\t%s\t%s\t%s\t%s\n", st.Name, st.Group, st.N, mean, sd, lo, hi, unit)
	}
	tw.Flush()
}

func plural(n int, word string) string {
	if n == 1 {
		return "1 " + word
	}
	return fmt.Sprintf("%d %ss", n, word)
}

// StreamRows writes finished rows as they come: as CSV records through c (format
// "csv"), JSON Lines ("jsonl") or table lines ("table", as watch prints them).
func StreamRows(w io.Writer, format string, c *csv.Writer, rows []shot.Row) {
	for i := range rows {
		switch format {
		case "jsonl":
			b, _ := json.Marshal(&rows[i])
			w.Write(append(b, '\n'))
		case "csv":
			c.Write(rows[i].CSVRecord())
		case "table":
			fmt.Fprintln(w, Line(&rows[i]))
		}
	}
	c.Flush()
}

// LeftOut names on w, each once (told remembers), what a folder scan left out.
func LeftOut(w io.Writer, command string, skipped []string, quiet bool, told map[string]bool) {
	var fresh []string
	for _, s := range skipped {
		if !told[s] && !quiet {
			told[s], fresh = true, append(fresh, s)
		}
	}
	if len(fresh) > 0 {
		fmt.Fprintf(w, "hvshot %s: left out %d (not captures): %s\n", command, len(fresh), strings.Join(fresh, ", "))
	}
}
