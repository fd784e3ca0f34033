package api

import (
	"bytes"
	"errors"
	"strings"

	"github.com/goccy/go-json"

	"clearkit/core"
)

// MaxRequestBytes bounds a request; the largest real request is well under
// a kilobyte.
const MaxRequestBytes = 64 << 10

// ErrorBody is the "error" member of a failed response.
type ErrorBody struct {
	Field   string   `json:"field"`
	Message string   `json:"message"`
	Limit   *float64 `json:"limit,omitempty"`
}

// Failure is a failed response.
type Failure struct {
	OK    bool      `json:"ok"`
	Error ErrorBody `json:"error"`
}

func fieldErr(field, message string) error {
	return &core.FieldError{Field: field, Message: message}
}

// decode reads request into v, refusing oversized bodies, malformed JSON
// and unknown fields.
func decode(request []byte, v any) error {
	if len(request) > MaxRequestBytes {
		return fieldErr("", "request is too large (limit 64 KiB)")
	}
	if len(bytes.TrimSpace(request)) == 0 {
		return fieldErr("", "request is empty: send a JSON object")
	}
	d := json.NewDecoder(bytes.NewReader(request))
	d.DisallowUnknownFields()
	if err := d.Decode(v); err != nil {
		msg := err.Error()
		if name, ok := strings.CutPrefix(msg, `json: unknown field "`); ok {
			name = strings.TrimSuffix(name, `"`)
			return fieldErr(name, "is not a field of this request")
		}
		var te *json.UnmarshalTypeError
		if errors.As(err, &te) && te.Field != "" {
			return fieldErr(te.Field, "has the wrong type ("+te.Value+")")
		}
		return fieldErr("", "request is not valid JSON: "+strings.TrimPrefix(msg, "json: "))
	}
	// Decoder.More reports false before a stray '}' or ']', so look at
	// everything after the object instead.
	if len(bytes.TrimSpace(request[d.InputOffset():])) != 0 {
		return fieldErr("", "request has data after the JSON object")
	}
	return nil
}

// respond encodes a successful response, or the failure err.
func respond(v any, err error) []byte {
	if err != nil {
		return failure(err)
	}
	b, err := json.Marshal(v)
	if err != nil {
		// Only a non-finite number can get here; it is a bug, not bad input.
		return failure(fieldErr("", "internal error: result could not be encoded"))
	}
	return b
}

// failure encodes err as a failed response.
func failure(err error) []byte {
	body := ErrorBody{Message: err.Error()}
	var fe *core.FieldError
	if errors.As(err, &fe) {
		body = ErrorBody{Field: fe.Field, Message: fe.Message, Limit: fe.Limit}
	}
	b, _ := json.Marshal(Failure{Error: body})
	return b
}
