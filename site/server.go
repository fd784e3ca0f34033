// Package site holds ClearKit's static page and the small file server that
// build.sh serve and the browser tests use. The page itself needs no
// server: any static host will do.
package site

import (
	"mime"
	"net/http"
	"path"
	"strings"
)

// assetTypes are the only files served, with their media types; anything
// else under site/ (Go sources, tests) is not part of the page.
var assetTypes = map[string]string{
	".html":        "text/html; charset=utf-8",
	".css":         "text/css; charset=utf-8",
	".js":          "text/javascript; charset=utf-8",
	".json":        "application/json",
	".wasm":        "application/wasm",
	".webmanifest": "application/manifest+json",
	".svg":         "image/svg+xml",
	".png":         "image/png",
	".ico":         "image/x-icon",
}

func init() {
	for ext, typ := range assetTypes {
		_ = mime.AddExtensionType(ext, typ)
	}
}

// Handler serves the page's assets from dir.
func Handler(dir string) http.Handler {
	files := http.FileServer(http.Dir(dir))
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		p := path.Clean("/" + r.URL.Path)
		if !strings.HasSuffix(p, "/") && p != "/" {
			if _, ok := assetTypes[path.Ext(p)]; !ok || strings.Contains(p, "/serve/") {
				http.NotFound(w, r)
				return
			}
		}
		w.Header().Set("Cache-Control", "no-cache")
		files.ServeHTTP(w, r)
	})
}
