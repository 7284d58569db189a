package viewertest

import (
	"bytes"
	"context"
	"fmt"
	"image"
	"image/png"
	"net/http"
	"net/http/httptest"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/chromedp/cdproto/network"
	"github.com/chromedp/cdproto/page"
	"github.com/chromedp/cdproto/target"
	"github.com/chromedp/chromedp"

	"github.com/stipple-maps/stipple/geo/reftool"
)

var (
	tmpRoot string // removed after the tests

	browserOnce   sync.Once
	browserCtx    context.Context
	browserCancel context.CancelFunc
	browserErr    error
)

func TestMain(m *testing.M) {
	var err error
	tmpRoot, err = os.MkdirTemp("", "stipple-viewertest-")
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
		os.Exit(1)
	}
	code := m.Run()
	if browserCancel != nil {
		browserCancel()
	}
	os.RemoveAll(tmpRoot)
	os.Exit(code)
}

// browser starts one headless Chromium for all tests, with the flags that
// work on this machine (see the environment notes: no background network,
// a fresh profile).
func browser(t *testing.T) context.Context {
	t.Helper()
	exe := reftool.Need(t, "chromium")
	browserOnce.Do(func() {
		opts := []chromedp.ExecAllocatorOption{
			chromedp.ExecPath(exe),
			chromedp.Headless,
			chromedp.NoSandbox,
			chromedp.DisableGPU,
			chromedp.NoFirstRun,
			chromedp.NoDefaultBrowserCheck,
			chromedp.Flag("disable-quic", true),
			chromedp.Flag("disable-background-networking", true),
			chromedp.Flag("disable-component-update", true),
			chromedp.Flag("disable-sync", true),
			chromedp.Flag("hide-scrollbars", true),
			chromedp.Flag("font-render-hinting", "none"),
			chromedp.UserDataDir(filepath.Join(tmpRoot, "profile")),
			chromedp.WindowSize(1280, 800),
		}
		actx, acancel := chromedp.NewExecAllocator(context.Background(), opts...)
		ctx, cancel := chromedp.NewContext(actx)
		browserCtx = ctx
		browserCancel = func() { cancel(); acancel() }
		browserErr = chromedp.Do(ctx) // start it, with no timeout
	})
	if browserErr != nil {
		t.Fatalf("start chromium: %v", browserErr)
	}
	return browserCtx
}

// tab is one browser tab with what it logged and loaded.
type tab struct {
	t      *testing.T
	ctx    context.Context
	cancel context.CancelFunc

	mu        sync.Mutex
	console   []chromedp.ConsoleMessage
	responses []*network.Response
	failed    []network.EventLoadingFailed
	canceled  int
	dialogs   []string
}

// newTab opens a tab with a w × h viewport at device scale 1 and starts
// recording its console, network and dialogs.
func newTab(t *testing.T, w, h int64, opts ...chromedp.EmulateViewportOption) *tab {
	t.Helper()
	ctx, cancel := chromedp.NewContext(browser(t))
	tb := record(t, ctx, cancel)
	if err := chromedp.Do(ctx, chromedp.EmulateViewport(w, h, opts...)); err != nil {
		t.Fatalf("viewport: %v", err)
	}
	return tb
}

// attach records a target that already exists, such as a frame.
func attach(t *testing.T, parent context.Context, id target.ID) *tab {
	t.Helper()
	ctx, cancel := chromedp.NewContext(parent, chromedp.WithTargetID(id))
	return record(t, ctx, cancel)
}

func record(t *testing.T, ctx context.Context, cancel context.CancelFunc) *tab {
	t.Helper()
	tb := &tab{t: t, ctx: ctx, cancel: cancel}
	t.Cleanup(cancel)
	if err := chromedp.Do(ctx); err != nil { // open or attach to the tab
		t.Fatalf("open tab: %v", err)
	}
	msgs := chromedp.Console(ctx)
	resp := chromedp.Events(ctx, network.ResponseReceived)
	fails := chromedp.Events(ctx, network.LoadingFailed)
	dialogs := chromedp.Events(ctx, page.JavascriptDialogOpening)
	go func() {
		for m, err := range msgs {
			if err != nil {
				return
			}
			tb.mu.Lock()
			tb.console = append(tb.console, m)
			tb.mu.Unlock()
		}
	}()
	go func() {
		for ev, err := range resp {
			if err != nil {
				return
			}
			tb.mu.Lock()
			tb.responses = append(tb.responses, ev.Response)
			tb.mu.Unlock()
		}
	}()
	go func() {
		for ev, err := range fails {
			if err != nil {
				return
			}
			tb.mu.Lock()
			if ev.Canceled {
				tb.canceled++ // a tile dropped from view while loading
			} else {
				tb.failed = append(tb.failed, ev)
			}
			tb.mu.Unlock()
		}
	}()
	go func() {
		for ev, err := range dialogs {
			if err != nil {
				return
			}
			tb.mu.Lock()
			tb.dialogs = append(tb.dialogs, string(ev.Type)+": "+ev.Message)
			tb.mu.Unlock()
			chromedp.Call(ctx, page.HandleJavaScriptDialog, page.HandleJavaScriptDialogParams{Accept: false})
		}
	}()
	return tb
}

// timed runs actions with a time limit (the browser itself has none).
func (tb *tab) do(actions ...chromedp.Action[chromedp.Void]) {
	tb.t.Helper()
	ctx, cancel := context.WithTimeout(tb.ctx, 20*time.Second)
	defer cancel()
	if err := chromedp.Do(ctx, actions...); err != nil {
		tb.t.Fatalf("browser: %v", err)
	}
}

func eval[T any](tb *tab, js string, opts ...chromedp.EvaluateOption) T {
	tb.t.Helper()
	ctx, cancel := context.WithTimeout(tb.ctx, 20*time.Second)
	defer cancel()
	v, err := chromedp.Run(ctx, chromedp.Evaluate[T](js, opts...))
	if err != nil {
		tb.t.Fatalf("evaluate %s: %v", js, err)
	}
	return v
}

// viewState is stippleViewer.state() in the page.
type viewState struct {
	Lon, Lat, Z float64
	TileZoom    int
	Tiles       int
	Loaded      int
	Ready       bool
	Layer       string
	Right       string
	Split       float64
	Outline     bool
	Hash        string
}

func (tb *tab) state() viewState {
	tb.t.Helper()
	return eval[viewState](tb, `stippleViewer.state()`)
}

// open loads url and waits until every tile in view has loaded.
func (tb *tab) open(url string) viewState {
	tb.t.Helper()
	tb.do(chromedp.Navigate(url))
	return tb.waitTiles()
}

// waitTiles waits until the viewer has drawn and every tile it wants has
// arrived, for at least two frames in a row.
func (tb *tab) waitTiles() viewState {
	tb.t.Helper()
	ctx, cancel := context.WithTimeout(tb.ctx, 20*time.Second)
	defer cancel()
	_, err := chromedp.Run(ctx, chromedp.Poll[bool](`(function () {
		if (!window.stippleViewer) return false;
		var s = stippleViewer.state();
		if (!(s.ready && s.loaded > 0)) { window.__stReady = 0; return false; }
		window.__stReady = (window.__stReady || 0) + 1;
		return window.__stReady >= 2;
	})()`))
	if err != nil {
		tb.t.Fatalf("tiles did not load: %v; console: %v", err, tb.messages())
	}
	return tb.state()
}

func (tb *tab) messages() []string {
	tb.mu.Lock()
	defer tb.mu.Unlock()
	var out []string
	for _, m := range tb.console {
		out = append(out, string(m.Type)+": "+m.String()+" @"+m.URL)
	}
	return out
}

// clean checks that nothing failed: no console error or exception, no
// failed request, no HTTP error status, no dialog.
// screenshot captures the page and decodes it; the image must be wide
// device pixels wide.
func (tb *tab) screenshot(wide int) image.Image {
	tb.t.Helper()
	shot, err := chromedp.Run(tb.ctx, chromedp.CaptureScreenshot())
	if err != nil {
		tb.t.Fatal(err)
	}
	img, err := png.Decode(bytes.NewReader(shot))
	if err != nil {
		tb.t.Fatal(err)
	}
	if img.Bounds().Dx() != wide {
		tb.t.Fatalf("screenshot %v wide; want %d device pixels", img.Bounds(), wide)
	}
	return img
}

func (tb *tab) clean() {
	tb.t.Helper()
	time.Sleep(100 * time.Millisecond) // let the last events arrive
	tb.mu.Lock()
	defer tb.mu.Unlock()
	for _, m := range tb.console {
		if m.Type == chromedp.ConsoleError || m.Type == chromedp.ConsoleException || m.Type == chromedp.ConsoleWarning {
			tb.t.Errorf("console %s: %s (%s)", m.Type, m.String(), m.URL)
		}
	}
	for _, f := range tb.failed {
		tb.t.Errorf("request failed: %s %s %s", f.Type, f.ErrorText, f.BlockedReason)
	}
	for _, r := range tb.responses {
		if r.Status >= 400 {
			tb.t.Errorf("HTTP %d for %s", r.Status, r.URL)
		}
	}
	for _, d := range tb.dialogs {
		tb.t.Errorf("a dialog opened: %s", d)
	}
}

// tileResponses lists the URLs of tile images that arrived, with status.
func (tb *tab) tileResponses() map[string]int64 {
	tb.mu.Lock()
	defer tb.mu.Unlock()
	out := map[string]int64{}
	for _, r := range tb.responses {
		if strings.HasSuffix(r.URL, ".png") {
			out[r.URL] = r.Status
		}
	}
	return out
}

// serve serves dir on 127.0.0.1 (httptest binds the loopback address).
func serve(t *testing.T, dir string) *httptest.Server {
	t.Helper()
	s := httptest.NewServer(http.FileServer(http.Dir(dir)))
	t.Cleanup(s.Close)
	return s
}

func fileURL(path string) string {
	abs, _ := filepath.Abs(path)
	return "file://" + filepath.ToSlash(abs)
}
