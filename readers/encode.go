package readers

import (
	"fmt"
	"io"

	"github.com/hvshot/hvshot/waveform"
)

// Encode writes rec in one of the formats the readers read: "text" (or "csv", nine
// significant digits: beyond any scope's ADC, and quick to read back), "npy", or "raw"
// (int16 codes), for which it returns the description to write beside it.
func Encode(w io.Writer, format string, rec *waveform.Record) (*RawSpec, error) {
	switch format {
	case "text", "csv":
		return nil, WriteTextDigits(w, rec, 9)
	case "npy":
		return nil, WriteNPY(w, rec)
	case "raw":
		spec, err := WriteRaw(w, rec)
		return &spec, err
	}
	return nil, fmt.Errorf("format: text, npy or raw, not %q", format)
}
