package scenarios

import (
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func TestNestingTooDeep(t *testing.T) {
	for _, name := range Examples() {
		text, err := ExampleText(name)
		require.NoError(t, err)
		assert.Zero(t, nestingTooDeep(text), name)
	}
	ok := "edges = [" + strings.Repeat("1.25, ", 500) + "2.5]\nt = 1979-05-27T07:32:00.999\nx = -1.5e3\n" +
		"s = \"a.b.c.d.e.f.g.h.i.j.k.l.m.n.o.p.q.r.s.t.u.v.w.x.y.z.a.b.c.d.e.f.g.h.i.j.k.l.m.n.o.p.q.r.s.t.u.v.w.x.y.z.a.b.c\"\n"
	assert.Zero(t, nestingTooDeep([]byte(ok)), "floats and strings are not nesting")

	cases := map[string]string{
		"nested inline tables": "a = 1\nb = " + strings.Repeat("{c=", 100) + "1" + strings.Repeat("}", 100),
		"nested arrays":        "a = 1\nb = " + strings.Repeat("[", 100) + strings.Repeat("]", 100),
		"long dotted header":   "a = 1\n[" + strings.Repeat("x.", 100) + "y]",
		"long dotted key":      "a = 1\n" + strings.Repeat("\"q\".", 100) + "y = 1",
		"dotted numeric key":   "a = 1\n" + strings.Repeat("1.", 100) + "1 = 2",
	}
	for name, text := range cases {
		assert.Equal(t, 2, nestingTooDeep([]byte(text)), name)
		_, err := LoadBytes("x.toml", []byte(text), nil)
		require.Error(t, err, name)
		assert.Contains(t, err.Error(), "x.toml:2: keys or tables nest more than 64 levels deep", name)
	}
	// Lines inside multi-line strings are counted.
	text := "a = \"\"\"\none\ntwo\n\"\"\"\nb = " + strings.Repeat("[", 80)
	assert.Equal(t, 5, nestingTooDeep([]byte(text)))
}
