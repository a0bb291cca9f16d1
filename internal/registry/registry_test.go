package registry

import (
	"errors"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func TestList(t *testing.T) {
	type entry struct{ name, v string }
	l := New(func(e entry) string { return e.name })
	require.NoError(t, l.Add(entry{"b", "1"}, nil))
	require.NoError(t, l.Add(entry{"a", "2"}, nil))
	assert.Equal(t, []string{"b", "a"}, l.Names(), "registration order")
	assert.Error(t, l.Add(entry{"a", "3"}, nil), "a name is taken once")
	assert.Error(t, l.Add(entry{"", "3"}, nil), "an entry needs a name")
	assert.Error(t, l.Add(entry{"c", "3"}, func([]entry) error { return errors.New("no") }), "check can refuse")
	e, ok := l.Lookup("a")
	assert.True(t, ok)
	assert.Equal(t, "2", e.v)
	_, ok = l.Lookup("c")
	assert.False(t, ok)
}
