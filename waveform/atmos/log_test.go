package atmos

import (
	"errors"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// An invented logger's file: hPa, a comment, a blank line, a column it does not know,
// zone-less times (UTC) and one with a zone.
const inventedLog = `time, pressure_hpa, temperature_c, rel_humidity_pct, dew_point_c
# bay 2, invented readings
2024-05-06 09:00:00, 982.0, 23.5, 44, 10.6

2024-05-06 09:30:00, 981.6, 24.0, 45, 11.4
2024-05-06T10:00:00Z, 981.2, 24.4, 47, 12.3
2024-05-06T12:30:00+02:00, 980.9, 24.9, 46, 12.4
`

func TestReadLog(t *testing.T) {
	log, err := ReadLog(strings.NewReader(inventedLog))
	require.NoError(t, err)
	require.Len(t, log, 4)
	assert.Equal(t, Reading{Time: time.Date(2024, 5, 6, 9, 0, 0, 0, time.UTC), Line: 3,
		Conditions: Conditions{Pressure_pa: 98200, Temperature_c: 23.5, RelHumidity_pct: 44}}, log[0])
	assert.Equal(t, 5, log[1].Line, "lines count the comment and the blank line")
	assert.True(t, log[3].Time.Equal(time.Date(2024, 5, 6, 10, 30, 0, 0, time.UTC)), "12:30+02:00 is 10:30 UTC")

	at := func(hm string) time.Time {
		tm, err := time.Parse("2006-01-02 15:04:05", "2024-05-06 "+hm)
		require.NoError(t, err)
		return tm
	}
	for _, c := range []struct {
		when        string
		last, near  int // indices into log, -1: none
		description string
	}{
		{"08:59:59", -1, 0, "before the log"},
		{"09:00:00", 0, 0, "on a reading"},
		{"09:14:00", 0, 0, "nearer the earlier"},
		{"09:15:00", 0, 0, "a tie takes the earlier"},
		{"09:16:00", 0, 1, "nearer the later"},
		{"09:30:00", 1, 1, "on a reading"},
		{"11:00:00", 3, 3, "after the log"},
	} {
		r, ok := log.LastBefore(at(c.when))
		if assert.Equal(t, c.last >= 0, ok, c.when) && ok {
			assert.Equal(t, log[c.last], r, "last before %s: %s", c.when, c.description)
		}
		r, ok = log.Nearest(at(c.when))
		require.True(t, ok)
		assert.Equal(t, log[c.near], r, "nearest %s: %s", c.when, c.description)
	}
	_, ok := Log(nil).Nearest(at("09:00:00"))
	assert.False(t, ok)

	abs, err := ReadLog(strings.NewReader("Time,Pressure_kPa,Temperature_C,Abs_Humidity_g_per_m3\n2024-05-06T09:00:00Z,98.2,24,9.8\n"))
	require.NoError(t, err, "names in any case, kPa, absolute humidity")
	assert.Equal(t, Conditions{Pressure_pa: 98200, Temperature_c: 24, AbsHumidity_g_per_m3: 9.8}, abs[0].Conditions)
}

func TestReadLogRefuses(t *testing.T) {
	const head = "time,pressure_pa,temperature_c,rel_humidity_pct\n"
	cases := []struct {
		name         string
		text         string
		cause        error // nil: a *FieldError
		line, column int
		detail       string
	}{
		{"empty", "", ErrLogEmpty, 0, 0, "no header"},
		{"header only", head, ErrLogEmpty, 0, 0, "no readings"},
		{"no pressure", "time,temperature_c,rel_humidity_pct\n", ErrLogHeader, 1, 0, "no pressure_pa, pressure_hpa or pressure_kpa column"},
		{"no humidity", "time,pressure_pa,temperature_c\n", ErrLogHeader, 1, 0, "no rel_humidity_pct or abs_humidity_g_per_m3"},
		{"two humidities", "time,pressure_pa,temperature_c,rel_humidity_pct,abs_humidity_g_per_m3\n", ErrLogHeader, 1, 49, "a second humidity column"},
		{"two pressures", "time,pressure_pa,pressure_hpa,temperature_c,rel_humidity_pct\n", ErrLogHeader, 1, 18, "a second pressure column"},
		{"bad time", head + "06/05/2024 09:00,98200,24,45\n", ErrLogTime, 2, 1, "give RFC 3339"},
		{"time goes back", head + "2024-05-06T09:30:00Z,98200,24,45\n2024-05-06T09:00:00Z,98200,24,45\n", ErrLogOrder, 3, 1, "before line 2"},
		{"decimal comma", head + "2024-05-06T09:00:00Z,98200,24,45,5\n", ErrLogFields, 2, 1, "wrong number of fields"},
		{"not a number", head + "2024-05-06T09:00:00Z,98200,warm,45\n", ErrLogNumber, 2, 28, `"warm" in column temperature_c`},
		{"bad quote", head + "2024-05-06T09:00:00Z,\"98200,24,45\n", ErrLogSyntax, 2, 0, "quote"},
		{"pressure in kPa under a Pa header", head + "2024-05-06T09:00:00Z,98.2,24,45\n", nil, 2, 22, "in kPa? give pascals"},
		{"humidity above 100", head + "2024-05-06T09:00:00Z,98200,24,145\n", nil, 2, 31, "outside 0 to 100 %"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, err := ReadLog(strings.NewReader(c.text))
			var le *LogError
			require.True(t, errors.As(err, &le), "%v", err)
			if c.cause != nil {
				assert.ErrorIs(t, err, c.cause)
			} else {
				var fe *FieldError
				assert.True(t, errors.As(err, &fe), "a reading outside Check's ranges carries the *FieldError")
			}
			assert.Equal(t, c.line, le.Line, "line")
			if c.column > 0 {
				assert.Equal(t, c.column, le.Column, "column")
			}
			assert.Contains(t, err.Error(), c.detail)
		})
	}
}

// The property: no panic, and either readings that pass Check in time order or a
// *LogError.
func FuzzReadLog(f *testing.F) {
	f.Add(inventedLog)
	f.Add("time,pressure_pa,temperature_c,abs_humidity_g_per_m3\n2024-05-06T09:00:00Z,98200,24,9\n")
	f.Add("time,pressure_pa,temperature_c,rel_humidity_pct\n2024-05-06T09:00:00Z,\"98200\",24,45,1\n")
	f.Fuzz(func(t *testing.T, text string) {
		log, err := ReadLog(strings.NewReader(text))
		if err != nil {
			var le *LogError
			require.True(t, errors.As(err, &le), "%v", err)
			require.Nil(t, log)
			return
		}
		require.NotEmpty(t, log)
		for i, r := range log {
			require.NoError(t, r.Check())
			if i > 0 {
				require.False(t, r.Time.Before(log[i-1].Time))
			}
		}
	})
}
