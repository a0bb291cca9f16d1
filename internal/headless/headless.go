// Package headless loads a page in a real headless browser (Debian's
// chromium) and reports what a reader would meet: the text shown, whether
// every image decoded, the errors on the console, and a screenshot. It
// speaks the browser's DevTools protocol over a minimal WebSocket client,
// so it needs no library beyond the standard one. Tests use it to check
// spinpop's report.html.
package headless

import (
	"bufio"
	"context"
	"encoding/base64"
	"encoding/json"
	"errors"
	"fmt"
	"image"
	"io"
	"net/http"
	"net/url"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"sync"
	"time"
)

// Find returns the browser to use: $SPINPOP_CHROMIUM, else chromium or
// chromium-browser on the PATH.
func Find() (string, bool) {
	if p := os.Getenv("SPINPOP_CHROMIUM"); p != "" {
		return p, true
	}
	for _, name := range []string{"chromium", "chromium-browser"} {
		if p, err := exec.LookPath(name); err == nil {
			return p, true
		}
	}
	return "", false
}

// Image is one <img> of the page as the browser decoded it.
type Image struct {
	NaturalWidth, NaturalHeight int
	Complete                    bool
	Alt                         string
}

// Page is what the browser made of a file.
type Page struct {
	Title      string
	Text       string // document.body.innerText
	Images     []Image
	Errors     []string // console errors, uncaught exceptions, error log entries
	Screenshot []byte   // PNG of the first screenful
}

// Load opens file in the browser at path and waits for its load event.
func Load(ctx context.Context, browser, file string) (*Page, error) {
	abs, err := filepath.Abs(file)
	if err != nil {
		return nil, err
	}
	profile, err := os.MkdirTemp("", "spinpop-headless-*")
	if err != nil {
		return nil, err
	}
	defer os.RemoveAll(profile)
	ctx, cancel := context.WithTimeout(ctx, 90*time.Second)
	defer cancel()
	cmd := exec.CommandContext(ctx, browser, "--headless", "--no-sandbox", "--disable-gpu", "--no-first-run",
		"--no-default-browser-check", "--hide-scrollbars", "--remote-debugging-port=0", "--window-size=1200,1600",
		"--user-data-dir="+profile, "about:blank")
	stderr, err := cmd.StderrPipe()
	if err != nil {
		return nil, err
	}
	if err := cmd.Start(); err != nil {
		return nil, fmt.Errorf("headless: starting %s: %w", browser, err)
	}
	defer func() {
		_ = cmd.Process.Kill()
		_ = cmd.Wait()
	}()
	endpoint, err := devtoolsEndpoint(stderr)
	if err != nil {
		return nil, err
	}
	wsURL, err := pageTarget(endpoint)
	if err != nil {
		return nil, err
	}
	s, err := newSession(wsURL)
	if err != nil {
		return nil, err
	}
	defer s.close()
	for _, m := range []string{"Runtime.enable", "Log.enable", "Page.enable"} {
		if _, err := s.call(ctx, m, nil); err != nil {
			return nil, err
		}
	}
	loaded := s.waitEvent("Page.loadEventFired")
	u := url.URL{Scheme: "file", Path: abs}
	if _, err := s.call(ctx, "Page.navigate", map[string]any{"url": u.String()}); err != nil {
		return nil, err
	}
	select {
	case <-loaded:
	case <-ctx.Done():
		return nil, fmt.Errorf("headless: %s did not finish loading: %w", file, ctx.Err())
	}
	const probe = `JSON.stringify({title: document.title, text: document.body ? document.body.innerText : "",
		imgs: Array.from(document.images).map(i => ({NaturalWidth: i.naturalWidth, NaturalHeight: i.naturalHeight, Complete: i.complete, Alt: i.alt}))})`
	res, err := s.call(ctx, "Runtime.evaluate", map[string]any{"expression": probe, "returnByValue": true, "awaitPromise": false})
	if err != nil {
		return nil, err
	}
	var ev struct {
		Result struct {
			Value string `json:"value"`
		} `json:"result"`
	}
	if err := json.Unmarshal(res, &ev); err != nil {
		return nil, err
	}
	var got struct {
		Title string  `json:"title"`
		Text  string  `json:"text"`
		Imgs  []Image `json:"imgs"`
	}
	if err := json.Unmarshal([]byte(ev.Result.Value), &got); err != nil {
		return nil, fmt.Errorf("headless: page probe: %w", err)
	}
	shot, err := s.call(ctx, "Page.captureScreenshot", map[string]any{"format": "png"})
	if err != nil {
		return nil, err
	}
	var sc struct {
		Data string `json:"data"`
	}
	if err := json.Unmarshal(shot, &sc); err != nil {
		return nil, err
	}
	png, err := base64.StdEncoding.DecodeString(sc.Data)
	if err != nil {
		return nil, err
	}
	return &Page{Title: got.Title, Text: got.Text, Images: got.Imgs, Errors: s.errors(), Screenshot: png}, nil
}

var listening = regexp.MustCompile(`DevTools listening on (ws://\S+)`)

// devtoolsEndpoint reads the browser's stderr until it says where its
// DevTools endpoint listens, and keeps draining it afterwards.
func devtoolsEndpoint(r io.Reader) (string, error) {
	sc := bufio.NewScanner(r)
	var seen []string
	for sc.Scan() {
		line := sc.Text()
		if m := listening.FindStringSubmatch(line); m != nil {
			go io.Copy(io.Discard, r)
			return m[1], nil
		}
		seen = append(seen, line)
	}
	return "", fmt.Errorf("headless: the browser never opened its DevTools endpoint; it said:\n%s", strings.Join(seen, "\n"))
}

// pageTarget finds the WebSocket address of the browser's page.
func pageTarget(browserWS string) (string, error) {
	u, err := url.Parse(browserWS)
	if err != nil {
		return "", err
	}
	resp, err := http.Get("http://" + u.Host + "/json/list")
	if err != nil {
		return "", err
	}
	defer resp.Body.Close()
	var targets []struct {
		Type string `json:"type"`
		WS   string `json:"webSocketDebuggerUrl"`
	}
	if err := json.NewDecoder(resp.Body).Decode(&targets); err != nil {
		return "", err
	}
	for _, t := range targets {
		if t.Type == "page" && t.WS != "" {
			return t.WS, nil
		}
	}
	return "", errors.New("headless: the browser shows no page")
}

// session is one DevTools connection: calls by id, events by method.
type session struct {
	ws      *wsConn
	mu      sync.Mutex
	nextID  int
	pending map[int]chan reply
	waiters map[string][]chan struct{}
	errs    []string
	done    chan struct{}
}

type reply struct {
	result json.RawMessage
	err    error
}

func newSession(wsURL string) (*session, error) {
	ws, err := wsDial(wsURL)
	if err != nil {
		return nil, err
	}
	s := &session{ws: ws, pending: map[int]chan reply{}, waiters: map[string][]chan struct{}{}, done: make(chan struct{})}
	go s.read()
	return s, nil
}

func (s *session) close() { s.ws.Close(); <-s.done }

func (s *session) read() {
	defer close(s.done)
	for {
		msg, err := s.ws.ReadMessage()
		if err != nil {
			s.mu.Lock()
			for id, ch := range s.pending {
				ch <- reply{err: fmt.Errorf("headless: connection closed: %w", err)}
				delete(s.pending, id)
			}
			s.mu.Unlock()
			return
		}
		var m struct {
			ID     int             `json:"id"`
			Method string          `json:"method"`
			Params json.RawMessage `json:"params"`
			Result json.RawMessage `json:"result"`
			Error  *struct {
				Message string `json:"message"`
			} `json:"error"`
		}
		if json.Unmarshal(msg, &m) != nil {
			continue
		}
		s.mu.Lock()
		if m.ID != 0 {
			if ch, ok := s.pending[m.ID]; ok {
				r := reply{result: m.Result}
				if m.Error != nil {
					r.err = fmt.Errorf("headless: %s", m.Error.Message)
				}
				ch <- r
				delete(s.pending, m.ID)
			}
		} else {
			s.noteEvent(m.Method, m.Params)
			for _, ch := range s.waiters[m.Method] {
				close(ch)
			}
			delete(s.waiters, m.Method)
		}
		s.mu.Unlock()
	}
}

// noteEvent keeps what counts as an error a reader would see in the
// console: console.error and failed assertions, uncaught exceptions, and
// log entries of level error (failed loads, blocked content).
func (s *session) noteEvent(method string, params json.RawMessage) {
	switch method {
	case "Runtime.consoleAPICalled":
		var p struct {
			Type string `json:"type"`
			Args []struct {
				Value       any    `json:"value"`
				Description string `json:"description"`
			} `json:"args"`
		}
		if json.Unmarshal(params, &p) == nil && (p.Type == "error" || p.Type == "assert") {
			var parts []string
			for _, a := range p.Args {
				parts = append(parts, fmt.Sprint(a.Value)+a.Description)
			}
			s.errs = append(s.errs, "console."+p.Type+": "+strings.Join(parts, " "))
		}
	case "Runtime.exceptionThrown":
		var p struct {
			Details struct {
				Text      string `json:"text"`
				Exception struct {
					Description string `json:"description"`
				} `json:"exception"`
			} `json:"exceptionDetails"`
		}
		if json.Unmarshal(params, &p) == nil {
			s.errs = append(s.errs, "exception: "+p.Details.Text+" "+p.Details.Exception.Description)
		}
	case "Log.entryAdded":
		var p struct {
			Entry struct {
				Level, Text, URL, Source string
			} `json:"entry"`
		}
		if json.Unmarshal(params, &p) == nil && p.Entry.Level == "error" {
			s.errs = append(s.errs, "log ("+p.Entry.Source+"): "+p.Entry.Text+" "+p.Entry.URL)
		}
	}
}

func (s *session) errors() []string {
	s.mu.Lock()
	defer s.mu.Unlock()
	return append([]string(nil), s.errs...)
}

func (s *session) waitEvent(method string) <-chan struct{} {
	ch := make(chan struct{})
	s.mu.Lock()
	s.waiters[method] = append(s.waiters[method], ch)
	s.mu.Unlock()
	return ch
}

func (s *session) call(ctx context.Context, method string, params any) (json.RawMessage, error) {
	s.mu.Lock()
	s.nextID++
	id := s.nextID
	ch := make(chan reply, 1)
	s.pending[id] = ch
	s.mu.Unlock()
	msg, err := json.Marshal(map[string]any{"id": id, "method": method, "params": params})
	if err != nil {
		return nil, err
	}
	if params == nil {
		msg, _ = json.Marshal(map[string]any{"id": id, "method": method})
	}
	if err := s.ws.WriteText(msg); err != nil {
		return nil, err
	}
	select {
	case r := <-ch:
		return r.result, r.err
	case <-ctx.Done():
		return nil, fmt.Errorf("headless: %s: %w", method, ctx.Err())
	}
}

// T is the part of testing.TB that ForTest uses.
type T interface {
	Helper()
	Skip(args ...any)
	Fatal(args ...any)
}

// RequireEnv names the variable that makes a missing browser a failure
// rather than a skip (CI sets it; see .ci/run).
const RequireEnv = "SPINPOP_REQUIRE_BROWSER"

// ForTest returns the browser for a test, or skips the test with a
// message saying how to run it; with SPINPOP_REQUIRE_BROWSER=1 a missing
// browser fails the test instead.
func ForTest(t T) string {
	t.Helper()
	p, ok := Find()
	if ok {
		return p
	}
	msg := "no headless browser: install Debian's chromium (apt-get install chromium) or set SPINPOP_CHROMIUM to run the report's browser check"
	if os.Getenv(RequireEnv) == "1" {
		t.Fatal(msg + " (" + RequireEnv + "=1 requires it)")
	}
	t.Skip(msg)
	return ""
}

// Blank says whether an image is a single color (a page that rendered
// nothing).
func Blank(img image.Image) bool {
	b := img.Bounds()
	first := img.At(b.Min.X, b.Min.Y)
	r0, g0, b0, _ := first.RGBA()
	for y := b.Min.Y; y < b.Max.Y; y += 2 {
		for x := b.Min.X; x < b.Max.X; x += 2 {
			r, g, bl, _ := img.At(x, y).RGBA()
			if r != r0 || g != g0 || bl != b0 {
				return false
			}
		}
	}
	return true
}
