package site

import (
	"encoding/json"
	"fmt"
	"strings"
	"testing"

	"github.com/chromedp/chromedp"

	"clearkit/internal/badinput"
)

// TestBadInputOnPage types the catalogue's page cases (testdata/bad-input.json,
// "page": true) into each calculation's view, section.view[data-view=NAME]:
// the error must appear beside its field, the field marked invalid and the
// results shown as stale, with the note that says so in words; putting the
// valid value back clears it.
func TestBadInputOnPage(t *testing.T) {
	c, err := badinput.Load()
	if err != nil {
		t.Fatal(err)
	}
	p := openPage(t, "")
	ran := 0
	for entry, section := range c.Entries {
		cases, err := c.Cases(entry)
		if err != nil {
			t.Fatal(err)
		}
		var valid map[string]json.RawMessage
		if err := json.Unmarshal(section.Valid, &valid); err != nil {
			t.Fatal(err)
		}
		view := fmt.Sprintf(`section.view[data-view=%q]`, entry)
		for _, cs := range cases {
			if !cs.Page {
				continue
			}
			ran++
			if eval[int](p, fmt.Sprintf(`document.querySelectorAll(%q).length`, view+` input[name="`+cs.PageField+`"]`)) != 1 {
				t.Fatalf("%s, %s: the page has no %s input[name=%q]", entry, cs.Name, view, cs.PageField)
			}
			p.showView(entry)
			input := view + ` input[name="` + cs.PageField + `"]`
			p.reveal(input)
			p.typeInto(input, cs.PageText)
			slot := view + ` [data-error-for="` + cs.PageField + `"]`
			if msg := eval[string](p, fmt.Sprintf(`document.querySelector(%q).textContent`, slot)); !strings.Contains(msg, cs.Message) {
				t.Errorf("%s, %s: typing %q into %s shows %q beside it, want %q", entry, cs.Name, cs.PageText, cs.PageField, msg, cs.Message)
			}
			if inv := eval[string](p, fmt.Sprintf(`document.querySelector(%q).getAttribute('aria-invalid') || ''`, input)); inv != "true" {
				t.Errorf("%s, %s: aria-invalid %q, want true", entry, cs.Name, inv)
			}
			if state := eval[string](p, fmt.Sprintf(`document.querySelector(%q).dataset.state`, view+` .results`)); state != "error" {
				t.Errorf("%s, %s: results state %q, want error", entry, cs.Name, state)
			}
			note := view + ` .results > .stale-note`
			if shown := eval[bool](p, fmt.Sprintf(`getComputedStyle(document.querySelector(%q)).display !== 'none'`, note)); !shown {
				t.Errorf("%s, %s: the note that the results are for the last valid values is not shown", entry, cs.Name)
			}
			p.typeInto(input, textOf(valid[cs.PageField]))
			if shown := eval[bool](p, fmt.Sprintf(`getComputedStyle(document.querySelector(%q)).display !== 'none'`, note)); shown {
				t.Errorf("%s, %s: after the valid value, the stale note is still shown", entry, cs.Name)
			}
			if msgs := eval[string](p, fmt.Sprintf(`[...document.querySelectorAll(%q)].map(e => e.textContent).join('')`, view+` [data-error-for]`)); msgs != "" {
				t.Errorf("%s, %s: after the valid value, errors still shown: %q", entry, cs.Name, msgs)
			}
		}
	}
	if ran == 0 {
		t.Fatalf("%s marks no case for the page", badinput.File)
	}
}

// textOf is the text a person types for a JSON value: a string as it is,
// a number as written, nothing for an absent field.
func textOf(raw json.RawMessage) string {
	if raw == nil {
		return ""
	}
	var s string
	if json.Unmarshal(raw, &s) == nil {
		return s
	}
	return string(raw)
}

// showView presses the tab of view name.
func (p *page) showView(name string) {
	p.t.Helper()
	p.do(chromedp.Click(chromedp.CSS(fmt.Sprintf(`.view-tab[data-view=%q]`, name))))
}

// reveal opens the <details> that holds the element matched by sel.
func (p *page) reveal(sel string) {
	p.t.Helper()
	eval[bool](p, fmt.Sprintf(`(() => { const d = document.querySelector(%q).closest('details'); if (d) d.open = true; return true; })()`, sel))
}
