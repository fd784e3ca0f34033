//go:build js && wasm

package main

import (
	"fmt"
	"unsafe"

	"github.com/goccy/go-json"
	"github.com/hack-pad/safejs"

	"clearkit/core/api"
)

// invoke reads the request string from args and runs the entry, turning a
// panic into a failed response. A second argument, a Uint8Array, asks for
// the chart series apart from the JSON (api.Entry.Packed): they are
// copied into it as float64 values, and the response's "packed" member
// says how many. An entry without series leaves it untouched.
func invoke(e api.Entry, args []safejs.Value) (response []byte) {
	defer func() {
		if r := recover(); r != nil {
			response = failed(fmt.Sprintf("internal error: %v", r))
		}
	}()
	if len(args) < 1 || len(args) > 2 || args[0].Type() != safejs.TypeString || len(args) == 2 && args[1].Type() != safejs.TypeObject {
		return failed("call with the request as a JSON string, and optionally a Uint8Array for the chart series")
	}
	request, err := args[0].String()
	if err != nil {
		return failed("the request could not be read: " + err.Error())
	}
	if len(args) == 1 || e.Packed == nil {
		if e.Append == nil {
			return e.Call([]byte(request))
		}
		response = e.Append(buffer[:0], []byte(request))
		buffer = response[:0]
		return response
	}
	response, series := e.Packed(buffer[:0], seriesBuffer, []byte(request))
	buffer = response[:0]
	if cap(series) > cap(seriesBuffer) {
		seriesBuffer = series[:0]
	}
	if len(series) == 0 {
		return response
	}
	// WebAssembly memory is little-endian, as a Float64Array over the
	// same bytes reads them on every platform the page runs on.
	raw := unsafe.Slice((*byte)(unsafe.Pointer(&series[0])), 8*len(series))
	n, err := safejs.CopyBytesToJS(args[1], raw)
	if err != nil {
		return failed("the second argument must be a Uint8Array for the chart series")
	}
	if n < len(raw) {
		return failed(fmt.Sprintf("the chart series need %d bytes; the Uint8Array given holds %d", len(raw), n))
	}
	return response
}

// buffer holds the response of the last entry with Append or Packed, and
// seriesBuffer its chart series. One of each serves every call: the calls
// come one at a time (JavaScript runs Go on the page's thread and waits
// for it), the series are copied to the page's Uint8Array in invoke, and
// the response into a JavaScript string as the call returns (see
// handler), before the next call can write here. Each grows to the
// largest asked for.
var (
	buffer       = make([]byte, 0, 1024)
	seriesBuffer []float64
)

// failed encodes a failure of the request as a whole.
func failed(message string) []byte {
	b, _ := json.Marshal(api.Failure{Error: api.ErrorBody{Message: message}})
	return b
}
