package headless

import (
	"bytes"
	"context"
	"encoding/base64"
	"image"
	"image/color"
	"image/png"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// The checker must be able to fail: a page with one good image, one that
// cannot decode, a console error and an uncaught exception is reported as
// such, and its text and screenshot come back.
func TestLoadReportsWhatAReaderMeets(t *testing.T) {
	browser := ForTest(t)
	img := image.NewRGBA(image.Rect(0, 0, 7, 5))
	for i := range img.Pix {
		img.Pix[i] = 0x80
	}
	img.Set(1, 1, color.RGBA{R: 255, A: 255})
	var buf bytes.Buffer
	require.NoError(t, png.Encode(&buf, img))
	good := "data:image/png;base64," + base64.StdEncoding.EncodeToString(buf.Bytes())
	bad := "data:image/png;base64," + base64.StdEncoding.EncodeToString([]byte("not a png at all"))
	page := `<!DOCTYPE html><html><head><meta charset="utf-8"><title>probe</title></head><body style="background:#fff">
<h1 style="background:#036;color:#fff">Verdict: a burst</h1>
<img alt="good" src="` + good + `"><img alt="bad" src="` + bad + `">
<script>console.error("deliberate"); throw new Error("thrown on purpose");</script>
</body></html>`
	f := filepath.Join(t.TempDir(), "probe.html")
	require.NoError(t, os.WriteFile(f, []byte(page), 0o644))
	p, err := Load(context.Background(), browser, f)
	require.NoError(t, err)
	assert.Equal(t, "probe", p.Title)
	assert.Contains(t, p.Text, "Verdict: a burst")
	require.Len(t, p.Images, 2)
	assert.Equal(t, 7, p.Images[0].NaturalWidth)
	assert.Equal(t, 5, p.Images[0].NaturalHeight)
	assert.Equal(t, 0, p.Images[1].NaturalWidth, "an image that cannot decode has no natural width")
	joined := strings.Join(p.Errors, "\n")
	assert.Contains(t, joined, "deliberate")
	assert.Contains(t, joined, "thrown on purpose")
	shot, err := png.Decode(bytes.NewReader(p.Screenshot))
	require.NoError(t, err)
	assert.False(t, Blank(shot), "the screenshot shows the heading")
}
