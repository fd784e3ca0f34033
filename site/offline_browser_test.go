package site

import (
	"context"
	"encoding/json"
	"fmt"
	"net/http"
	"net/http/httptest"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/chromedp"

	"clearkit/core"
)

// waitOffline waits until the page says it is ready to work offline and
// the service worker controls it, and returns the cache names the page
// sees.
func waitOffline(p *page) []string {
	p.t.Helper()
	state := evalTimeout[string](p, `new Promise(r => { const f = () => {
		const s = document.getElementById('offline-status').dataset.state;
		(s === 'ready' && navigator.serviceWorker.controller) || s === 'failed' || s === 'unsupported' ? r(s) : setTimeout(f, 50); }; f(); })`, 30*time.Second)
	if state != "ready" {
		p.t.Fatalf("offline state %q, want ready (%s)", state, eval[string](p, `document.getElementById('offline-status').textContent.trim()`))
	}
	return eval[[]string](p, `caches.keys()`)
}

// reload reloads the tab and waits until the new document's calculator
// is ready.
func (p *page) reload() {
	p.t.Helper()
	eval[bool](p, `window.clearkitOldDocument = true`)
	p.do(chromedp.Reload())
	p.waitFor(`!window.clearkitOldDocument && document.body && document.body.dataset.engine`, 20*time.Second)
	p.waitReady()
}

// waitFor polls the JavaScript condition until it holds, failing the test
// when d passes first. It survives the page navigating in between.
func (p *page) waitFor(condition string, d time.Duration) {
	p.t.Helper()
	deadline := time.Now().Add(d)
	for {
		ctx, cancel := context.WithTimeout(p.ctx, time.Second)
		ok, err := chromedp.Run(ctx, chromedp.Evaluate[bool](`Boolean(`+condition+`)`))
		cancel()
		if err == nil && ok {
			return
		}
		if time.Now().After(deadline) {
			p.t.Fatalf("waited %v for %s (last error: %v)", d, condition, err)
		}
		time.Sleep(30 * time.Millisecond)
	}
}

// cacheName is the cache the worker uses for build on server s.
func cacheName(s *testServer, version string) string {
	return "clearkit:" + s.URL + "/:" + version
}

func TestOfflineInstallThenWorkWithoutNetwork(t *testing.T) {
	build, err := Precache(".")
	if err != nil {
		t.Fatal(err)
	}
	p := openPage(t, "")
	keys := waitOffline(p)
	if want := []string{cacheName(p.server, build.Version)}; !slices.Equal(keys, want) {
		t.Fatalf("caches %q, want %q", keys, want)
	}
	// The cache holds exactly the build's files.
	cached := eval[[]string](p, fmt.Sprintf(`caches.open(%q).then(c => c.keys()).then(ks => ks.map(k => k.url.slice(location.origin.length + 1) || './').sort())`, keys[0]))
	if !slices.Equal(cached, build.Files) {
		t.Errorf("cached %q, want the build's files %q", cached, build.Files)
	}
	// Every file the page asked for while online is in the build's list,
	// apart from the worker's own scripts.
	p.server.mu.Lock()
	asked := slices.Clone(p.server.paths)
	p.server.mu.Unlock()
	for _, path := range asked {
		f := strings.TrimPrefix(path, "/")
		if f == "" {
			f = "./"
		}
		if !slices.Contains(build.Files, f) && !notPrecached[f] {
			t.Errorf("the page loaded %s, which the worker does not store", path)
		}
	}

	p.server.offline.Store(true)
	p.reload()
	if got := eval[string](p, `document.getElementById('offline-status').dataset.state`); got != "ready" {
		t.Errorf("offline, after reload: offline state %q, want ready", got)
	}
	p.typeInto("#compare-qb", "320")
	p.typeInto("#compare-koa", "1050")
	wantOutputs(t, p, core.Operating{QB: 320, QD: 500, KoA: 1050, CBi: 1})
	p.screenshot("offline-reloaded-1024x768")
}

func TestOfflineUpdateWaitsForTheUser(t *testing.T) {
	p := openPage(t, "")
	waitOffline(p)
	build, next := serveNextBuild(p)
	p.reload()
	state := evalTimeout[string](p, `new Promise(r => { const f = () => { const s = document.getElementById('offline-status').dataset.state; s === 'update' ? r(s) : setTimeout(f, 50); }; f(); })`, 30*time.Second)
	if state != "update" {
		t.Fatalf("offline state %q after a new build, want update", state)
	}
	if !visible(p, `[data-offline-update]`) {
		t.Fatal("the update button is hidden while an update waits")
	}
	// The old build still answers until the user chooses.
	if keys := eval[[]string](p, `caches.keys()`); !slices.Contains(keys, cacheName(p.server, build.Version)) {
		t.Errorf("caches %q while the update waits, want the old one kept", keys)
	}
	p.screenshot("offline-update-waiting")
	eval[bool](p, `window.clearkitOldDocument = true`)
	p.do(chromedp.Click(chromedp.CSS(`[data-offline-update]`)))
	p.waitFor(`!window.clearkitOldDocument && document.body && document.body.dataset.engine`, 20*time.Second)
	p.waitReady()
	keys := waitOffline(p)
	if want := []string{cacheName(p.server, next.Version)}; !slices.Equal(keys, want) {
		t.Errorf("caches after the update %q, want only the new %q", keys, want)
	}
}

// serveNextBuild makes the test server announce a new build: the same
// files under another content hash. It returns the current build and the
// new one.
func serveNextBuild(p *page) (current, next Build) {
	p.t.Helper()
	current, err := Precache(".")
	if err != nil {
		p.t.Fatal(err)
	}
	next = Build{Version: "0123456789abcdef", Files: current.Files}
	p.server.serveFile("/"+PrecacheFile, next.Script())
	return current, next
}

// TestWorkerAsksOnlyItsOrigin reads sw.js and the generated file list: every
// URL the worker fetches is a relative path inside the site.
func TestWorkerAsksOnlyItsOrigin(t *testing.T) {
	build, err := Precache(".")
	if err != nil {
		t.Fatal(err)
	}
	for _, f := range build.Files {
		if strings.Contains(f, ":") || strings.HasPrefix(f, "/") || strings.Contains(f, "..") {
			t.Errorf("precache file %q is not a relative path inside the site", f)
		}
	}
	var round Build
	script := string(build.Script())
	body := script[strings.Index(script, "=")+1 : strings.LastIndex(script, ";")]
	if err := json.Unmarshal([]byte(body), &round); err != nil {
		t.Fatalf("precache.js does not hold JSON: %v", err)
	}
	if round.Version != build.Version || !slices.Equal(round.Files, build.Files) {
		t.Errorf("precache.js round trip = %+v, want %+v", round, build)
	}
}

// TestOfflineFromASubfolder serves the page from /tools/clearkit/, as a
// static host's project folder would: every URL is relative, so it
// installs, and works offline, there too (also when opened as index.html
// with a query, as a bookmark might).
func TestOfflineFromASubfolder(t *testing.T) {
	build, err := Precache(".")
	if err != nil {
		t.Fatal(err)
	}
	const prefix = "/tools/clearkit"
	s := &testServer{files: map[string][]byte{prefix + "/" + PrecacheFile: build.Script()}}
	files := http.StripPrefix(prefix, Handler("."))
	s.Server = httptest.NewServer(http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		if s.offline.Load() {
			if conn, _, err := w.(http.Hijacker).Hijack(); err == nil {
				conn.Close()
			}
			return
		}
		if body, ok := s.files[r.URL.Path]; ok {
			w.Header().Set("Content-Type", "text/javascript")
			w.Write(body)
			return
		}
		if !strings.HasPrefix(r.URL.Path, prefix+"/") {
			http.NotFound(w, r)
			return
		}
		files.ServeHTTP(w, r)
	}))
	t.Cleanup(s.Close)
	p := openPageOn(t, s, "tools/clearkit/")
	keys := waitOffline(p)
	if want := []string{"clearkit:" + s.URL + prefix + "/:" + build.Version}; !slices.Equal(keys, want) {
		t.Errorf("caches %q, want %q", keys, want)
	}
	s.offline.Store(true)
	eval[bool](p, `window.clearkitOldDocument = true`)
	p.do(chromedp.Navigate(s.URL + prefix + "/index.html?from=bookmark"))
	p.waitFor(`!window.clearkitOldDocument && document.body && document.body.dataset.engine`, 20*time.Second)
	p.waitReady()
	p.typeInto("#compare-qd", "800")
	wantOutputs(t, p, core.Operating{QB: 300, QD: 800, KoA: 800, CBi: 1})
}
