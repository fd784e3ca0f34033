package api_test

import (
	"testing"

	"clearkit/core/api"
)

// FuzzAPI sends arbitrary bytes to every entry of api.Entries (the first
// argument picks the entry, so new entries are fuzzed without a change
// here) and checks the response contract: no panic, valid JSON, a failure
// naming a field or the request, a success with finite numbers within
// physical bounds (checkResponse), and for an entry with a packed answer
// the same answer with its series apart (checkPacked). Seeds: the catalogue of bad input and
// the valid examples (testdata/bad-input.json), and the failures found so
// far (testdata/fuzz/FuzzAPI). ./build.sh test runs it for a few seconds;
// see DEVELOPERS.md for longer runs.
func FuzzAPI(f *testing.F) {
	c := loadCatalogue(f)
	for i, e := range api.Entries {
		section, ok := c.Entries[e.Name]
		if !ok {
			f.Fatalf("testdata/bad-input.json has no section for %q", e.Name)
		}
		f.Add(uint8(i), []byte(section.Valid))
		for _, ex := range section.Examples {
			f.Add(uint8(i), []byte(ex))
		}
		cases, err := c.Cases(e.Name)
		if err != nil {
			f.Fatal(err)
		}
		for _, cs := range cases {
			if len(cs.Body) <= 4096 { // the 10 MB body is no use to mutate
				f.Add(uint8(i), cs.Body)
			}
		}
	}
	f.Fuzz(func(t *testing.T, entry uint8, request []byte) {
		e := api.Entries[int(entry)%len(api.Entries)]
		full := e.Call(request)
		checkResponse(t, e, request, full)
		if e.Packed != nil {
			checkPacked(t, e, request, full)
		}
	})
}
