package main

import (
	"bytes"
	"context"
	"encoding/base64"
	"html"
	"image/png"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/internal/headless"
)

var imgSrc = regexp.MustCompile(`<img src="data:image/png;base64,([A-Za-z0-9+/=]+)"`)

// checkReport holds a run's report.html to what the page promises: the
// verdict first (before the numbers and figures), every figure of the run
// embedded as a PNG that decodes, the scenario's hash, the data checksum
// and the tool version; then, in a real headless browser, that the page
// loads without console errors, shows the verdict, decodes every image and
// does not render blank.
func checkReport(t *testing.T, dir string, wantText []string, figures int, hashes ...string) {
	t.Helper()
	path := filepath.Join(dir, reportFile)
	b, err := os.ReadFile(path)
	require.NoError(t, err)
	// Entities decoded (the template writes + as &#43; in attributes and
	// ' as &#39; in text), as a browser decodes them.
	page := html.UnescapeString(string(b))
	iv, in, ifig := strings.Index(page, `id="verdict"`), strings.Index(page, `id="numbers"`), strings.Index(page, `id="figures"`)
	require.True(t, iv >= 0, "the report has a verdict")
	if in >= 0 {
		assert.Less(t, iv, in, "the verdict comes before the numbers")
	}
	if ifig >= 0 {
		assert.Less(t, iv, ifig, "the verdict comes before the figures")
	}
	for _, w := range wantText {
		assert.Contains(t, page, w)
	}
	for _, h := range hashes {
		assert.Contains(t, page, h)
	}
	assert.Contains(t, page, "spinpop "+version)
	assert.NotContains(t, page, `src="http`, "self-contained: nothing fetched from elsewhere")
	assert.NotContains(t, page, `href="http`)
	m := imgSrc.FindAllStringSubmatch(page, -1)
	assert.Len(t, m, figures, "every figure embedded")
	for _, s := range m {
		raw, err := base64.StdEncoding.DecodeString(s[1])
		require.NoError(t, err)
		_, err = png.Decode(bytes.NewReader(raw))
		assert.NoError(t, err)
	}

	t.Run("in a browser", func(t *testing.T) {
		browser := headless.ForTest(t)
		p, err := headless.Load(context.Background(), browser, path)
		require.NoError(t, err)
		assert.Empty(t, p.Errors, "console errors")
		assert.Contains(t, p.Text, "Verdict")
		for _, w := range wantText {
			assert.Contains(t, p.Text, w)
		}
		assert.Len(t, p.Images, figures)
		for _, im := range p.Images {
			assert.True(t, im.Complete && im.NaturalWidth > 0 && im.NaturalHeight > 0, "image %q did not decode", im.Alt)
		}
		shot, err := png.Decode(bytes.NewReader(p.Screenshot))
		require.NoError(t, err)
		assert.False(t, headless.Blank(shot), "the screenshot is blank")
	})
}

// simulate writes a report whose verdict states the catalog's size.
func TestSimulateReport(t *testing.T) {
	sc := smallScenario(t, 20000)
	dir := filepath.Join(t.TempDir(), "out")
	code, out, errs := runCLI("simulate", sc, "--out", dir)
	require.Equal(t, 0, code, errs)
	assert.Contains(t, out, "report.html")
	res, err := loadScenario(sc, nil)
	require.NoError(t, err)
	checkReport(t, dir, []string{"The survey's catalog holds"}, 4, res.Hash())
}
