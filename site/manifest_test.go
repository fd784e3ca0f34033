package site

import (
	"context"
	"encoding/json"
	"fmt"
	"github.com/chromedp/cdproto/cdp"
	cdppage "github.com/chromedp/cdproto/page"
	"github.com/chromedp/chromedp"
	"image/png"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// webManifest holds the members of manifest.webmanifest the tests check
// (W3C Web Application Manifest).
type webManifest struct {
	Name      string `json:"name"`
	ShortName string `json:"short_name"`
	StartURL  string `json:"start_url"`
	Scope     string `json:"scope"`
	Display   string `json:"display"`
	Icons     []struct {
		Src     string `json:"src"`
		Sizes   string `json:"sizes"`
		Type    string `json:"type"`
		Purpose string `json:"purpose"`
	} `json:"icons"`
}

func readManifest(t *testing.T) webManifest {
	t.Helper()
	data, err := os.ReadFile("manifest.webmanifest")
	if err != nil {
		t.Fatal(err)
	}
	var m webManifest
	if err := json.Unmarshal(data, &m); err != nil {
		t.Fatalf("manifest.webmanifest is not JSON: %v", err)
	}
	return m
}

func TestManifest(t *testing.T) {
	m := readManifest(t)
	if m.Name == "" || m.ShortName == "" {
		t.Errorf("name %q, short_name %q: both wanted", m.Name, m.ShortName)
	}
	if len(m.ShortName) > 12 {
		t.Errorf("short_name %q is longer than 12 characters, the length launchers show in full (common practice, no source)", m.ShortName)
	}
	// Relative, so the page installs from any folder of any host.
	if m.StartURL != "./" || m.Scope != "./" {
		t.Errorf("start_url %q, scope %q, want ./ and ./", m.StartURL, m.Scope)
	}
	if m.Display != "standalone" {
		t.Errorf("display %q, want standalone", m.Display)
	}
	found := map[string]bool{}
	for _, ic := range m.Icons {
		if strings.Contains(ic.Src, ":") || strings.HasPrefix(ic.Src, "/") {
			t.Errorf("icon %q: want a relative URL", ic.Src)
		}
		path := filepath.FromSlash(ic.Src)
		if ic.Type != "image/png" {
			if _, err := os.Stat(path); err != nil {
				t.Errorf("icon %s: %v", ic.Src, err)
			}
			continue
		}
		f, err := os.Open(path)
		if err != nil {
			t.Errorf("icon %s: %v", ic.Src, err)
			continue
		}
		cfg, err := png.DecodeConfig(f)
		f.Close()
		if err != nil {
			t.Errorf("icon %s is not a PNG: %v", ic.Src, err)
			continue
		}
		if got := fmt.Sprintf("%dx%d", cfg.Width, cfg.Height); got != ic.Sizes {
			t.Errorf("icon %s is %s, the manifest says %s", ic.Src, got, ic.Sizes)
		}
		if ic.Purpose == "" || strings.Contains(ic.Purpose, "any") {
			found[ic.Sizes] = true
		}
	}
	// Chromium's install criteria ask for a 192 px and a 512 px icon
	// (web.dev "installable" criteria, from memory).
	for _, size := range []string{"192x192", "512x512"} {
		if !found[size] {
			t.Errorf("no PNG icon of %s for any purpose in the manifest", size)
		}
	}
	html, err := os.ReadFile("index.html")
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(html), `<link rel="manifest" href="manifest.webmanifest">`) {
		t.Error("index.html does not link manifest.webmanifest")
	}
}

// TestManifestInChromium asks Chromium's own manifest parser and install
// check about the served page.
func TestManifestInChromium(t *testing.T) {
	p := openPage(t, "")
	waitOffline(p)
	ctx, cancel := context.WithTimeout(p.ctx, 20*time.Second)
	defer cancel()
	got, err := chromedp.Call(ctx, cdppage.GetAppManifest, cdppage.GetAppManifestParams{})
	if err != nil {
		t.Fatal(err)
	}
	if got.URL != p.server.URL+"/manifest.webmanifest" {
		t.Errorf("manifest URL %q, want %s/manifest.webmanifest", got.URL, p.server.URL)
	}
	for _, e := range got.Errors {
		t.Errorf("Chromium: manifest line %d: %s", e.Line, e.Message)
	}
	inst, err := chromedp.Call(ctx, cdppage.GetInstallabilityErrors, cdp.Empty{})
	if err != nil {
		t.Fatal(err)
	}
	for _, e := range inst.InstallabilityErrors {
		t.Errorf("Chromium: not installable: %s %v", e.ErrorID, e.ErrorArguments)
	}
}

// TestIconsMatchSVG draws icon.svg with Chromium's SVG renderer at each PNG
// icon's size and compares the pixels: the PNGs (drawn by site/drawicons)
// must show the same icon. (The full-bleed maskable and Apple icons have
// no SVG to compare with; they come from the same drawing code.)
func TestIconsMatchSVG(t *testing.T) {
	p := openPage(t, "")
	for _, tc := range []struct {
		file string
		size int
	}{{"icons/icon-192.png", 192}, {"icons/icon-512.png", 512}} {
		// Mean absolute difference over every channel of every pixel, 0-255.
		diff := eval[float64](p, fmt.Sprintf(`(async () => {
			const draw = async (src) => {
				const img = new Image(); img.src = src; await img.decode();
				const c = document.createElement('canvas'); c.width = c.height = %[2]d;
				const g = c.getContext('2d'); g.drawImage(img, 0, 0, %[2]d, %[2]d);
				return g.getImageData(0, 0, %[2]d, %[2]d).data;
			};
			const a = await draw('icons/icon.svg'), b = await draw(%[1]q);
			let sum = 0; for (let i = 0; i < a.length; i++) sum += Math.abs(a[i] - b[i]);
			return sum / a.length;
		})()`, tc.file, tc.size))
		// Anti-aliasing differs along the edges only; a wrong colour or a
		// shifted stroke moves the mean by more than 1 (measured 0.15 at 192 px; the maskable icon in place of the 512 px one gives 15.7).
		if diff > 1 {
			t.Errorf("%s differs from icon.svg drawn at %d px by %.2f per channel on average, want <= 1", tc.file, tc.size, diff)
		}
	}
}
