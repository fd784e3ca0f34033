// Package badinput reads the catalogue of bad requests in
// testdata/bad-input.json and builds each request body, so that the same
// cases run against the API natively (core/api), through the WebAssembly
// bridge under Node (wasm) and through the page (site). It is test support:
// nothing in the shipped module imports it.
package badinput

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strings"
)

// File is the catalogue's path from the top of the repository.
const File = "testdata/bad-input.json"

// Catalogue is the decoded file.
type Catalogue struct {
	About string `json:"about"`
	// EveryEntry holds cases that apply to every calculation: bodies that
	// are not a request at all, and changes to the entry's valid request.
	EveryEntry []Case `json:"every_entry"`
	// Entries holds, per calculation name, a valid request and the cases
	// specific to its fields.
	Entries map[string]EntryCases `json:"entries"`
}

// EntryCases is one calculation's part of the catalogue: a valid request
// (the base of with, without and generate), more valid requests that reach
// other parts of the calculation (they seed the fuzz target), and the
// cases.
type EntryCases struct {
	Valid    json.RawMessage   `json:"valid"`
	Examples []json.RawMessage `json:"examples"`
	Cases    []Case            `json:"cases"`
}

// Case is one bad request and the error it must give. The body is given
// in exactly one way: Body (the raw text), Request (a JSON value), With and
// Without (the entry's valid request with members set or removed), or
// Generate (built by the test, see Build).
type Case struct {
	Name     string                     `json:"name"`
	Body     *string                    `json:"body,omitempty"`
	Request  json.RawMessage            `json:"request,omitempty"`
	With     map[string]json.RawMessage `json:"with,omitempty"`
	Without  []string                   `json:"without,omitempty"`
	Generate string                     `json:"generate,omitempty"`
	Size     int                        `json:"size,omitempty"` // bytes or depth for Generate
	// Field is the request field the error must name ("" for the request
	// as a whole); "$first" stands for the first field of the valid
	// request. Message is a fragment the error message must contain.
	Field   string `json:"field"`
	Message string `json:"message"`
	// Page marks a case that is also typed into the entry's view: it must
	// set one top-level field (With of one member) that the view has as
	// an input.
	Page bool `json:"page,omitempty"`
}

// Built is a case ready to send.
type Built struct {
	Entry, Name string
	Body        []byte
	Field       string
	Message     string
	// Page cases: the input to type into and its text.
	Page      bool
	PageField string
	PageText  string
}

// Load reads the catalogue, looking for File from the working directory
// upwards (tests run in their package's directory).
func Load() (*Catalogue, error) {
	dir, err := os.Getwd()
	if err != nil {
		return nil, err
	}
	for {
		b, err := os.ReadFile(filepath.Join(dir, File))
		if err == nil {
			var c Catalogue
			if err := json.Unmarshal(b, &c); err != nil {
				return nil, fmt.Errorf("%s: %v", File, err)
			}
			return &c, nil
		}
		if !errors.Is(err, os.ErrNotExist) {
			return nil, err
		}
		parent := filepath.Dir(dir)
		if parent == dir {
			return nil, fmt.Errorf("%s not found above the working directory", File)
		}
		dir = parent
	}
}

// Cases builds every case for the calculation entry: the every-entry cases
// and the entry's own, in catalogue order.
func (c *Catalogue) Cases(entry string) ([]Built, error) {
	e, ok := c.Entries[entry]
	if !ok {
		return nil, fmt.Errorf("%s has no section for %q: add its valid request and the bad input of its fields", File, entry)
	}
	var out []Built
	for _, cs := range append(slices.Clone(c.EveryEntry), e.Cases...) {
		b, err := cs.build(entry, e.Valid)
		if err != nil {
			return nil, fmt.Errorf("%s, %s: case %q: %v", File, entry, cs.Name, err)
		}
		out = append(out, b)
	}
	return out, nil
}

func (cs Case) build(entry string, valid json.RawMessage) (Built, error) {
	b := Built{Entry: entry, Name: cs.Name, Field: cs.Field, Message: cs.Message, Page: cs.Page}
	if cs.Field == "$first" {
		first, _, _, err := firstMember(valid)
		if err != nil {
			return b, err
		}
		b.Field = first
	}
	ways := 0
	for _, given := range []bool{cs.Body != nil, cs.Request != nil, cs.With != nil || cs.Without != nil, cs.Generate != ""} {
		if given {
			ways++
		}
	}
	if ways != 1 {
		return b, errors.New("give the body in exactly one way (body, request, with/without, generate)")
	}
	var err error
	switch {
	case cs.Body != nil:
		b.Body = []byte(*cs.Body)
	case cs.Request != nil:
		b.Body = bytes.Clone(cs.Request)
	case cs.Generate != "":
		b.Body, err = generate(cs.Generate, cs.Size, valid)
	default:
		b.Body, err = change(valid, cs.With, cs.Without)
	}
	if err != nil {
		return b, err
	}
	if cs.Page {
		if len(cs.With) != 1 || cs.Without != nil {
			return b, errors.New("a page case sets exactly one field with \"with\"")
		}
		for name, raw := range cs.With {
			b.PageField = name
			var s string
			if json.Unmarshal(raw, &s) != nil {
				s = string(raw) // a JSON number is typed as written
			}
			b.PageText = s
		}
	}
	return b, nil
}

// change returns valid with the members of with set and those of without
// removed. Members keep their raw text (1e400 stays 1e400); the result's
// members are in sorted order.
func change(valid json.RawMessage, with map[string]json.RawMessage, without []string) ([]byte, error) {
	var m map[string]json.RawMessage
	if err := json.Unmarshal(valid, &m); err != nil {
		return nil, fmt.Errorf("valid request: %v", err)
	}
	for k, v := range with {
		m[k] = v
	}
	for _, k := range without {
		if _, ok := m[k]; !ok {
			return nil, fmt.Errorf("without %q: not in the valid request", k)
		}
		delete(m, k)
	}
	return json.Marshal(m)
}

// firstMember splits the object valid into its first member's name and
// value and the compact text after that member ("," and the others, and
// the closing brace).
func firstMember(valid json.RawMessage) (name string, value json.RawMessage, rest []byte, err error) {
	compact := new(bytes.Buffer)
	if err := json.Compact(compact, valid); err != nil {
		return "", nil, nil, fmt.Errorf("valid request: %v", err)
	}
	d := json.NewDecoder(bytes.NewReader(compact.Bytes()))
	if t, err := d.Token(); err != nil || t != json.Delim('{') {
		return "", nil, nil, errors.New("valid request is not an object")
	}
	t, err := d.Token()
	name, ok := t.(string)
	if err != nil || !ok {
		return "", nil, nil, errors.New("valid request has no member")
	}
	if err := d.Decode(&value); err != nil {
		return "", nil, nil, err
	}
	return name, value, compact.Bytes()[d.InputOffset():], nil
}

// generate builds the bodies too large or too repetitive to write out:
//
//	"padded": the valid request followed by spaces, Size bytes in all
//	"nested": the valid request with its first member's value replaced by
//	          Size nested lists
//	"repeat-first": the valid request with its first member given twice
func generate(kind string, size int, valid json.RawMessage) ([]byte, error) {
	name, value, rest, err := firstMember(valid)
	if err != nil {
		return nil, err
	}
	member, _ := json.Marshal(name)
	head := "{" + string(member) + ":"
	switch kind {
	case "padded":
		body := []byte(head + string(value) + string(rest))
		if size < len(body) {
			return nil, fmt.Errorf("size %d is below the valid request's %d bytes", size, len(body))
		}
		return append(body, bytes.Repeat([]byte{' '}, size-len(body))...), nil
	case "nested":
		if size < 1 {
			return nil, errors.New("nested needs a depth (size) of at least 1")
		}
		return []byte(head + strings.Repeat("[", size) + strings.Repeat("]", size) + string(rest)), nil
	case "repeat-first":
		return []byte(head + string(value) + "," + head[1:] + string(value) + string(rest)), nil
	}
	return nil, fmt.Errorf("unknown generator %q", kind)
}
