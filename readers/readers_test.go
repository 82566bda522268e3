package readers

import (
	"bytes"
	"encoding/csv"
	"errors"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// expected loads the samples that make_fixtures.py printed with repr() (NumPy).
func expected(t *testing.T) (ts, u, i []float64) {
	f, err := os.Open("../testdata/readers/expected.csv")
	require.NoError(t, err)
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	require.NoError(t, err)
	for _, r := range rows[1:] {
		a, _ := strconv.ParseFloat(r[0], 64)
		b, _ := strconv.ParseFloat(r[1], 64)
		c, _ := strconv.ParseFloat(r[2], 64)
		ts, u, i = append(ts, a), append(u, b), append(i, c)
	}
	return
}

// Files written by NumPy and pandas (testdata/readers/make_fixtures.py, Debian's
// python3-numpy and python3-pandas), read back and compared with NumPy's own values.
func TestReadExternalFixtures(t *testing.T) {
	ts, u, cur := expected(t)
	dt := 2e-9
	cases := []struct {
		file     string
		opt      Options
		channels []string
		units    []string
		want     [][]float64
		tol      float64 // relative to the peak; formats that round say how much
		hasTime  bool
	}{
		{"numpy_v1_2d.npy", Options{}, []string{"CH1", "CH2"}, []string{"", ""}, [][]float64{u, cur}, 0, true},
		{"numpy_1d_f4be.npy", Options{Interval_s: dt}, []string{"CH1"}, []string{""}, [][]float64{u}, 1e-7, false},
		{"numpy_v2_i2.npy", Options{Interval_s: dt}, []string{"CH1"}, []string{""}, [][]float64{scale(u, 10)}, 1e-3, false},
		{"numpy_savetxt.csv", Options{}, []string{"U", "I"}, []string{"V", "A"}, [][]float64{u, cur}, 1e-9, true},
		{"pandas_semicolon_decimal_comma.csv", Options{}, []string{"Voltage"}, []string{"V"}, [][]float64{u}, 1e-13, true},
		{"pandas_tab_crlf.txt", Options{Interval_s: dt}, []string{"CH1"}, []string{"V"}, [][]float64{u}, 1e-13, false},
	}
	for _, c := range cases {
		t.Run(c.file, func(t *testing.T) {
			rec, err := ReadFile(filepath.Join("../testdata/readers", c.file), c.opt)
			require.NoError(t, err)
			require.Len(t, rec.Channels, len(c.channels))
			assert.InEpsilon(t, dt, rec.Interval_s, 1e-9)
			if c.hasTime {
				assert.InDelta(t, ts[0], rec.Start_s, 1e-15)
			}
			for k, ch := range rec.Channels {
				assert.Equal(t, c.channels[k], ch.Name)
				assert.Equal(t, c.units[k], ch.Unit)
				require.Len(t, ch.Samples, len(c.want[k]))
				peak := 0.0
				for _, v := range c.want[k] {
					peak = math.Max(peak, math.Abs(v))
				}
				for j, v := range ch.Samples {
					if c.tol == 0 {
						require.Equal(t, c.want[k][j], v, "sample %d", j)
					} else {
						require.InDelta(t, c.want[k][j], v, c.tol*peak+1e-300, "sample %d", j)
					}
				}
			}
		})
	}
}

func scale(x []float64, k float64) []float64 {
	out := make([]float64, len(x))
	for i, v := range x {
		out[i] = math.Trunc(v * k) // numpy's astype truncates toward zero
	}
	return out
}

func TestTextDialects(t *testing.T) {
	cases := []struct {
		name     string
		in       string
		opt      Options
		interval float64
		start    float64
		names    []string
		units    []string
		first    []float64
		warn     bool
	}{
		{"comma with header and time", "t,U\n0,1.5\n1e-9,2.5\n2e-9,3.5\n3e-9,1\n4e-9,1\n5e-9,1\n6e-9,1\n7e-9,1\n", Options{}, 1e-9, 0, []string{"U"}, []string{""}, []float64{1.5, 2.5}, false},
		{"semicolon decimal comma", "0;1,25\n0,001;3,5\n0,002;4\n0,003;1\n0,004;1\n0,005;1\n0,006;1\n0,007;1\n", Options{}, 1e-3, 0, []string{"CH1"}, []string{""}, []float64{1.25, 3.5}, false},
		{"tab, CRLF, BOM, kV and us", "\xEF\xBB\xBFt (us)\tVoltage (kV)\r\n0\t1\r\n0.5\t2\r\n1\t3\r\n1.5\t3\r\n2\t3\r\n2.5\t3\r\n3\t3\r\n3.5\t3\r\n", Options{}, 0.5e-6, 0, []string{"Voltage"}, []string{"V"}, []float64{1000, 2000}, false},
		{"blanks, scientific upper case", "  0.0E+00   1.0E+00\n  1.0E-09   2.0E+00\n 2.0E-09 3E0\n3e-9 4\n4e-9 4\n5e-9 4\n6e-9 4\n7e-9 4\n", Options{}, 1e-9, 0, []string{"CH1"}, []string{""}, []float64{1, 2}, false},
		{"preamble with interval, units and no time column", "Model,invented scope\nSample Interval: 2 ns\nStart: -10 ns\nVertical Units: mV\n\n5\n6\n7\n8\n9\n10\n11\n12\n", Options{}, 2e-9, -10e-9, []string{"CH1"}, []string{"V"}, []float64{5e-3, 6e-3}, false},
		{"comments and blank lines in data", "# invented capture\nI/kA\n# first\n1\n\n2\n3\n4\n5\n6\n7\n8\n", Options{Interval_s: 1e-8}, 1e-8, 0, []string{"I"}, []string{"A"}, []float64{1000, 2000}, false},
		{"trailing delimiters", "t,U,\n0,1.5,\n1e-9,2.5,\n2e-9,3.5,\n3e-9,1,\n4e-9,1,\n5e-9,1,\n6e-9,1,\n7e-9,1,\n", Options{}, 1e-9, 0, []string{"U"}, []string{""}, []float64{1.5, 2.5}, false},
		{"jittered time is resampled", "t,U\n0,0\n1.001e-9,1\n2e-9,2\n3e-9,3\n4.0005e-9,4\n5e-9,5\n6e-9,6\n7e-9,7\n8e-9,8\n", Options{}, 1e-9, 0, []string{"U"}, []string{""}, []float64{0, 0.999000999000999}, true},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			rec, err := Read(strings.NewReader(c.in), "case.csv", c.opt)
			require.NoError(t, err)
			assert.InEpsilon(t, c.interval, rec.Interval_s, 1e-9)
			assert.InDelta(t, c.start, rec.Start_s, 1e-18)
			require.Len(t, rec.Channels, len(c.names))
			for k, ch := range rec.Channels {
				assert.Equal(t, c.names[k], ch.Name)
				assert.Equal(t, c.units[k], ch.Unit)
			}
			assert.InDeltaSlice(t, c.first, rec.Channels[0].Samples[:2], 1e-12)
			assert.Equal(t, c.warn, len(rec.Warnings) > 0, rec.Warnings)
		})
	}
}

func TestBadInput(t *testing.T) {
	long := "t,U\n" + strings.Repeat("1", 1<<20) + "\n"
	cases := []struct {
		name string
		in   string
		opt  Options
		err  error
		line int
		col  int
	}{
		{"empty", "", Options{}, ErrEmpty, 0, 0},
		{"header only", "t,U\n", Options{}, ErrNoData, 1, 1},
		{"ragged row", "t,U\n0,1\n1,2\n2,3,4\n3,4\n4,5\n5,6\n6,7\n7,8\n", Options{}, ErrRagged, 4, 0},
		{"non-numeric cell", "t,U\n0,1\n1,2\n2,3\n3,4\n4,5\n5,6\n6,7\n7,8\n8,9\n" + strings.Repeat("9,1\n", 3000) + "10,abc\n", Options{}, ErrSyntax, 3011, 4},
		{"NaN", "t,U\n" + strings.Repeat("0,1\n", 0) + "0,1\n1,2\n2,3\n3,4\n4,5\n5,6\n6,7\n7,8\n" + strings.Repeat("8,1\n", 2500) + "9,NaN\n", Options{}, ErrNotFinite, 2510, 3},
		{"binary given as text", "t,U\n0,1\n\x00\x01\x02\xff", Options{}, ErrBinary, 0, 0},
		{"1 MB line", long, Options{}, ErrLineTooLong, 2, 0},
		{"time goes back", "t,U\n0,1\n1,2\n2,3\n3,4\n2.5,5\n5,6\n6,7\n7,8\n", Options{}, ErrNonMonotonic, 6, 1},
		{"time jumps", "t,U\n0,1\n1,2\n2,3\n3,4\n4,5\n5,6\n6,7\n9,8\n10,1\n", Options{}, ErrNonUniform, 9, 1},
		{"no interval", "1\n2\n3\n4\n5\n6\n7\n8\n", Options{}, ErrNoInterval, 0, 0},
		{"too few samples", "t,U\n0,1\n1,2\n", Options{}, ErrNoData, 0, 0},
		{"bad preamble interval", "interval: fast\nt,U\n0,1\n1,2\n2,3\n3,4\n4,5\n5,6\n6,7\n7,8\n", Options{}, ErrHeader, 1, 0},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			rec, err := Read(strings.NewReader(c.in), "bad.csv", c.opt)
			require.Error(t, err)
			assert.Nil(t, rec)
			assert.ErrorIs(t, err, c.err)
			var pe *ParseError
			require.True(t, errors.As(err, &pe), "%T", err)
			assert.Equal(t, "bad.csv", pe.File)
			assert.Contains(t, err.Error(), "bad.csv")
			if c.line > 0 {
				assert.Equal(t, c.line, pe.Line, err.Error())
			}
			if c.col > 0 {
				assert.Equal(t, c.col, pe.Column, err.Error())
			}
		})
	}
}

func TestBinaryBadInput(t *testing.T) {
	spec := RawSpec{Sample: "int16", Channels: 2, Interval_s: 1e-9}
	_, err := Read(bytes.NewReader(make([]byte, 41)), "odd.bin", Options{Raw: &spec})
	assert.ErrorIs(t, err, ErrTruncated)
	assert.Contains(t, err.Error(), "byte 40")

	_, err = Read(bytes.NewReader([]byte{1, 2, 0, 4, 5}), "unknown.bin", Options{})
	assert.ErrorIs(t, err, ErrBinary)

	// A .npy header claiming 10^12 values must fail fast, not allocate.
	h := "{'descr': '<f8', 'fortran_order': False, 'shape': (1000000, 1000000), }"
	b := append([]byte("\x93NUMPY\x01\x00"), byte(len(h)), 0)
	b = append(b, h...)
	_, err = Read(bytes.NewReader(b), "huge.npy", Options{Interval_s: 1e-9})
	assert.ErrorIs(t, err, ErrTooLarge)

	// A .npy whose data stop early says where.
	h = "{'descr': '<f8', 'fortran_order': False, 'shape': (100,), }"
	b = append([]byte("\x93NUMPY\x01\x00"), byte(len(h)), 0)
	b = append(b, h...)
	b = append(b, make([]byte, 8*10+3)...)
	_, err = Read(bytes.NewReader(b), "short.npy", Options{Interval_s: 1e-9})
	assert.ErrorIs(t, err, ErrTruncated)
	assert.Contains(t, err.Error(), "short.npy: byte")

	_, err = ParseSidecar(strings.NewReader("format = hvraw 1\nsample = int16\ncolour = red\ninterval = 1ns\n"), "x.hvraw")
	assert.ErrorIs(t, err, ErrSidecar)
	assert.Contains(t, err.Error(), "x.hvraw:3")
}

func TestRawRoundTrip(t *testing.T) {
	rec, err := ReadFile("../testdata/readers/numpy_v1_2d.npy", Options{})
	require.NoError(t, err)
	for _, order := range []bool{false, true} {
		var buf bytes.Buffer
		spec, err := WriteRaw(&buf, rec)
		require.NoError(t, err)
		raw := buf.Bytes()
		if order { // swap to big endian
			for i := 0; i+1 < len(raw); i += 2 {
				raw[i], raw[i+1] = raw[i+1], raw[i]
			}
			spec.BigEndian = true
		}
		var sc bytes.Buffer
		require.NoError(t, WriteSidecar(&sc, spec))
		spec2, err := ParseSidecar(&sc, "rt.hvraw")
		require.NoError(t, err)
		back, err := Read(bytes.NewReader(raw), "rt.bin", Options{Raw: &spec2})
		require.NoError(t, err)
		require.Len(t, back.Channels, 2)
		for k := range back.Channels {
			for i, v := range back.Channels[k].Samples {
				require.InDelta(t, rec.Channels[k].Samples[i], v, spec.Gain[k]/2+1e-12)
			}
		}
	}
}

func TestTextRoundTripAndFastPathMatchesStrconv(t *testing.T) {
	cells := []string{"0", "-0", "1.25", "-3.5e-9", "1E+05", "123456789012345678", "1234567890123456789012",
		"4.9e-324", "1.7976931348623157e308", "0.000000000000000000000000123", "9007199254740993", "2.5e22", "1e23",
		"0.1", ".5", "5.", "+7", "3.14159265358979323846"}
	for _, c := range cells {
		want, err := strconv.ParseFloat(c, 64)
		require.NoError(t, err, c)
		got, ok := parseFloat([]byte(c), '.')
		require.True(t, ok, c)
		assert.Equal(t, math.Float64bits(want), math.Float64bits(got), c)
	}
	for _, c := range []string{"", "-", "e5", "1e", "0x1p3", "1_000", "1.2.3", "abc", "1,5"} {
		_, ok := parseFloat([]byte(c), '.')
		assert.False(t, ok, c)
	}
}

func FuzzParseFloat(f *testing.F) {
	for _, s := range []string{"1.5", "-2e-9", "123456789.123456789", "1e22", "0.000001", "7"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		got, ok := parseFloat([]byte(s), '.')
		// Quoted cells are numbers to the reader (spreadsheets quote them); compare
		// with the unquoted text. Found by the fuzzer: testdata/fuzz/FuzzParseFloat.
		if len(s) > 1 && s[0] == '"' && s[len(s)-1] == '"' {
			s = s[1 : len(s)-1]
		}
		want, err := strconv.ParseFloat(s, 64)
		if err == nil && ok && math.Float64bits(got) != math.Float64bits(want) && !math.IsNaN(want) {
			t.Fatalf("%q: got %v want %v", s, got, want)
		}
		if ok && err != nil && !errors.Is(err, strconv.ErrRange) {
			t.Fatalf("%q: accepted what strconv refuses: %v", s, err)
		}
	})
}

func seedFromTestdata(f *testing.F) {
	files, _ := filepath.Glob("../testdata/readers/*")
	for _, p := range files {
		// Heads of the files: small seeds keep the fuzzer's minimisation quick.
		if b, err := os.ReadFile(p); err == nil {
			if len(b) > 2048 {
				b = b[:2048]
			}
			f.Add(b)
		}
	}
}

// The readers must never panic and must return either a valid record or a ParseError.
func fuzzReader(t *testing.T, data []byte, read func([]byte) (any, error)) {
	rec, err := read(data)
	if err != nil {
		var pe *ParseError
		if !errors.As(err, &pe) {
			t.Fatalf("error is %T, not *ParseError: %v", err, err)
		}
		return
	}
	if rec == nil {
		t.Fatal("nil record and nil error")
	}
}

func FuzzReadText(f *testing.F) {
	seedFromTestdata(f)
	f.Add([]byte("t;U\n0;1,5\n1;2\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		fuzzReader(t, data, func(b []byte) (any, error) {
			// --interval overrides a time column, so the time-base rules are only
			// reached without it: the options vary with the input.
			opt := TextOptions{}
			switch len(b) % 4 {
			case 0:
				opt.Interval_s = 1e-9
			case 1:
				opt.TimeColumn = "first"
			case 2:
				opt.TimeColumn = "none"
			}
			r, err := ReadText(bytes.NewReader(b), "fuzz.csv", opt)
			if err == nil {
				if verr := r.Validate(); verr != nil {
					t.Fatalf("invalid record returned: %v", verr)
				}
			}
			return r, err
		})
	})
}

func FuzzReadNPY(f *testing.F) {
	seedFromTestdata(f)
	f.Fuzz(func(t *testing.T, data []byte) {
		fuzzReader(t, data, func(b []byte) (any, error) {
			return ReadNPY(bytes.NewReader(b), "fuzz.npy", NPYOptions{Interval_s: 1e-9})
		})
	})
}

func FuzzReadRaw(f *testing.F) {
	seedFromTestdata(f)
	f.Fuzz(func(t *testing.T, data []byte) {
		for _, s := range []string{"int8", "int16", "float32", "float64"} {
			spec := RawSpec{Sample: s, Channels: 2, Interval_s: 1e-9, BigEndian: len(data)%2 == 0}
			fuzzReader(t, data, func(b []byte) (any, error) { return ReadRaw(bytes.NewReader(b), "fuzz.bin", spec) })
		}
	})
}

func FuzzParseSidecar(f *testing.F) {
	f.Add([]byte("format = hvraw 1\nsample = int16\nchannels = 2\ngain = 1e-3, 2e-3\ninterval = 1 ns\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		fuzzReader(t, data, func(b []byte) (any, error) {
			s, err := ParseSidecar(bytes.NewReader(b), "fuzz.hvraw")
			return &s, err
		})
	})
}

func FuzzRead(f *testing.F) {
	seedFromTestdata(f)
	f.Fuzz(func(t *testing.T, data []byte) {
		fuzzReader(t, data, func(b []byte) (any, error) {
			return Read(bytes.NewReader(b), "fuzz", Options{Interval_s: 1e-9})
		})
	})
}

// Many numbers, formatted the ways exporters write them, parse bit-identically to
// strconv.ParseFloat (the standard library is the reference).
func TestFastPathMatchesStrconvWide(t *testing.T) {
	r := rand.New(rand.NewPCG(9, 9))
	var buf []byte
	check := func(s []byte) {
		want, err := strconv.ParseFloat(string(s), 64)
		got, ok := parseFloat(s, '.')
		if err != nil {
			if !errors.Is(err, strconv.ErrRange) {
				require.False(t, ok, "%s", s)
			}
			return
		}
		require.True(t, ok, "%s", s)
		require.Equal(t, math.Float64bits(want), math.Float64bits(got), "%s", s)
	}
	for i := 0; i < 100000; i++ {
		v := math.Float64frombits(r.Uint64())
		if math.IsNaN(v) || math.IsInf(v, 0) {
			continue
		}
		for _, f := range []struct {
			c byte
			p int
		}{{'e', 18}, {'g', -1}, {'e', 6}, {'g', 9}, {'f', 12}} {
			buf = strconv.AppendFloat(buf[:0], v, f.c, f.p, 64)
			if len(buf) < 64 {
				check(buf)
			}
		}
		// random decimal strings of 1-19 digits with exponents across the range
		nd := 1 + r.IntN(19)
		buf = buf[:0]
		for k := 0; k < nd; k++ {
			buf = append(buf, byte('0'+r.IntN(10)))
		}
		buf = append(buf, 'e')
		buf = strconv.AppendInt(buf, int64(r.IntN(700)-350), 10)
		check(buf)
	}
}
