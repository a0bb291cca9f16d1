package assemble

import (
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/scenarios"
)

// The template key follows the scenario parts templates depend on and the
// model's revision, not the history.
func TestTemplateKey(t *testing.T) {
	a, err := scenarios.LoadExample("smooth")
	require.NoError(t, err)
	b, err := scenarios.LoadExample("burst")
	require.NoError(t, err)
	ka, err := TemplateKey(a)
	require.NoError(t, err)
	kb, err := TemplateKey(b)
	require.NoError(t, err)
	assert.Equal(t, ka, kb, "burst differs from smooth in its history only")
	assert.Len(t, ka, 64)
	h, err := a.PartHash(templateSections...)
	require.NoError(t, err)
	assert.NotEqual(t, h, ka, "the model revision enters the key")
	c, err := scenarios.LoadExample("stall")
	require.NoError(t, err)
	kc, err := TemplateKey(c)
	require.NoError(t, err)
	assert.NotEqual(t, ka, kc)

	// Columns of dereddened color hold other stars: other templates.
	o, err := scenarios.ParseOverride(`compare.color_axis="dereddened"`)
	require.NoError(t, err)
	d, err := scenarios.Resolve("example:smooth", o)
	require.NoError(t, err)
	kd, err := TemplateKey(d)
	require.NoError(t, err)
	assert.NotEqual(t, ka, kd)
}
