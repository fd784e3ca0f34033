//go:build js && wasm

// Package main is the WebAssembly bridge: it publishes every calculation of
// clearkit/core/api on globalThis.clearkit as a function taking a request
// JSON string and returning a response JSON string. It only decodes, calls
// the API and encodes; there is no maths here. Every JavaScript call goes
// through github.com/hack-pad/safejs, and no Go panic crosses into
// JavaScript: it becomes {"ok":false,...}.
package main
