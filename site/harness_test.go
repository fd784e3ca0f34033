package site

// The browser-test harness: one headless Chromium for the package, a test
// server for site/ on 127.0.0.1 with an offline switch, and a page helper
// that fails the test on any console error, failed request or request that
// leaves the page's origin. Every browser test uses openPage.

import (
	"context"
	"fmt"
	"mime"
	"net/http"
	"net/http/httptest"
	"os"
	"os/exec"
	"path"
	"path/filepath"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"github.com/chromedp/cdproto/network"
	"github.com/chromedp/chromedp"
)

var browserCtx context.Context // the shared browser; nil until TestMain starts it

func TestMain(m *testing.M) {
	os.Exit(runWithBrowser(m))
}

func runWithBrowser(m *testing.M) int {
	if _, err := os.Stat("clearkit.wasm"); err != nil {
		fmt.Fprintln(os.Stderr, "site tests: site/clearkit.wasm is missing; run ./build.sh test (or ./build.sh first)")
		return 1
	}
	exe := chromiumPath()
	if exe == "" {
		fmt.Fprintln(os.Stderr, "site tests: Chromium not found; ./build.sh test installs it (apt-get install chromium), or set CLEARKIT_CHROMIUM")
		return 1
	}
	tmp, err := os.MkdirTemp("", "clearkit-chromium-")
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
		return 1
	}
	defer os.RemoveAll(tmp)
	opts := browserOptions(exe, tmp)
	allocCtx, cancelAlloc := chromedp.NewExecAllocator(context.Background(), opts...)
	defer cancelAlloc()
	ctx, cancel := chromedp.NewContext(allocCtx)
	defer cancel()
	if err := chromedp.Do(ctx); err != nil { // start the browser now
		fmt.Fprintln(os.Stderr, "site tests: Chromium did not start:", err)
		return 1
	}
	browserCtx = ctx
	return m.Run()
}

// browserOptions start Chromium at exe headless, with its profile and
// temporary files in tmp, followed by any extra options.
func browserOptions(exe, tmp string, extra ...chromedp.ExecAllocatorOption) []chromedp.ExecAllocatorOption {
	opts := append(chromedp.DefaultExecAllocatorOptions[:],
		chromedp.ExecPath(exe),
		chromedp.Headless,
		chromedp.NoSandbox,
		chromedp.DisableGPU,
		chromedp.NoFirstRun,
		chromedp.Flag("disable-quic", true),
		chromedp.Flag("disable-background-networking", true),
		chromedp.Flag("disable-component-update", true),
		chromedp.Flag("disable-sync", true),
		chromedp.UserDataDir(filepath.Join(tmp, "profile")),
		chromedp.Env("TMPDIR="+tmp),
	)
	return append(opts, extra...)
}

func chromiumPath() string {
	if p := os.Getenv("CLEARKIT_CHROMIUM"); p != "" {
		return p
	}
	for _, name := range []string{"chromium", "chromium-browser"} {
		if p, err := exec.LookPath(name); err == nil {
			return p
		}
	}
	return ""
}

// testServer serves site/ on 127.0.0.1. While offline is set it refuses
// every request by closing the connection, as a network that is gone would.
// precache.js is computed afresh from site/ (so a test never meets a stale
// one), and serveFile can put other content in place of a file.
type testServer struct {
	*httptest.Server
	offline atomic.Bool
	mu      sync.Mutex
	paths   []string
	files   map[string][]byte // URL path -> body served instead of the file
}

// serveFile serves body at path (for example "/precache.js") from now on.
func (s *testServer) serveFile(path string, body []byte) {
	s.mu.Lock()
	s.files[path] = body
	s.mu.Unlock()
}

func newTestServer(t *testing.T) *testServer {
	t.Helper()
	build, err := Precache(".")
	if err != nil {
		t.Fatal(err)
	}
	s := &testServer{files: map[string][]byte{"/" + PrecacheFile: build.Script()}}
	h := Handler(".")
	s.Server = httptest.NewServer(http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		if s.offline.Load() {
			if hj, ok := w.(http.Hijacker); ok {
				if conn, _, err := hj.Hijack(); err == nil {
					conn.Close()
					return
				}
			}
			http.Error(w, "offline", http.StatusServiceUnavailable)
			return
		}
		s.mu.Lock()
		s.paths = append(s.paths, r.URL.Path)
		body, replaced := s.files[r.URL.Path]
		s.mu.Unlock()
		if replaced {
			w.Header().Set("Content-Type", mime.TypeByExtension(path.Ext(r.URL.Path)))
			w.Header().Set("Cache-Control", "no-cache")
			w.Write(body)
			return
		}
		h.ServeHTTP(w, r)
	}))
	t.Cleanup(s.Close)
	return s
}

// page is one browser tab on the test server.
type page struct {
	t      *testing.T
	ctx    context.Context
	server *testServer
	mu     sync.Mutex
	faults []string // console errors, failed requests, foreign requests
}

// openPage opens a new tab at the page (path relative to the site root),
// waits until the calculator is ready and registers a check, run when the
// test ends, that nothing went wrong in the tab.
func openPage(t *testing.T, path string) *page {
	t.Helper()
	return openPageOn(t, newTestServer(t), path)
}

func openPageOn(t *testing.T, server *testServer, path string) *page {
	t.Helper()
	ctx, cancel := chromedp.NewContext(browserCtx)
	t.Cleanup(cancel)
	p := &page{t: t, ctx: ctx, server: server}
	origin := server.URL
	if err := chromedp.Listen(ctx, func(ev any) {
		switch e := ev.(type) {
		case *network.EventRequestWillBeSent:
			u := e.Request.URL
			if !strings.HasPrefix(u, origin+"/") && !strings.HasPrefix(u, "data:") && !strings.HasPrefix(u, "blob:") {
				p.fault("request outside the page's origin: " + u)
			}
		case *network.EventLoadingFailed:
			if !e.Canceled && !server.offline.Load() {
				p.fault(fmt.Sprintf("request failed: %s (%s)", e.Type, e.ErrorText))
			}
		case *network.EventResponseReceived:
			if e.Response.Status >= 400 {
				p.fault(fmt.Sprintf("HTTP %d for %s", e.Response.Status, e.Response.URL))
			}
		}
	}); err != nil {
		t.Fatal(err)
	}
	messages := chromedp.Console(ctx)
	go func() {
		for m, err := range messages {
			if err != nil {
				return
			}
			if m.Type == chromedp.ConsoleException || m.Type == "error" {
				p.fault(fmt.Sprintf("console %s: %s", m.Type, m.Text))
			}
		}
	}()
	if _, err := chromedp.Call(ctx, network.Enable, network.EnableParams{}); err != nil {
		t.Fatal(err)
	}
	// Registered before the page loads, so that a page that never gets
	// ready still reports why.
	t.Cleanup(func() {
		// Let late events arrive before judging.
		time.Sleep(100 * time.Millisecond)
		p.mu.Lock()
		defer p.mu.Unlock()
		for _, f := range p.faults {
			t.Error(f)
		}
	})
	p.do(chromedp.EmulateViewport(1024, 768, chromedp.EmulateLandscape))
	p.do(chromedp.Navigate(origin + "/" + path))
	p.waitReady()
	return p
}

func (p *page) fault(s string) {
	p.mu.Lock()
	p.faults = append(p.faults, s)
	p.mu.Unlock()
}

// waitReady waits until main.js reports the calculator started.
func (p *page) waitReady() {
	p.t.Helper()
	state := evalTimeout[string](p, `new Promise(r => { const f = () => { const s = document.body && document.body.dataset.engine; s ? r(s) : setTimeout(f, 20); }; f(); })`, 20*time.Second)
	if state != "ready" {
		p.t.Fatalf("calculator state %q, want ready (status: %s)", state, eval[string](p, `document.getElementById('engine-status').textContent`))
	}
}

// do runs actions with a 20 s limit, failing the test on error.
func (p *page) do(actions ...chromedp.Action[chromedp.Void]) {
	p.t.Helper()
	ctx, cancel := context.WithTimeout(p.ctx, 20*time.Second)
	defer cancel()
	if err := chromedp.Do(ctx, actions...); err != nil {
		p.t.Fatal(err)
	}
}

// eval evaluates a JavaScript expression (awaiting a promise) in the page.
func eval[T any](p *page, expr string) T {
	p.t.Helper()
	return evalTimeout[T](p, expr, 20*time.Second)
}

func evalTimeout[T any](p *page, expr string, d time.Duration) T {
	p.t.Helper()
	ctx, cancel := context.WithTimeout(p.ctx, d)
	defer cancel()
	v, err := chromedp.Run(ctx, chromedp.Evaluate[T](expr, chromedp.EvalAwaitPromise))
	if err != nil {
		p.t.Fatalf("evaluating %s: %v", expr, err)
	}
	return v
}

// typeInto replaces the text of the input matched by sel with text, typed
// key by key as a person would (each key fires an input event), and waits
// for the results to settle.
func (p *page) typeInto(sel, text string) {
	p.t.Helper()
	p.do(chromedp.Focus(chromedp.CSS(sel)),
		chromedp.Evaluate[chromedp.Void](fmt.Sprintf(`document.querySelector(%q).select()`, sel)),
		chromedp.KeyEvent("\b"))
	if text != "" {
		p.do(chromedp.SendKeys(chromedp.CSS(sel), text))
	}
	p.settle()
}

// settle waits until no results are pending: the Field checks view shows
// a check's uncertainty a moment after the rest (check-view.js).
func (p *page) settle() {
	p.t.Helper()
	p.waitFor(`!document.querySelector('[data-pending]')`, 10*time.Second)
}

// screenshot writes a PNG of the whole page to out/screenshots/NAME.png at
// the top of the repository (git-ignored) for a person to review.
func (p *page) screenshot(name string) {
	p.t.Helper()
	png, err := chromedp.Run(p.ctx, chromedp.FullScreenshot(100))
	if err != nil {
		p.t.Fatal(err)
	}
	dir := filepath.Join("..", "out", "screenshots")
	if err := os.MkdirAll(dir, 0o755); err != nil {
		p.t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, name+".png"), png, 0o644); err != nil {
		p.t.Fatal(err)
	}
}

// typedJS defines, for a script evaluated in the page, typed(input,
// results, value): it types value into input (its input event) and
// returns the mutation records that results saw meanwhile, so that a test
// can tell what a keystroke wrote.
const typedJS = `const typed = (input, results, value) => {
	const seen = new MutationObserver(() => {});
	seen.observe(results, { subtree: true, attributes: true, childList: true, characterData: true });
	input.value = value;
	input.dispatchEvent(new Event('input', { bubbles: true }));
	const records = seen.takeRecords();
	seen.disconnect();
	return records;
};`
