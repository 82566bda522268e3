package report

import (
	"fmt"
	"io"
	"os"
	"strings"
	"time"
)

// Progress draws done/total, the rate and the time left on a terminal, at most ten
// times a second; on anything else it stays silent.
type Progress struct {
	w           io.Writer
	total       int
	start, last time.Time
	on          bool
}

// NewProgress starts a progress line for total shots on w.
func NewProgress(w io.Writer, total int, quiet bool) *Progress {
	tty := false
	if f, ok := w.(*os.File); ok {
		st, err := f.Stat()
		tty = err == nil && st.Mode()&os.ModeCharDevice != 0
	}
	return &Progress{w: w, total: total, start: time.Now(), on: !quiet && tty}
}

// Step shows that done shots are finished.
func (p *Progress) Step(done int) {
	now := time.Now()
	if !p.on || (done < p.total && now.Sub(p.last) < 100*time.Millisecond) {
		return
	}
	p.last = now
	rate := float64(done) / now.Sub(p.start).Seconds()
	eta := "-"
	if rate > 0 {
		eta = (time.Duration(float64(p.total-done)/rate) * time.Second).Round(time.Second).String()
	}
	fill := 30 * done / max(p.total, 1)
	fmt.Fprintf(p.w, "\r[%s%s] %d/%d  %.1f shots/s  ETA %s ", strings.Repeat("#", fill), strings.Repeat(".", 30-fill), done, p.total, rate, eta)
	if done == p.total {
		fmt.Fprintln(p.w)
	}
}
