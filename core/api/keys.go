package api

import (
	"bytes"
	"reflect"
	"strconv"
	"strings"
	"sync"

	"github.com/goccy/go-json"
)

// checkKeys walks the object keys of request, which has already decoded
// into v without error (so it is well-formed JSON), along the type of v.
// It reports the first key that is not a field of the request and the
// first field given twice, by their full path ("sweep.points",
// "readings[2].qb"). The decoder matches keys to fields without regard to
// case, as encoding/json does, so "qb" and "QB" are the same field, and
// with JSON's last-one-wins rule a second value would silently replace the
// first: a request that names a field twice is refused instead.
//
// Values of numeric fields (Number, or any type with its own UnmarshalJSON)
// are skipped without looking inside: they have their own checks.
func checkKeys(request []byte, v any) error {
	s := keyScanner{data: request}
	s.path = s.pathBuf[:0]
	// v is a pointer to a request struct, which does not decode itself.
	return s.value(reflect.TypeOf(v), false, false)
}

// jsonField is one field of a request struct as the decoder sees it.
type jsonField struct {
	name  string // the JSON name, as documented
	bytes []byte // name, for comparing with keys without a conversion
	typ   reflect.Type
	leaf  bool // decoded by its own UnmarshalJSON: not looked into
	// elemLeaf is leaf for the elements, when typ is a list.
	elemLeaf bool
}

var (
	fieldsCache   sync.Map // reflect.Type -> []jsonField
	unmarshalerTo = reflect.TypeFor[json.Unmarshaler]()
)

// isLeaf reports whether values of type t decode themselves.
func isLeaf(t reflect.Type) bool {
	return reflect.PointerTo(derefType(t)).Implements(unmarshalerTo)
}

func derefType(t reflect.Type) reflect.Type {
	for t.Kind() == reflect.Pointer {
		t = t.Elem()
	}
	return t
}

// fieldsOf lists the JSON fields of struct type t: each exported field by
// its json tag name (or Go name), with the fields of embedded structs
// without a tag promoted, as encoding/json does.
func fieldsOf(t reflect.Type) []jsonField {
	if f, ok := fieldsCache.Load(t); ok {
		return f.([]jsonField)
	}
	var fields []jsonField
	for i := range t.NumField() {
		sf := t.Field(i)
		tag := sf.Tag.Get("json")
		if tag == "-" {
			continue
		}
		name, _, _ := strings.Cut(tag, ",")
		if sf.Anonymous && name == "" {
			et := sf.Type
			if et.Kind() == reflect.Pointer {
				et = et.Elem()
			}
			if et.Kind() == reflect.Struct {
				fields = append(fields, fieldsOf(et)...)
				continue
			}
		}
		if !sf.IsExported() {
			continue
		}
		if name == "" {
			name = sf.Name
		}
		f := jsonField{name: name, bytes: []byte(name), typ: sf.Type, leaf: isLeaf(sf.Type)}
		if k := derefType(sf.Type).Kind(); k == reflect.Slice || k == reflect.Array {
			f.elemLeaf = isLeaf(derefType(sf.Type).Elem())
		}
		fields = append(fields, f)
	}
	fieldsCache.Store(t, fields)
	return fields
}

// keyScanner reads well-formed JSON; on anything unexpected it stops
// without error and leaves the verdict to the decoder. path holds the
// path of the value being read ("sweep." inside sweep); it is built in
// place, so that a request without fault costs no allocation.
type keyScanner struct {
	data    []byte
	pos     int
	path    []byte
	pathBuf [64]byte
}

// value checks the value at the current position, of Go type t; leaf and
// elemLeaf say whether t, or its elements when it is a list, decode
// themselves.
func (s *keyScanner) value(t reflect.Type, leaf, elemLeaf bool) error {
	t = derefType(t)
	s.space()
	if s.pos >= len(s.data) || leaf {
		s.skip()
		return nil
	}
	switch c := s.data[s.pos]; {
	case c == '{' && t.Kind() == reflect.Struct:
		return s.object(t)
	case c == '[' && (t.Kind() == reflect.Slice || t.Kind() == reflect.Array):
		return s.list(t.Elem(), elemLeaf)
	}
	s.skip()
	return nil
}

// object checks the members of an object of struct type t.
func (s *keyScanner) object(t reflect.Type) error {
	fields := fieldsOf(t)
	var seen uint64 // bit i: fields[i] given; structs of more than 64 fields are checked for unknown keys only
	s.pos++         // '{'
	for {
		s.space()
		if s.pos >= len(s.data) || s.data[s.pos] == '}' {
			s.pos++
			return nil
		}
		if s.data[s.pos] == ',' {
			s.pos++
			continue
		}
		key, ok := s.key()
		if !ok {
			return nil
		}
		i := fieldIndex(fields, key)
		if i < 0 {
			return fieldErr(string(s.path)+unescaped(key), "is not a field of this request")
		}
		if i < 64 {
			if seen&(1<<i) != 0 {
				return fieldErr(string(s.path)+fields[i].name, "is given more than once")
			}
			seen |= 1 << i
		}
		n := len(s.path)
		s.path = append(append(s.path, fields[i].name...), '.')
		if err := s.value(fields[i].typ, fields[i].leaf, fields[i].elemLeaf); err != nil {
			return err
		}
		s.path = s.path[:n]
	}
}

// list checks the elements of a list of Go element type elem; an element
// at index i has the path "name[i]".
func (s *keyScanner) list(elem reflect.Type, leaf bool) error {
	// Lists of lists are rare: their elements' elements are looked up here.
	elemLeaf := false
	if k := derefType(elem).Kind(); !leaf && (k == reflect.Slice || k == reflect.Array) {
		elemLeaf = isLeaf(derefType(elem).Elem())
	}
	n := len(s.path)
	name := s.path[:max(n-1, 0)] // without the '.'
	s.pos++                      // '['
	for i := 0; ; {
		s.space()
		if s.pos >= len(s.data) || s.data[s.pos] == ']' {
			s.pos++
			if n > 0 {
				s.path = append(s.path[:n-1], '.') // undo the '[' written over it
			}
			return nil
		}
		if s.data[s.pos] == ',' {
			s.pos++
			i++
			continue
		}
		s.path = append(strconv.AppendInt(append(name, '['), int64(i), 10), ']', '.')
		if err := s.value(elem, leaf, elemLeaf); err != nil {
			return err
		}
	}
}

// fieldIndex finds key (as written, quotes removed) among fields, without
// regard to case (Unicode simple folding, as the decoder matches), or
// returns -1.
func fieldIndex(fields []jsonField, key []byte) int {
	for i, f := range fields {
		if string(key) == f.name {
			return i
		}
	}
	if bytes.IndexByte(key, '\\') >= 0 {
		k := []byte(unescaped(key))
		for i, f := range fields {
			if bytes.EqualFold(f.bytes, k) {
				return i
			}
		}
		return -1
	}
	for i, f := range fields {
		if bytes.EqualFold(f.bytes, key) {
			return i
		}
	}
	return -1
}

// unescaped decodes a key written with escapes ("q\u0062" is "qb").
func unescaped(key []byte) string {
	if bytes.IndexByte(key, '\\') < 0 {
		return string(key)
	}
	var s string
	if err := json.Unmarshal(append(append([]byte{'"'}, key...), '"'), &s); err != nil {
		return string(key)
	}
	return s
}

// key reads an object key and the colon after it, and returns the key as
// written, without its quotes.
func (s *keyScanner) key() ([]byte, bool) {
	start := s.pos
	if !s.skipString() {
		return nil, false
	}
	raw := s.data[start+1 : s.pos-1]
	s.space()
	if s.pos >= len(s.data) || s.data[s.pos] != ':' {
		return nil, false
	}
	s.pos++
	return raw, true
}

func (s *keyScanner) space() {
	for s.pos < len(s.data) {
		switch s.data[s.pos] {
		case ' ', '\t', '\n', '\r':
			s.pos++
		default:
			return
		}
	}
}

// skipString moves past the string starting at the current position.
func (s *keyScanner) skipString() bool {
	if s.pos >= len(s.data) || s.data[s.pos] != '"' {
		return false
	}
	for s.pos++; s.pos < len(s.data); s.pos++ {
		switch s.data[s.pos] {
		case '\\':
			s.pos++
		case '"':
			s.pos++
			return true
		}
	}
	return false
}

// skip moves past one value of any kind, nested lists and objects
// included, without recursion.
func (s *keyScanner) skip() {
	depth := 0
	for s.pos < len(s.data) {
		switch s.data[s.pos] {
		case '"':
			if !s.skipString() {
				return
			}
			if depth == 0 {
				return
			}
			continue
		case '{', '[':
			depth++
		case '}', ']':
			if depth == 0 {
				return
			}
			depth--
			if depth == 0 {
				s.pos++
				return
			}
		case ',':
			if depth == 0 {
				return
			}
		case ' ', '\t', '\n', '\r':
			if depth == 0 {
				return
			}
		}
		s.pos++
	}
}
