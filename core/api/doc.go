// Package api is ClearKit's calculation API: JSON requests in, JSON
// responses out, one function per calculation. The WebAssembly bridge
// (package clearkit/wasm) exposes each Entry as globalThis.clearkit.NAME;
// the page gets every number it shows from here.
//
// Every response is an object with "ok". On failure it is
//
//	{"ok":false,"error":{"field":"qb","message":"..."}}
//
// where field names the request field at fault, or is empty when the
// request as a whole is (malformed JSON, too large). Numbers in a request
// may be JSON numbers or strings holding a decimal number written with a
// point or a comma ("2.5", "2,5"); an empty string or null counts as
// absent. Unknown fields are refused, so that a misspelt optional field
// cannot silently fall back to its default, and so are fields given twice
// (keys match fields without regard to case); both are named by their full
// path, such as "sweep.points".
//
// The package is pure Go (no syscall/js) and is tested and fuzzed natively.
package api

// Version is the build's version, set by build.sh with -ldflags -X.
var Version = "dev"

// Entry is one calculation of the API.
type Entry struct {
	Name string
	Call func(request []byte) []byte
}

// Entries lists every calculation the bridge exposes, in the order the
// README documents them.
var Entries = []Entry{
	{"compare", Compare},
	{"size", Size},
	{"check", Check},
	{"dialysance", Dialysance},
	{"flowcheck", FlowCheck},
}
