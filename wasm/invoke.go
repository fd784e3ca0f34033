//go:build js && wasm

package main

import (
	"fmt"

	"github.com/goccy/go-json"
	"github.com/hack-pad/safejs"

	"clearkit/core/api"
)

// invoke reads the request string from args and runs call, turning a panic
// into a failed response.
func invoke(call func([]byte) []byte, args []safejs.Value) (response []byte) {
	defer func() {
		if r := recover(); r != nil {
			response = failed(fmt.Sprintf("internal error: %v", r))
		}
	}()
	if len(args) != 1 || args[0].Type() != safejs.TypeString {
		return failed("call with one argument: the request as a JSON string")
	}
	request, err := args[0].String()
	if err != nil {
		return failed("the request could not be read: " + err.Error())
	}
	return call([]byte(request))
}

// failed encodes a failure of the request as a whole.
func failed(message string) []byte {
	b, _ := json.Marshal(api.Failure{Error: api.ErrorBody{Message: message}})
	return b
}
