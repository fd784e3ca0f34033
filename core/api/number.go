package api

import (
	"bytes"
	"math"
	"strconv"
	"strings"

	"github.com/goccy/go-json"
)

// Number is a numeric request field. It keeps the raw JSON value and is
// read, with its field name, by Required or Optional, so that every
// decoding problem is reported against the field that caused it.
type Number struct {
	raw []byte
	// short holds raw when it fits, which spares an allocation per field
	// (a request has ten or so, and the page sends one per input event).
	// A copy of a Number shares the original's bytes, which only a second
	// UnmarshalJSON of the original would change.
	short [24]byte
}

// UnmarshalJSON keeps the raw value; it never fails.
func (n *Number) UnmarshalJSON(b []byte) error {
	if len(b) <= len(n.short) {
		n.raw = append(n.short[:0], b...)
	} else {
		n.raw = append([]byte(nil), b...)
	}
	return nil
}

// N returns a Number holding v, for building requests in Go.
func N(v float64) Number { return Number{raw: strconv.AppendFloat(nil, v, 'g', -1, 64)} }

// isDecimal reports whether s is the accepted form of a number written in
// a string: the JSON number grammar, with a leading '+', a leading or
// trailing point and a decimal comma tolerated, that is
//
//	[+-]? ( digits ([.,] digits?)? | [.,] digits ) ([eE] [+-]? digits)?
//
// "NaN", "Inf" and hexadecimal are not numbers here. (A hand-written
// matcher rather than a regular expression: the regexp package would add
// some 200 KB to the WebAssembly module.)
func isDecimal(s string) bool {
	i := 0
	digits := func() int {
		start := i
		for i < len(s) && s[i] >= '0' && s[i] <= '9' {
			i++
		}
		return i - start
	}
	if i < len(s) && (s[i] == '+' || s[i] == '-') {
		i++
	}
	mantissa := digits()
	if i < len(s) && (s[i] == '.' || s[i] == ',') {
		i++
		mantissa += digits()
	}
	if mantissa == 0 {
		return false
	}
	if i < len(s) && (s[i] == 'e' || s[i] == 'E') {
		i++
		if i < len(s) && (s[i] == '+' || s[i] == '-') {
			i++
		}
		if digits() == 0 {
			return false
		}
	}
	return i == len(s)
}

// value returns the number and whether it was given at all. It works on
// the raw bytes, so that an absent or empty field costs no allocation (the
// page sends every field of its form, most of them empty).
func (n *Number) value(field string) (float64, bool, error) {
	if r := n.raw; len(r) == 0 || len(r) == 2 && r[0] == '"' && r[1] == '"' {
		return 0, false, nil // absent, or the empty string of an empty input
	}
	if v, given, ok := quickNumber(n.raw); ok {
		return v, given, nil
	}
	return n.parse(field)
}

// parse is value for every form of number (quickNumber reads the common
// ones, and agrees with it).
func (n *Number) parse(field string) (float64, bool, error) {
	raw := bytes.TrimSpace(n.raw)
	if len(raw) == 0 || string(raw) == "null" {
		return 0, false, nil
	}
	var text string
	switch c := raw[0]; {
	case c == '"':
		inner := raw[1 : len(raw)-1] // the decoder only hands over whole strings
		if bytes.IndexByte(inner, '\\') >= 0 {
			var s string
			if err := json.Unmarshal(raw, &s); err != nil {
				return 0, false, fieldErr(field, "must be a number")
			}
			inner = []byte(s)
		}
		inner = bytes.TrimSpace(inner)
		if len(inner) == 0 {
			return 0, false, nil
		}
		text = string(inner)
		if !isDecimal(text) {
			return 0, false, fieldErr(field, "must be a number (got "+strconv.Quote(clip(text))+")")
		}
		if thousandsComma(text) {
			return 0, false, fieldErr(field, "is ambiguous (got "+strconv.Quote(clip(text))+"): a comma before three digits may be a thousands separator; write the number without it, or with a decimal point")
		}
		text = strings.Replace(text, ",", ".", 1)
	case c == '-' || (c >= '0' && c <= '9'):
		text = string(raw)
	default:
		return 0, false, fieldErr(field, "must be a number (got "+kind(c)+")")
	}
	v, err := strconv.ParseFloat(text, 64)
	if err != nil || math.IsInf(v, 0) || math.IsNaN(v) {
		return 0, false, fieldErr(field, "must be a finite number (got "+strconv.Quote(clip(text))+")")
	}
	return v, true, nil
}

// Required returns the number in field, or an error if it is absent.
func (n *Number) Required(field string) (float64, error) {
	v, ok, err := n.value(field)
	if err == nil && !ok {
		err = fieldErr(field, "is required")
	}
	return v, err
}

// Optional returns the number in field, or def if it is absent.
func (n *Number) Optional(field string, def float64) (float64, error) {
	v, ok, err := n.value(field)
	if !ok {
		v = def
	}
	return v, err
}

// thousandsComma reports whether s, a number isDecimal accepts, ends in a
// comma and exactly three digits after a whole part that is not zero,
// such as "1,000" or "12,500": a decimal comma there cannot be told from
// a thousands separator (1 or 1000?), and a flow or KoA read a thousand
// times too small is worse than a question. "0,993", "1,5" and "5,005e2"
// are decimal commas beyond doubt.
func thousandsComma(s string) bool {
	whole, fraction, ok := strings.Cut(s, ",")
	return ok && len(fraction) == 3 && !strings.ContainsAny(fraction, "eE") &&
		strings.Trim(strings.TrimLeft(whole, "+-"), "0") != ""
}

// kind names the JSON type that starts with c, for error messages.
func kind(c byte) string {
	switch c {
	case '{':
		return "an object"
	case '[':
		return "a list"
	case 't', 'f':
		return "true or false"
	}
	return "something else"
}

// clip shortens s for an error message.
func clip(s string) string {
	if len(s) > 24 {
		return s[:24] + "..."
	}
	return s
}
