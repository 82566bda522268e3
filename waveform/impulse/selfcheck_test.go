package impulse

import (
	"encoding/json"
	"math"
	"os"
	"sort"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// The embedded reference copy must be the file the SciPy script wrote
// (testdata/reference/impulse_refs.py).
func TestEmbeddedRefsMatchReferenceFile(t *testing.T) {
	b, err := os.ReadFile("../../testdata/reference/impulse_refs.json")
	require.NoError(t, err)
	assert.Equal(t, b, selfcheckRefs)
}

// Every line is within its limit, or a listed known miss; and the misses are exactly
// KnownMisses, so that a fix (or a new miss) changes this test, never the limits.
func TestSelfCheckPasses(t *testing.T) {
	lines, err := SelfCheck()
	require.NoError(t, err)
	require.NotEmpty(t, lines)
	var missed []string
	for _, l := range lines {
		if !l.OK {
			missed = append(missed, l.Case+"|"+l.Param)
		}
		assert.True(t, l.OK || l.Known, "%s %s: %g against %g (%.3g %%, limit %.2g) %s/%s", l.Case, l.Param, l.Got, l.Ref, l.Err_pct, l.Limit_pct, l.Expect, l.Found)
		if l.Expect == "" {
			// a numeric line has a real limit and finite numbers (the --json output needs them)
			assert.Greater(t, l.Limit_pct, 0.0, "%s %s", l.Case, l.Param)
			assert.False(t, math.IsNaN(l.Got) || math.IsInf(l.Got, 0), "%s %s measured %g", l.Case, l.Param, l.Got)
		}
	}
	var known []string
	for k := range KnownMisses {
		known = append(known, k)
	}
	sort.Strings(missed)
	sort.Strings(known)
	assert.Equal(t, known, missed, "the self-check's misses must be exactly the known misses")
	_, err = json.Marshal(lines)
	assert.NoError(t, err)
}

// Each group of the widened set is present, with the outcomes that are not numbers.
func TestSelfCheckCoversGroups(t *testing.T) {
	lines, err := SelfCheck()
	require.NoError(t, err)
	type key struct{ cs, param string }
	seen := map[key]Check{}
	for _, l := range lines {
		seen[key{l.Case, l.Param}] = l
	}
	for _, c := range []struct {
		cs, param, expect string
	}{
		{"handbook-lightning, 1 GS/s (clean)", "front time T1", ""},
		{"handbook-lightning, 100 MS/s (0.5 % noise)", "time to half T2", ""},
		{"handbook chopped on the front", ParamShape, "chopped on the front"},
		{"handbook chopped on the front", ParamSteepness, ""},
		{"handbook chopped on the tail, undershoot, noise", ParamPolarity, "positive"},
		{"oscillation 0.5 MHz, 10 %, 1 GS/s, 0.5 % noise", "overshoot (points)", ""},
		{"handbook-lightning, 8-bit, 0.2 % noise", ParamTestVoltage, ""},
		{"handbook-lightning clipped at 250 kV, range stated", ParamVerdict, outcomeIncomplete},
		{"handbook-lightning clipped at 250 kV, no range stated", ParamVerdict, outcomeIncomplete},
		{"handbook-lightning cut 40 us after its start", ParamVerdict, outcomeIncomplete},
		{"negative noise, no impulse", ParamOutcome, outcomeNoImpulse},
		{"negative step, no impulse", ParamOutcome, outcomeNoImpulse},
		{"coil, derivative, 10/350", "time to half T2", ""},
		{"coil, 1 Mohm || 100 pF", ParamPeakCurrent, ""},
		{"antenna, 1.2/50 field", ParamEndField, ""},
	} {
		l, ok := seen[key{c.cs, c.param}]
		if assert.True(t, ok, "%s %s missing", c.cs, c.param) {
			assert.Equal(t, c.expect, l.Expect, "%s %s", c.cs, c.param)
		}
	}
}

// An outcome line is OK only when the outcome found is the one expected, and a numeric
// line only within its limit: the self-check can fail.
func TestCheckerCanFail(t *testing.T) {
	c := &checker{}
	c.expect("x", ParamVerdict, outcomeIncomplete, "pass")
	c.expect("x", ParamVerdict, outcomeIncomplete, outcomeIncomplete)
	c.cmp("x", "front time T1", 1.2e-6, 1.2e-6*1.006, 0.5) // 0.6 % against 0.5 %
	c.cmp("x", "front time T1", 1.2e-6, 1.2e-6*1.004, 0.5)
	require.Len(t, c.out, 4)
	assert.False(t, c.out[0].OK)
	assert.True(t, c.out[1].OK)
	assert.False(t, c.out[2].OK)
	assert.True(t, c.out[3].OK)
}

// The noise generator is the script's: its first deviates for the script's seed agree
// (to rounding: math.Log and libm's log may differ in the last place).
func TestGaussMatchesScript(t *testing.T) {
	var doc groupsDoc
	require.NoError(t, json.Unmarshal(selfcheckRefs, &doc))
	require.NotEmpty(t, doc.NoiseGen.First)
	got := gauss(doc.NoiseGen.Seed, len(doc.NoiseGen.First))
	for i, want := range doc.NoiseGen.First {
		assert.InDelta(t, want, got[i], 1e-12, "deviate %d", i)
	}
	// odd lengths are served too
	assert.Len(t, gauss(1, 7), 7)
}

// quantise holds samples beyond the range at the edge codes and rounds to code centres.
func TestQuantise(t *testing.T) {
	x := []float64{-100, 0, 0.49, 0.51, 3.9, 100}
	quantise(x, 2, 0, 4) // codes of 1 V, centres 0.5, 1.5, 2.5, 3.5
	assert.Equal(t, []float64{0.5, 0.5, 0.5, 0.5, 3.5, 3.5}, x)
}
