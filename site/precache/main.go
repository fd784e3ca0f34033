// Command precache writes site/precache.js, the list of files the service
// worker stores for offline use and the content hash that versions their
// cache. ./build.sh runs it after every build, as its last step.
package main

import (
	"flag"
	"fmt"
	"log"
	"os"
	"path/filepath"

	"clearkit/site"
)

func main() {
	dir := flag.String("dir", "site", "folder holding the built page")
	flag.Parse()
	b, err := site.Precache(*dir)
	if err != nil {
		log.Fatal(err)
	}
	out := filepath.Join(*dir, site.PrecacheFile)
	if err := os.WriteFile(out, b.Script(), 0o644); err != nil {
		log.Fatal(err)
	}
	fmt.Printf("build: %s (%d files, cache version %s)\n", out, len(b.Files), b.Version)
}
