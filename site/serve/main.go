// Command serve serves ClearKit's page on a local address, for
// ./build.sh serve. The page needs nothing else at run time.
package main

import (
	"flag"
	"log"
	"net/http"

	"clearkit/site"
)

func main() {
	addr := flag.String("addr", "127.0.0.1:8080", "address to listen on")
	dir := flag.String("dir", "site", "folder holding the built page")
	flag.Parse()
	log.Printf("ClearKit on http://%s/ (Ctrl-C stops)", *addr)
	log.Fatal(http.ListenAndServe(*addr, site.Handler(*dir)))
}
