package report

import (
	"bytes"
	"image"
	"image/png"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// Text from the user (a scenario name, a verdict) is escaped, never run;
// figures are embedded; the verdict comes first; a missing figure is an
// error naming it, not a page with a broken image.
func TestWriteEscapesEmbedsAndOrders(t *testing.T) {
	dir := t.TempDir()
	var buf bytes.Buffer
	require.NoError(t, png.Encode(&buf, image.NewGray(image.Rect(0, 0, 3, 2))))
	require.NoError(t, os.WriteFile(filepath.Join(dir, "a.png"), buf.Bytes(), 0o644))
	r := &Report{Command: "test-burst", Title: "t", Version: "9.9",
		Verdict: Line{Text: `weak evidence <script>alert(1)</script>`, Tone: Caution},
		Tables:  []Table{{Title: "numbers", Rows: []Row{{Name: "p", Value: "0.03"}}}},
		Figures: []Figure{{File: "a.png", Caption: "a figure"}}}
	r.Scenario.Name = `<b>x</b>`
	r.Scenario.Hash = "abc123"
	var out bytes.Buffer
	require.NoError(t, r.Write(&out, func(n string) ([]byte, error) { return os.ReadFile(filepath.Join(dir, n)) }))
	page := out.String()
	assert.NotContains(t, page, "<script>alert(1)</script>")
	assert.Contains(t, page, "&lt;script&gt;")
	assert.NotContains(t, page, "<b>x</b>")
	assert.Contains(t, page, `src="data:image/png;base64,`)
	assert.Contains(t, page, "abc123")
	assert.Less(t, strings.Index(page, `id="verdict"`), strings.Index(page, `id="numbers"`))
	assert.Less(t, strings.Index(page, `id="numbers"`), strings.Index(page, `id="figures"`))
	assert.Less(t, strings.Index(page, `id="figures"`), strings.Index(page, `id="provenance"`))

	r.Figures = append(r.Figures, Figure{File: "missing.png"})
	err := r.Write(&out, func(n string) ([]byte, error) { return os.ReadFile(filepath.Join(dir, n)) })
	require.Error(t, err)
	assert.Contains(t, err.Error(), "missing.png")
}
