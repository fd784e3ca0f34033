package api

import (
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
	return s.value(reflect.TypeOf(v), "")
}

// jsonField is one field of a request struct as the decoder sees it.
type jsonField struct {
	name string // the JSON name, as documented
	typ  reflect.Type
}

var (
	fieldsCache   sync.Map // reflect.Type -> []jsonField
	unmarshalerTo = reflect.TypeFor[json.Unmarshaler]()
)

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
		fields = append(fields, jsonField{name, sf.Type})
	}
	fieldsCache.Store(t, fields)
	return fields
}

// keyScanner reads well-formed JSON; on anything unexpected it stops
// without error and leaves the verdict to the decoder.
type keyScanner struct {
	data []byte
	pos  int
}

// value checks the value at the current position, of Go type t at path.
func (s *keyScanner) value(t reflect.Type, path string) error {
	for t.Kind() == reflect.Pointer {
		t = t.Elem()
	}
	s.space()
	if s.pos >= len(s.data) || reflect.PointerTo(t).Implements(unmarshalerTo) {
		s.skip()
		return nil
	}
	switch c := s.data[s.pos]; {
	case c == '{' && t.Kind() == reflect.Struct:
		return s.object(t, path)
	case c == '[' && (t.Kind() == reflect.Slice || t.Kind() == reflect.Array):
		return s.list(t.Elem(), path)
	}
	s.skip()
	return nil
}

// object checks the members of an object of struct type t.
func (s *keyScanner) object(t reflect.Type, path string) error {
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
			return fieldErr(path+key, "is not a field of this request")
		}
		name := path + fields[i].name
		if i < 64 {
			if seen&(1<<i) != 0 {
				return fieldErr(name, "is given more than once")
			}
			seen |= 1 << i
		}
		if err := s.value(fields[i].typ, name+"."); err != nil {
			return err
		}
	}
}

// list checks the elements of a list of Go element type elem; an element
// at index i has the path "name[i]".
func (s *keyScanner) list(elem reflect.Type, path string) error {
	name := strings.TrimSuffix(path, ".")
	s.pos++ // '['
	for i := 0; ; {
		s.space()
		if s.pos >= len(s.data) || s.data[s.pos] == ']' {
			s.pos++
			return nil
		}
		if s.data[s.pos] == ',' {
			s.pos++
			i++
			continue
		}
		if err := s.value(elem, name+"["+strconv.Itoa(i)+"]."); err != nil {
			return err
		}
	}
}

// fieldIndex finds key among fields, without regard to case (Unicode
// simple folding, as the decoder matches), or returns -1.
func fieldIndex(fields []jsonField, key string) int {
	for i, f := range fields {
		if f.name == key {
			return i
		}
	}
	for i, f := range fields {
		if strings.EqualFold(f.name, key) {
			return i
		}
	}
	return -1
}

// key reads an object key and the colon after it.
func (s *keyScanner) key() (string, bool) {
	start := s.pos
	if !s.skipString() {
		return "", false
	}
	raw := s.data[start:s.pos]
	s.space()
	if s.pos >= len(s.data) || s.data[s.pos] != ':' {
		return "", false
	}
	s.pos++
	key := string(raw[1 : len(raw)-1])
	if strings.IndexByte(key, '\\') >= 0 {
		if err := json.Unmarshal(raw, &key); err != nil {
			return "", false
		}
	}
	return key, true
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
