package api_test

import (
	"bytes"
	"encoding/json"
	"strings"
	"testing"

	"clearkit/core/api"
	"clearkit/internal/badinput"
)

// loadCatalogue reads testdata/bad-input.json.
func loadCatalogue(t testing.TB) *badinput.Catalogue {
	t.Helper()
	c, err := badinput.Load()
	if err != nil {
		t.Fatal(err)
	}
	return c
}

// TestBadInput runs the catalogue of bad input against every entry: each
// case must fail with its field and message, and keep the response
// contract (checkResponse).
func TestBadInput(t *testing.T) {
	c := loadCatalogue(t)
	for _, e := range api.Entries {
		cases, err := c.Cases(e.Name)
		if err != nil {
			t.Fatal(err)
		}
		for _, cs := range cases {
			got := e.Call(cs.Body)
			env := checkResponse(t, e, cs.Body, got)
			if *env.OK {
				t.Errorf("%s, %s: %s(%q) succeeded, want field %q with %q", e.Name, cs.Name, e.Name, shown(cs.Body), cs.Field, cs.Message)
				continue
			}
			if *env.Error.Field != cs.Field || !strings.Contains(env.Error.Message, cs.Message) {
				t.Errorf("%s, %s: %s(%q) = %s, want field %q with %q", e.Name, cs.Name, e.Name, shown(cs.Body), got, cs.Field, cs.Message)
			}
		}
	}
	for name := range c.Entries {
		if !hasEntry(name) {
			t.Errorf("%s has a section for %q, which is not an entry of api.Entries", badinput.File, name)
		}
	}
}

func hasEntry(name string) bool {
	for _, e := range api.Entries {
		if e.Name == name {
			return true
		}
	}
	return false
}

// The valid request and the examples of each entry succeed, within their
// physical bounds; so does the valid request padded to exactly 64 KiB, the
// largest accepted.
func TestCatalogueValidRequests(t *testing.T) {
	c := loadCatalogue(t)
	for _, e := range api.Entries {
		section, ok := c.Entries[e.Name]
		if !ok {
			t.Fatalf("%s has no section for %q", badinput.File, e.Name)
		}
		compact := new(bytes.Buffer)
		if err := json.Compact(compact, section.Valid); err != nil {
			t.Fatal(err)
		}
		padded := append(compact.Bytes(), bytes.Repeat([]byte{' '}, api.MaxRequestBytes-compact.Len())...)
		for _, req := range append([][]byte{section.Valid, padded}, rawList(section.Examples)...) {
			if env := checkResponse(t, e, req, e.Call(req)); !*env.OK {
				t.Errorf("%s(%q) = %s: %s, want success", e.Name, shown(req), *env.Error.Field, env.Error.Message)
			}
		}
	}
}

func rawList(rs []json.RawMessage) [][]byte {
	out := make([][]byte, len(rs))
	for i, r := range rs {
		out[i] = r
	}
	return out
}
