package atmos

import (
	"encoding/json"
	"errors"
	"math"
	"os"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// The standard reference atmosphere gives Kt = 1 for any gap: delta = 1 and k = 1
// make k1 = k2 = 1 whatever m and w are (IEC 60060-1:2010 4.3, the definition of the
// reference atmosphere). Exact, since delta and k are exactly 1 in floating point.
func TestKtIsOneAtStandardAtmosphere(t *testing.T) {
	std := Conditions{Pressure_pa: StdPressure_pa, Temperature_c: StdTemperature_c, AbsHumidity_g_per_m3: StdAbsHumidity_g_per_m3}
	for _, ub_kv := range []float64{50, 150, 300, 520, 560, 700, 900, 1100, 2000} {
		c, err := Correct(std, ub_kv*1e3, 1)
		require.NoError(t, err)
		assert.Equal(t, 1.0, c.Delta, "U_B %g kV", ub_kv)
		assert.Equal(t, 1.0, c.K, "U_B %g kV", ub_kv)
		assert.Equal(t, 1.0, c.Kt, "U_B %g kV, g %g", ub_kv, c.G)
		assert.Equal(t, ub_kv*1e3, ToStandard(ub_kv*1e3, c))
		assert.Empty(t, c.Warnings)
	}
}

func TestAbsoluteHumidity(t *testing.T) {
	cases := []struct {
		name    string
		t_c, rh float64
		want    float64 // g/m3
		rel     float64
		source  string
	}{
		{"20 C 60 %", 20, 60, 10.4, 0.01, "psychrometric tables, common practice: about 10.4 g/m3"},
		{"20 C saturated", 20, 100, 17.3, 0.01, "psychrometric tables, common practice: 17.3 g/m3 at saturation"},
		{"30 C saturated", 30, 100, 30.4, 0.01, "psychrometric tables, from memory: 30.4 g/m3 at saturation"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			assert.InEpsilon(t, c.want, AbsoluteHumidity(c.t_c, c.rh), c.rel, c.source)
			assert.InDelta(t, c.rh, RelativeHumidity(c.t_c, AbsoluteHumidity(c.t_c, c.rh)), 1e-12, "the inverse")
		})
	}
}

// The Magnus form against steam-table saturation pressures over water (IAPWS values
// as usually tabulated, from memory); the form reads up to 0.5 % low in this range.
func TestSaturationPressure(t *testing.T) {
	for _, c := range []struct{ t_c, want_pa float64 }{
		{0, 611.2}, {10, 1228}, {20, 2339}, {30, 4247}, {40, 7385},
	} {
		assert.InEpsilon(t, c.want_pa, SaturationPressure_pa(c.t_c), 0.006, "%g C, steam tables (from memory)", c.t_c)
	}
}

// m and w are continuous at every breakpoint (a property of the curves as stated) and
// take the stated values there.
func TestExponentsContinuous(t *testing.T) {
	const eps = 1e-9
	for _, c := range []struct{ g, m, w float64 }{
		{GRise, 0, 0}, {GTop, 1, 1}, {GFall, 1, 1}, {GWZero, 1, 0},
	} {
		mb, wb := Exponents(c.g - eps)
		ma, wa := Exponents(c.g + eps)
		m, w := Exponents(c.g)
		assert.InDelta(t, c.m, m, 1e-12, "m at g = %g", c.g)
		assert.InDelta(t, c.w, w, 1e-12, "w at g = %g", c.g)
		assert.InDelta(t, mb, ma, 1e-8, "m jumps at g = %g", c.g)
		assert.InDelta(t, wb, wa, 1e-8, "w jumps at g = %g", c.g)
	}
	m, w := Exponents(0.6)
	assert.InDelta(t, 0.6*0.4/0.8, m, 1e-15, "inside the rise, by hand")
	assert.Equal(t, m, w)
	m, w = Exponents(1.6)
	assert.Equal(t, 1.0, m)
	assert.InDelta(t, 0.6*0.4/0.8, w, 1e-15, "inside the fall, by hand")
}

// atmosRefs is testdata/reference/atmos_refs.json, made by atmos_refs.py with NumPy
// from the formulas, independently of this package.
type atmosRefs struct {
	Source  string         `json:"source"`
	Regimes map[string]int `json:"regimes"`
	Columns []string       `json:"columns"`
	Cases   [][]*float64   `json:"cases"`
}

func TestAgainstNumPyReferences(t *testing.T) {
	b, err := os.ReadFile("../../testdata/reference/atmos_refs.json")
	require.NoError(t, err)
	var refs atmosRefs
	require.NoError(t, json.Unmarshal(b, &refs))
	require.GreaterOrEqual(t, len(refs.Cases), 500)
	col := map[string]int{}
	for i, c := range refs.Columns {
		col[c] = i
	}
	get := func(row []*float64, name string) float64 {
		i, ok := col[name]
		require.True(t, ok, "column %s", name)
		if row[i] == nil {
			return 0 // a humidity not given
		}
		return *row[i]
	}
	regimes := map[string]int{}
	for n, row := range refs.Cases {
		require.Len(t, row, len(refs.Columns))
		c := Conditions{Pressure_pa: get(row, "pressure_pa"), Temperature_c: get(row, "temperature_c"),
			RelHumidity_pct: get(row, "rel_humidity_pct"), AbsHumidity_g_per_m3: get(row, "abs_humidity_g_per_m3")}
		got, err := Correct(c, get(row, "ub_v"), get(row, "path_m"))
		require.NoError(t, err, "case %d %+v", n, c)
		for _, q := range []struct {
			name string
			v    float64
		}{{"delta", got.Delta}, {"h_g_per_m3", got.H_g_per_m3}, {"k", got.K}, {"g", got.G}, {"k1", got.K1}, {"k2", got.K2}, {"kt", got.Kt}} {
			assert.InEpsilon(t, get(row, q.name), q.v, 1e-12, "case %d %s (%s)", n, q.name, refs.Source)
		}
		assert.InDelta(t, get(row, "m"), got.M, 1e-12, "case %d m (%s)", n, refs.Source)
		assert.InDelta(t, get(row, "w"), got.W, 1e-12, "case %d w (%s)", n, refs.Source)
		switch g := got.G; {
		case g < 0.2:
			regimes["below 0.2"]++
		case g <= 1:
			regimes["0.2 to 1.0"]++
		case g <= 1.2:
			regimes["1.0 to 1.2"]++
		case g <= 2:
			regimes["1.2 to 2.0"]++
		default:
			regimes["above 2.0"]++
		}
	}
	assert.Equal(t, refs.Regimes, regimes, "every regime of g is covered, as the script counted")
	for r, n := range regimes {
		assert.Positive(t, n, "regime %s", r)
	}
}

func TestCheckRefuses(t *testing.T) {
	ok := Conditions{Pressure_pa: 98.2e3, Temperature_c: 24, RelHumidity_pct: 45}
	with := func(f func(*Conditions)) Conditions { c := ok; f(&c); return c }
	cases := []struct {
		name   string
		c      Conditions
		field  string
		reason string // a part of the message
	}{
		{"pressure in kPa", with(func(c *Conditions) { c.Pressure_pa = 98.2 }), "Pressure_pa", "in kPa? give pascals"},
		{"pressure in hPa", with(func(c *Conditions) { c.Pressure_pa = 982 }), "Pressure_pa", "in hPa (mbar)?"},
		{"pressure missing", with(func(c *Conditions) { c.Pressure_pa = 0 }), "Pressure_pa", "outside 50 to 110 kPa"},
		{"pressure too high", with(func(c *Conditions) { c.Pressure_pa = 120e3 }), "Pressure_pa", "outside 50 to 110 kPa"},
		{"pressure NaN", with(func(c *Conditions) { c.Pressure_pa = math.NaN() }), "Pressure_pa", "not a number"},
		{"temperature in kelvin", with(func(c *Conditions) { c.Temperature_c = 297.15 }), "Temperature_c", "in kelvin?"},
		{"temperature too low", with(func(c *Conditions) { c.Temperature_c = -40 }), "Temperature_c", "outside -30 to 50 C"},
		{"temperature infinite", with(func(c *Conditions) { c.Temperature_c = math.Inf(1) }), "Temperature_c", "not a number"},
		{"no humidity", with(func(c *Conditions) { c.RelHumidity_pct = 0 }), "RelHumidity_pct", "no humidity given"},
		{"both humidities", with(func(c *Conditions) { c.AbsHumidity_g_per_m3 = 9 }), "AbsHumidity_g_per_m3", "give one of them"},
		{"relative above 100", with(func(c *Conditions) { c.RelHumidity_pct = 120 }), "RelHumidity_pct", "outside 0 to 100 %"},
		{"relative negative", with(func(c *Conditions) { c.RelHumidity_pct = -5 }), "RelHumidity_pct", "outside 0 to 100 %"},
		{"absolute negative", Conditions{Pressure_pa: 98.2e3, Temperature_c: 24, AbsHumidity_g_per_m3: -1}, "AbsHumidity_g_per_m3", "negative"},
		{"relative given as absolute", Conditions{Pressure_pa: 98.2e3, Temperature_c: 24, AbsHumidity_g_per_m3: 45}, "AbsHumidity_g_per_m3", "above saturation at 24 C (21.7 g/m3)"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, err := Correct(c.c, 150e3, 1.2)
			var fe *FieldError
			require.True(t, errors.As(err, &fe), "%v", err)
			assert.Equal(t, c.field, fe.Field)
			assert.Contains(t, err.Error(), c.reason)
			assert.Contains(t, err.Error(), c.field)
		})
	}
	require.NoError(t, ok.Check())
	for _, a := range []struct {
		name      string
		ub, path  float64
		wantField string
	}{{"U_B zero", 0, 1, "ub_v"}, {"U_B NaN", math.NaN(), 1, "ub_v"}, {"path zero", 150e3, 0, "path_m"}, {"path negative", 150e3, -1, "path_m"}} {
		_, err := Correct(ok, a.ub, a.path)
		var fe *FieldError
		require.True(t, errors.As(err, &fe), a.name)
		assert.Equal(t, a.wantField, fe.Field, a.name)
	}
	_, err := CorrectWithstand(ok, 0, 1)
	var fe *FieldError
	require.True(t, errors.As(err, &fe))
	assert.Equal(t, "test_v", fe.Field)
}

func TestWarnings(t *testing.T) {
	cases := []struct {
		name  string
		c     Conditions
		codes []string
	}{
		{"a mild day", Conditions{Pressure_pa: 98.2e3, Temperature_c: 24, RelHumidity_pct: 45}, nil},
		{"humid", Conditions{Pressure_pa: 100e3, Temperature_c: 22, RelHumidity_pct: 85}, []string{"humidity-extrapolated", "humidity-high"}},
		{"warm and thin air", Conditions{Pressure_pa: 70e3, Temperature_c: 30, RelHumidity_pct: 50}, []string{"humidity-extrapolated"}},
		{"saturated by absolute", Conditions{Pressure_pa: 101e3, Temperature_c: 10, AbsHumidity_g_per_m3: 9}, []string{"humidity-high"}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			r, err := Correct(c.c, 600e3, 1)
			require.NoError(t, err)
			var codes []string
			for _, w := range r.Warnings {
				codes = append(codes, w.Code)
			}
			assert.Equal(t, c.codes, codes)
		})
	}
}

func TestApplyAndStandard(t *testing.T) {
	// Thin, dry air: delta and k below 1, a gap in the full-correction regime.
	c := Conditions{Pressure_pa: 90e3, Temperature_c: 25, AbsHumidity_g_per_m3: 6}
	r, err := Correct(c, -1100e3, 2.4)
	require.NoError(t, err)
	require.InDelta(t, 1, r.M, 1e-12, "g %g in the plateau", r.G)
	require.InDelta(t, 1, r.W, 1e-12)
	assert.InEpsilon(t, r.Delta*r.K, r.Kt, 1e-15, "Kt = delta k on the plateau")
	assert.Less(t, r.Kt, 1.0)
	assert.Equal(t, 1100e3, r.Ub_v, "U_B is a magnitude")
	assert.InEpsilon(t, -1100e3/r.Kt, ToStandard(-1100e3, r), 1e-15, "the sign is kept")
	assert.Greater(t, ToStandard(800e3, r), 800e3, "a discharge in thin air stands for a higher one at the standard atmosphere")
	assert.Less(t, ToApply(800e3, r), 800e3, "and a withstand voltage is applied lower")
	assert.InEpsilon(t, 800e3, ToApply(ToStandard(800e3, r), r), 1e-15)
	assert.True(t, math.IsNaN(ToApply(1, Correction{})))
	assert.True(t, math.IsNaN(ToStandard(1, Correction{})))

	w, err := CorrectWithstand(c, 1000e3, 2.4)
	require.NoError(t, err)
	assert.InEpsilon(t, 1100e3, w.Ub_v, 1e-15, "U_B = 1.1 x the test voltage (issue 13)")
	assert.Equal(t, r.Kt, w.Kt)
	assert.InEpsilon(t, r.RelHumidity_pct, RelativeHumidity(25, 6), 1e-15)
}
