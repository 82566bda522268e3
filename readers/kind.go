package readers

import (
	"bytes"
	"io"
	"os"
	"strings"
)

// notCaptures are the opening bytes of files that sit beside captures in a lab's
// folders but are not captures: images (PNG, JPEG, GIF, TIFF), documents (PDF, and the
// ZIP container of office files), web pages and XML. Each magic number is the format's
// published signature.
var notCaptures = []struct {
	magic, what string
}{
	{"\x89PNG\r\n\x1a\n", "a PNG image"}, {"\xff\xd8\xff", "a JPEG image"}, {"GIF87a", "a GIF image"}, {"GIF89a", "a GIF image"},
	{"II*\x00", "a TIFF image"}, {"MM\x00*", "a TIFF image"}, {"%PDF-", "a PDF document"}, {"PK\x03\x04", "a ZIP archive or office document"},
	{"<?xml", "an XML document"}, {"<!DOCTYPE", "a web page"}, {"<html", "a web page"}, {"<svg", "an SVG image"},
}

// ownOutputs are the first bytes of hvshot's own result files.
var ownOutputs = [][]byte{[]byte("file,channel,role,"), []byte(`{"file":`), []byte("{\n \"series\""), []byte("{\n \"files\"")}

// IsCapture reports whether a file's first bytes could be a capture, and if not, what
// the file is. Binary content counts as a capture unless a signature says otherwise
// (raw binary carries no signature); text counts when at least three of its first lines
// are mostly numbers, or one is numbers alone. It is for leaving files out of a folder scan; a file someone
// names is read regardless, so that a mistake gets a message.
func IsCapture(head []byte) (bool, string) {
	b := bytes.TrimPrefix(head, []byte{0xEF, 0xBB, 0xBF})
	if len(b) == 0 {
		return true, "" // an empty capture: reading it says so
	}
	for _, n := range notCaptures {
		if bytes.HasPrefix(bytes.TrimLeft(b, " \t\r\n"), []byte(n.magic)) {
			return false, n.what
		}
	}
	for _, o := range ownOutputs {
		if bytes.HasPrefix(b, o) {
			return false, "an hvshot result file"
		}
	}
	if b[0] == '{' || b[0] == '[' {
		return false, "a JSON document"
	}
	if len(head) >= 6 && bytes.Equal(head[:6], npyMagic) || binaryByte(b) >= 0 {
		return true, ""
	}
	numeric := 0
	for _, l := range bytes.Split(b, []byte{'\n'}) {
		nums, words := 0, 0
		for _, f := range bytes.FieldsFunc(l, func(r rune) bool { return r == ',' || r == ';' || r == '\t' || r == ' ' || r == '\r' }) {
			f = bytes.Trim(f, `"'`)
			if _, ok := parseFloat(f, '.'); ok {
				nums++
			} else if _, ok := parseFloat(f, ','); ok {
				nums++
			} else {
				words++
			}
		}
		// three lines mostly of numbers, or one that is a row of numbers alone (a
		// capture cut short still gets its error row)
		if nums > 0 && nums >= words {
			if numeric++; numeric >= 3 || (nums >= 2 && words == 0) {
				return true, ""
			}
		}
	}
	if headerOnly(b) {
		return true, "" // a capture cut before its rows: reading it says so
	}
	return false, "text with no lines of numbers"
}

// headerOnly reports whether the first line of text is a capture's header row: two or
// more cells, the first naming a time column by its name or its unit.
func headerOnly(b []byte) bool {
	for _, l := range bytes.Split(b, []byte{'\n'}) {
		if isBlank(l) || isComment(l) {
			continue
		}
		cells := bytes.FieldsFunc(l, func(r rune) bool { return r == ',' || r == ';' || r == '\t' || r == '\r' })
		if len(cells) < 2 {
			return false
		}
		name, unit := SplitHeader(string(cells[0]))
		si, _, ok := headerUnit(unit)
		return timeNames[strings.ToLower(name)] || (ok && unit != "" && si == "s")
	}
	return false
}

// IsCaptureFile is IsCapture on a file's first 64 KiB.
func IsCaptureFile(path string) (bool, string) {
	f, err := os.Open(path)
	if err != nil {
		return true, "" // reading it will say what is wrong
	}
	defer f.Close()
	head := make([]byte, 64<<10)
	n, _ := io.ReadFull(f, head)
	return IsCapture(head[:n])
}
