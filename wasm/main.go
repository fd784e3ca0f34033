//go:build js && wasm

package main

import (
	"fmt"
	"slices"
	"unsafe"

	"github.com/hack-pad/safejs"

	"clearkit/core/api"
)

func main() {
	if err := publish("clearkit", slices.Concat(api.Entries, []api.Entry{echo})); err != nil {
		// Nothing can be called: say so on the console and stop.
		fmt.Println("clearkit: could not publish the calculation API:", err)
		return
	}
	select {} // serve calls for the life of the page
}

// echo returns its request unchanged. It is no calculation: it is the
// cost of a call through the bridge alone (string in, string out), the
// floor that ./build.sh bench compares every call with.
var echo = api.Entry{Name: "echo", Call: func(request []byte) []byte { return request }}

// publish sets globalThis[name] = {version, packedBytes, NAME(request[, series])
// for each entry}.
func publish(name string, entries []api.Entry) error {
	object, err := safejs.Global().Get("Object")
	if err != nil {
		return err
	}
	ck, err := object.New()
	if err != nil {
		return err
	}
	if err := ck.Set("version", api.Version); err != nil {
		return err
	}
	// The size of a Uint8Array that holds the chart series of any answer.
	if err := ck.Set("packedBytes", api.MaxPackedBytes); err != nil {
		return err
	}
	for _, e := range entries {
		fn, err := safejs.FuncOf(handler(e))
		if err != nil {
			return err
		}
		if err := ck.Set(e.Name, fn.Value()); err != nil {
			return err
		}
	}
	return safejs.Global().Set(name, ck)
}

// handler adapts an API entry to a JavaScript function of the request
// string (and, optionally, a Uint8Array for the chart series; see invoke).
func handler(e api.Entry) func(safejs.Value, []safejs.Value) any {
	return func(_ safejs.Value, args []safejs.Value) any {
		// The response is copied into a JavaScript string on return and
		// never changed: it needs no Go string copy of its own.
		response := invoke(e, args)
		return unsafe.String(unsafe.SliceData(response), len(response))
	}
}
