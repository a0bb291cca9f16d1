package spin

import (
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// Every registered default lies inside its own key's range (a default
// outside it would make every scenario invalid), and every switch is a
// bool key of its table.
func TestRegisteredDefaultsInRange(t *testing.T) {
	tables, owners := OptionTables()
	require.NotEmpty(t, tables)
	for i, tb := range tables {
		if tb.Switch != "" {
			var found bool
			for _, k := range tb.Keys {
				if k.Name == tb.Switch {
					_, found = k.Default.(bool)
				}
			}
			assert.True(t, found, "%s.%s: switch %q is not a bool key", owners[i], tb.Name, tb.Switch)
		}
		for _, k := range tb.Keys {
			switch d := k.Default.(type) {
			case float64:
				assert.True(t, d > k.Min || !k.MinOpen && d == k.Min, "%s.%s below its range", tb.Name, k.Name)
				assert.True(t, d < k.Max || !k.MaxOpen && d == k.Max, "%s.%s above its range", tb.Name, k.Name)
			case string:
				assert.Contains(t, k.OneOf, d, "%s.%s", tb.Name, k.Name)
			}
		}
	}
}

// The torque law built from the registry's defaults is the law of
// DefaultTorqueOptions: the same period for the same star.
func TestTorqueFromDefaultsMatchesDefaultOptions(t *testing.T) {
	fromRegistry, err := ByName("torque")
	require.NoError(t, err)
	direct, err := NewTorqueLaw(DefaultTorqueOptions())
	require.NoError(t, err)
	for _, m := range []float64{0.5, 0.8, 1.0, 1.2} {
		p1, ok1 := fromRegistry.(*TorqueLaw).PeriodAt(m, 1.5, 0.3)
		p2, ok2 := direct.PeriodAt(m, 1.5, 0.3)
		assert.Equal(t, ok2, ok1)
		assert.Equal(t, p2, p1, "mass %g", m)
	}
	_, err = ByName("skumanich")
	assert.Error(t, err)
}
