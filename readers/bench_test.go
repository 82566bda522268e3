package readers

import (
	"bytes"
	"encoding/binary"
	"math"
	"math/rand/v2"
	"strconv"
	"testing"
)

// benchText makes a 1,000,000-row, two-channel capture in the form scopes export:
// time and two channels in scientific notation with 7 significant digits.
func benchText() []byte { return benchTextPrec(6) }

// benchTextPrec writes prec digits after the point; 18 is numpy.savetxt's default.
func benchTextPrec(prec int) []byte {
	r := rand.New(rand.NewPCG(1, 2))
	var b bytes.Buffer
	b.WriteString("# invented benchmark capture\n# sample interval: 1e-9 s\nt [s],U [V],I [A]\n")
	var row []byte
	for i := 0; i < 1_000_000; i++ {
		t := -1e-5 + float64(i)*1e-9
		row = strconv.AppendFloat(row[:0], t, 'e', prec, 64)
		row = append(row, ',')
		row = strconv.AppendFloat(row, 3e5*math.Sin(float64(i)*1e-4)+r.NormFloat64(), 'e', prec, 64)
		row = append(row, ',')
		row = strconv.AppendFloat(row, 1e3*r.NormFloat64(), 'e', prec, 64)
		row = append(row, '\n')
		b.Write(row)
	}
	return b.Bytes()
}

func BenchmarkReadText1M(b *testing.B) {
	b.Run("7-digits", func(b *testing.B) { benchRead(b, benchText()) })
	// numpy.savetxt's default '%.18e': 19 significant digits, past Clinger's fast path
	b.Run("19-digits", func(b *testing.B) { benchRead(b, benchTextPrec(18)) })
}

func benchRead(b *testing.B, data []byte) {
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := Read(bytes.NewReader(data), "bench.csv", Options{}); err != nil {
			b.Fatal(err)
		}
	}
}

// The fast path must agree bit for bit with strconv on the benchmark's own cells.
func TestBenchTextBitIdentical(t *testing.T) {
	if testing.Short() {
		t.Skip("large input")
	}
	data := benchText()
	rec, err := ReadText(bytes.NewReader(data), "bench.csv", TextOptions{})
	if err != nil {
		t.Fatal(err)
	}
	lines := bytes.Split(data, []byte{'\n'})[3:]
	for i := 0; i < len(rec.Channels[0].Samples); i += 997 {
		f := bytes.Split(lines[i], []byte{','})
		for k := 0; k < 2; k++ {
			want, _ := strconv.ParseFloat(string(f[k+1]), 64)
			if got := rec.Channels[k].Samples[i]; math.Float64bits(got) != math.Float64bits(want) {
				t.Fatalf("row %d col %d: %v != strconv %v", i, k, got, want)
			}
		}
	}
}

func BenchmarkReadRawInt16(b *testing.B) {
	n := 4_000_000
	data := make([]byte, 2*n)
	for i := 0; i < n; i++ {
		binary.LittleEndian.PutUint16(data[2*i:], uint16(int16(i)))
	}
	spec := RawSpec{Sample: "int16", Channels: 1, Interval_s: 1e-9, Gain: []float64{1e-3}}
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := ReadRaw(bytes.NewReader(data), "bench.bin", spec); err != nil {
			b.Fatal(err)
		}
	}
}
