package shot

import (
	"net/url"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
)

// Identities returns each capture's identity: its path relative to the folder all the
// paths have in common, with forward slashes ("day1/shot01.csv"). Distinct paths get
// distinct identities, so nothing named after them can collide; a lone file is its
// base name. Paths are made absolute against the working folder first.
func Identities(paths []string) []string {
	abs := make([]string, len(paths))
	for i, p := range paths {
		a, err := filepath.Abs(p)
		if err != nil {
			a = filepath.Clean(p)
		}
		abs[i] = a
	}
	common := ""
	for i, a := range abs {
		d := filepath.Dir(a)
		if i == 0 {
			common = d
			continue
		}
		for common != d && !strings.HasPrefix(d, common+string(filepath.Separator)) && common != string(filepath.Separator) {
			common = filepath.Dir(common)
		}
	}
	out := make([]string, len(abs))
	for i, a := range abs {
		r, err := filepath.Rel(common, a)
		if err != nil {
			r = a
		}
		out[i] = filepath.ToSlash(r)
	}
	return out
}

// SegmentID is the identity of segment n (1-based) of a segmented capture.
func SegmentID(id string, n int) string { return id + "#" + strconv.Itoa(n) }

var unsafeName = regexp.MustCompile(`[^A-Za-z0-9._-]+`)

// PlotPath is the file, relative to an output folder, for the plot of row k (0-based)
// of a shot: the identity's folders mirrored under plots/, then the identity's name,
// the row and the channel ("plots/day1/shot01.csv.1-divider.svg"). Unique because the
// identities and the row numbers are.
func PlotPath(id string, k int, channel, ext string) string {
	return "plots/" + id + "." + strconv.Itoa(k+1) + "-" + unsafeName.ReplaceAllString(channel, "_") + "." + ext
}

// Anchor is an HTML id for row k of a shot, unique for the same reasons.
func Anchor(id string, k int) string {
	return "shot:" + url.PathEscape(id) + ":" + strconv.Itoa(k+1)
}
