package api

import (
	"strings"
	"testing"
)

// Shapes that no entry has yet but checkKeys must handle as the decoder
// does: an embedded struct (its fields are promoted, encoding/json
// semantics), a list of objects, a field without a tag, an ignored field.
type keysShared struct {
	QB Number `json:"qb"`
}

type keysReading struct {
	At    Number `json:"at"`
	Value Number `json:"value"`
}

type keysRequest struct {
	keysShared
	Readings []keysReading `json:"readings"`
	Note     *keysReading  `json:"note,omitempty"`
	Plain    Number
	Ignored  Number `json:"-"`
}

func TestCheckKeys(t *testing.T) {
	for _, c := range []struct{ request, field, message string }{
		{`{"qb":1,"readings":[{"at":1,"value":2},{"at":2}],"note":null,"Plain":3}`, "", ""},
		{`{"QB":1,"plain":3}`, "", ""},                     // no regard to case
		{`{"readings":[{}],"qb":{"qb":1,"qb":2}}`, "", ""}, // inside a Number: not looked at
		{`{"qb":1,"qb":2}`, "qb", "more than once"},
		{`{"readings":[{"at":1},{"at":1,"AT":2}]}`, "readings[1].at", "more than once"},
		{`{"readings":[{"at":1},{"when":1}]}`, "readings[1].when", "is not a field"},
		{`{"note":{"value":1,"extra":true}}`, "note.extra", "is not a field"},
		{`{"Ignored":1}`, "Ignored", "is not a field"},
		{`{"keysShared":{"qb":1}}`, "keysShared", "is not a field"},
		{`{"plain":1, "Plain":2}`, "Plain", "more than once"},
	} {
		var req keysRequest
		err := decode([]byte(c.request), &req)
		if c.field == "" && c.message == "" {
			if err != nil {
				t.Errorf("decode(%s) = %v, want no error", c.request, err)
			}
			continue
		}
		if err == nil || !strings.HasPrefix(err.Error(), c.field+": ") || !strings.Contains(err.Error(), c.message) {
			t.Errorf("decode(%s) = %v, want %s: ...%s...", c.request, err, c.field, c.message)
		}
	}
}
