package site

import (
	"context"
	"net"
	"net/http"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/chromedp/chromedp"
)

// foreignProxy is an HTTP proxy that refuses and records every request
// sent to it. Chromium, started with it as its proxy, sends it every
// request for another host from any page, worker or service worker (it
// reaches loopback addresses directly), so anything it records left the
// page's origin.
type foreignProxy struct {
	mu   sync.Mutex
	seen []string
}

func (f *foreignProxy) ServeHTTP(w http.ResponseWriter, r *http.Request) {
	f.mu.Lock()
	f.seen = append(f.seen, r.Method+" "+r.Host+r.URL.Path)
	f.mu.Unlock()
	http.Error(w, "refused by the test proxy", http.StatusForbidden)
}

// TestNothingLeavesTheOrigin runs a whole session (install for offline use,
// compute, save, export, print, import, an update) in a Chromium whose
// proxy records every request for another host. The harness watches the
// page's own requests; the proxy also sees the service worker's.
func TestNothingLeavesTheOrigin(t *testing.T) {
	proxy := &foreignProxy{}
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	srv := &http.Server{Handler: proxy}
	go srv.Serve(ln)
	t.Cleanup(func() { srv.Close() })

	opts := browserOptions(chromiumPath(), t.TempDir(),
		// Chromium's own services would use the proxy too. Autofill and the
		// like are off; the hosts Chromium itself asks with no page open
		// (measured here with these flags: clients2.google.com,
		// update.googleapis.com, accounts.google.com) and its download host
		// (*.gvt1.com, seen once during a run) go around the proxy, and
		// fail as they would without a network. No page of ours names them.
		chromedp.Flag("disable-features", "Translate,BlinkGenPropertyTrees,AutofillServerCommunication,OptimizationHints,MediaRouter"),
		chromedp.ProxyServer("http://"+ln.Addr().String()),
		chromedp.Flag("proxy-bypass-list", "clients2.google.com;update.googleapis.com;accounts.google.com;*.gvt1.com"),
	)
	allocCtx, cancelAlloc := chromedp.NewExecAllocator(context.Background(), opts...)
	defer cancelAlloc()
	bctx, cancel := chromedp.NewContext(allocCtx)
	defer cancel()
	if err := chromedp.Do(bctx); err != nil {
		t.Fatal(err)
	}
	// The proxy is in force: a request for another host reaches it.
	probe := testProbe(t, bctx)
	proxy.mu.Lock()
	if len(proxy.seen) == 0 {
		t.Fatalf("the test proxy saw no request for %s: it is not in force, so it proves nothing", probe)
	}
	proxy.seen = nil
	proxy.mu.Unlock()

	// openPage opens its tab in browserCtx: point it at this browser for
	// the test (browser tests do not run in parallel).
	saved := browserCtx
	browserCtx = bctx
	defer func() { browserCtx = saved }()

	p := openPage(t, "")
	waitOffline(p)
	p.typeInto("#compare-qb", "310")
	p.saveRecord("compare", hostile)
	p.openLog()
	_, data := p.download(`[data-log="export-json"]`)
	p.download(`[data-log="export-csv"]`)
	eval[bool](p, `(window.print = () => {}, true)`)
	p.do(chromedp.Click(chromedp.CSS(`[data-log-list] li button:nth-child(2)`)))
	p.openLog()
	p.do(chromedp.Click(chromedp.CSS(`[data-log="delete-all"]`)))
	p.do(chromedp.Click(chromedp.CSS(`[data-log-actions] button.danger`)))
	p.importFile("log.json", data)
	// An update: the worker fetches a new build.
	serveNextBuild(p)
	p.reload()
	p.waitFor(`document.getElementById('offline-status').dataset.state === 'update'`, 30*time.Second)
	p.server.offline.Store(true)
	p.reload()
	time.Sleep(300 * time.Millisecond)

	proxy.mu.Lock()
	defer proxy.mu.Unlock()
	for _, s := range proxy.seen {
		// The probe's tab may still ask for its favicon.
		if !strings.Contains(s, " "+probeHost) {
			t.Errorf("request outside the page's origin: %s", s)
		}
	}
}

// probeHost is asked only by testProbe (198.51.100.0/24 is TEST-NET-2,
// RFC 5737: never a real host; the hostile labels name .7, not .9).
const probeHost = "198.51.100.9"

// testProbe makes the browser ask for a host that is not loopback and
// returns its URL.
func testProbe(t *testing.T, ctx context.Context) string {
	t.Helper()
	const probe = "http://" + probeHost + "/probe"
	tctx, cancel := chromedp.NewContext(ctx)
	defer cancel()
	c, cancel2 := context.WithTimeout(tctx, 10*time.Second)
	defer cancel2()
	_ = chromedp.Do(c, chromedp.Navigate(probe)) // the proxy refuses it: an error is expected
	return probe
}
