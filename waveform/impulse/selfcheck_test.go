package impulse

import (
	"os"
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

func TestSelfCheckPasses(t *testing.T) {
	lines, err := SelfCheck()
	require.NoError(t, err)
	require.NotEmpty(t, lines)
	for _, l := range lines {
		assert.True(t, l.OK, "%s %s: %g against %g (%.3g %%, limit %.2g)", l.Case, l.Param, l.Got, l.Ref, l.Err_pct, l.Limit_pct)
	}
}
