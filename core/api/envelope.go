package api

import (
	"bytes"
	"errors"
	"strconv"
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

// decode reads request, a JSON object, into v (a pointer to a request
// struct). It refuses oversized and empty bodies, malformed JSON, anything
// but an object, data after the object, and, by their full path such as
// "sweep.points", unknown fields and fields given more than once (see
// checkKeys).
func decode(request []byte, v any) error {
	if len(request) > MaxRequestBytes {
		return fieldErr("", "request is too large (limit 64 KiB)")
	}
	// Only JSON's own white space (RFC 8259: space, tab, line feed,
	// carriage return) may surround the object; bytes.TrimSpace would also
	// pass \v and \f, which the decoder tolerates after a value.
	trimmed := bytes.Trim(request, " \t\n\r")
	if len(trimmed) == 0 {
		return fieldErr("", "request is empty: send a JSON object")
	}
	isObject := trimmed[0] == '{'
	// Unmarshal refuses data after the value; decodeError tells that case
	// apart.
	if err := json.Unmarshal(request, v); err != nil {
		return decodeError(request, isObject, err)
	}
	if !isObject { // null decodes into a struct without error
		return notObject
	}
	if trimmed[len(trimmed)-1] != '}' {
		return dataAfter
	}
	return checkKeys(request, v)
}

var (
	notObject = fieldErr("", "request must be a JSON object")
	dataAfter = fieldErr("", "request has data after the JSON object")
	tooDeep   = fieldErr("", "request is nested too deeply")
)

// decodeError explains why the decoder refused request. A request that is
// not JSON at all is refused as a whole, even where the decoder stopped
// first at a value of the wrong type.
func decodeError(request []byte, isObject bool, err error) error {
	msg := err.Error()
	if strings.Contains(msg, "exceeded max depth") {
		return tooDeep
	}
	if !json.Valid(request) {
		var first json.RawMessage
		d := json.NewDecoder(bytes.NewReader(request))
		if err := d.Decode(&first); err != nil {
			msg = err.Error()
		} else {
			return dataAfter
		}
	} else {
		var te *json.UnmarshalTypeError
		switch {
		case !isObject:
			return notObject
		case errors.As(err, &te) && te.Field != "":
			return fieldErr(listPath(te.Field), "has the wrong type ("+te.Value+")")
		}
	}
	return fieldErr("", "request is not valid JSON: "+strings.TrimPrefix(msg, "json: "))
}

// listPath writes the decoder's path of a value in a list ("filters.2.koa")
// the way every other error names it ("filters[2].koa").
func listPath(path string) string {
	segments := strings.Split(path, ".")
	var b strings.Builder
	for i, s := range segments {
		if _, err := strconv.Atoi(s); err == nil && i > 0 {
			b.WriteString("[" + s + "]")
			continue
		}
		if i > 0 {
			b.WriteByte('.')
		}
		b.WriteString(s)
	}
	return b.String()
}

// respond encodes a successful response, or the failure err. Pass v as a
// pointer: a struct value is copied into the interface first, which under
// WebAssembly costs about as much as encoding a small response.
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
