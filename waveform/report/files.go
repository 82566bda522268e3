package report

import (
	"bytes"
	"encoding/json"
	"io"

	"github.com/hvshot/hvshot/waveform/report/folder"
	"github.com/hvshot/hvshot/waveform/shot"
)

// Outputs are the files and the folder a run writes into its output folder.
var Outputs = []string{"results.csv", "results.jsonl", "summary.json", "report.html", "plots"}

// DrawPlots draws each row's plot of a shot in format into the folder (shot.PlotPath),
// notes it on the row, and lets go of the curves. A plot that cannot be drawn or written
// is a warning on its row (shot.PlotFailed), never a row claiming a plot.
func DrawPlots(d *folder.Folder, s *shot.Shot, format PlotFormat) {
	for k, c := range s.Curves {
		r := &s.Rows[k]
		if c == nil || format == NoPlot || d == nil {
			continue
		}
		rel := shot.PlotPath(s.ID, k, r.Channel, string(format))
		var b bytes.Buffer
		err := Plot(&b, c, s.ID+"  "+r.Channel, format)
		if err == nil {
			err = d.WriteBytes(rel, b.Bytes())
		}
		if err != nil {
			r.Warnings = append(r.Warnings, shot.Warning{Code: shot.PlotFailed, Text: err.Error()})
			continue
		}
		r.Plot = rel
	}
	s.Curves = nil
}

// WriteAll writes the run's tables, summary and report into the folder, each whole or
// not at all; the page's plots are read back from the folder as the report streams.
func WriteAll(d *folder.Folder, p Page) error {
	p.Plot = d.Read
	if p.Config != nil && !p.Config.Record.Empty() {
		p.Summary.Record = &p.Config.Record
	}
	if p.Config != nil {
		p.Summary.Atmosphere, _ = p.Config.Atmosphere() // its error is the report's to show
	}
	err := d.Write("results.csv", func(f io.Writer) error { return shot.WriteCSV(f, p.Rows) })
	if err == nil {
		err = d.Write("results.jsonl", func(f io.Writer) error { return shot.WriteJSONL(f, p.Rows) })
	}
	if err == nil {
		sj, _ := json.MarshalIndent(p.Summary, "", " ")
		err = d.WriteBytes("summary.json", append(sj, '\n'))
	}
	if err == nil {
		err = d.Write("report.html", func(f io.Writer) error { return HTML(f, p) })
	}
	return err
}
