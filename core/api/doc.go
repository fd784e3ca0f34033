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

import "clearkit/core"

// Version is the build's version, set by build.sh with -ldflags -X.
var Version = "dev"

// Entry is one calculation of the API.
type Entry struct {
	Name string
	Call func(request []byte) []byte
	// Append, for an entry that writes its answer directly (compare's
	// fast path, size's series), answers like Call with the response
	// appended to dst (as strconv's Append functions do), so that a caller
	// done with each response before the next call keeps one buffer for
	// all of them: the bridge does, sparing an allocation a call. dst's
	// room past the response may be written too (the number writer works
	// there), so nothing kept there survives. Nil for the other entries.
	Append func(dst, request []byte) []byte
	// Packed, for an entry whose answer can carry chart series, answers
	// like Append but leaves the series out of the JSON: it returns them as
	// float64 values end to end, and the response's "packed" member names
	// them in that order (see Packing). The bridge uses it when the page
	// passes a buffer for them, which spares writing and parsing some 1500
	// (compare) or 600 (size) numbers as text on every input. The series
	// are computed into storage when it has room for them, so that the
	// bridge, which copies them to the page before the next call, keeps
	// that too. Nil for the other entries.
	Packed func(dst []byte, storage []float64, request []byte) (response []byte, series []float64)
}

// MaxPackedBytes is the most bytes the packed series of any answer take:
// every series of core.PackedSeries at core.MaxSweepPoints, 8 bytes a value
// (size's six series of at most as many points take less:
// TestMaxPackedBytes).
const MaxPackedBytes = 8 * len(core.PackedSeries) * core.MaxSweepPoints

// Packing is the "packed" member of a response whose chart series were
// returned apart from the JSON. Series names them, as "name.member" within
// the answer's member Into ("qb.x" within "sweeps" is sweeps.qb.x), in the
// order they lie end to end: Points values each, or, when the series
// differ in length, Lengths[k] values for series k (Points is then 0).
// Into holds the answer's other chart values, if any (size's axis tops
// and ceilings); compare's has none and its answer has no "sweeps".
type Packing struct {
	Into    string   `json:"into"`
	Points  int      `json:"points,omitempty"`
	Lengths []int    `json:"lengths,omitempty"`
	Series  []string `json:"series"`
}

// Entries lists every calculation the bridge exposes, in the order the
// README documents them.
var Entries = []Entry{
	{Name: "compare", Call: Compare, Append: AppendCompare, Packed: ComparePacked},
	{Name: "size", Call: Size, Append: AppendSize, Packed: SizePacked},
	{Name: "check", Call: Check},
	{Name: "dialysance", Call: Dialysance},
	{Name: "flowcheck", Call: FlowCheck},
}
