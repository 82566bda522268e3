package outcome

import (
	"encoding/json"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func TestResultJSON(t *testing.T) {
	b, err := json.Marshal(Withstand(ProcedureA, "positive", apps(3)))
	require.NoError(t, err)
	assert.NotContains(t, string(b), "u50_v", "NaN figures are absent")
	assert.Contains(t, string(b), `"verdict":"passed"`)
	r := UpAndDown("positive", toApps(loadRefs(t).UpAndDown[0].Levels, loadRefs(t).UpAndDown[0].Discharge), 3e3, false)
	b, err = json.Marshal(r)
	require.NoError(t, err)
	var back map[string]any
	require.NoError(t, json.Unmarshal(b, &back))
	assert.InDelta(t, r.U50_v, back["u50_v"], 1e-9, "the pointer field wins over the embedded one")
	assert.Equal(t, 1, countKey(string(b), `"u50_v"`))
}

func countKey(s, k string) int {
	n := 0
	for i := 0; i+len(k) <= len(s); i++ {
		if s[i:i+len(k)] == k {
			n++
		}
	}
	return n
}
