package site

import (
	"context"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/cdproto/browser"
	cdppage "github.com/chromedp/cdproto/page"
	"github.com/chromedp/cdproto/storage"
	"github.com/chromedp/chromedp"

	"clearkit/core"
)

// labels are a record's labels as the save dialog takes them.
type labels struct{ Site, Machine, Filter, Notes string }

// waitLog waits until the service log has started.
func (p *page) waitLog() {
	p.t.Helper()
	p.waitFor(`document.body.dataset.log`, 10*time.Second)
}

// saveRecord saves the compare view's calculation with l through the
// save dialog, as a user would.
func (p *page) saveRecord(view string, l labels) {
	p.t.Helper()
	p.waitLog()
	p.do(chromedp.Click(chromedp.CSS(`[data-save-view="` + view + `"]`)))
	if !eval[bool](p, `document.getElementById('save-dialog').open`) {
		p.t.Fatalf("Save to log in %s opened no dialog; the view says %q (page %s, stored view %s)", view,
			eval[string](p, `document.querySelector('[data-view="`+view+`"] .save-note').textContent`), p.server.URL,
			eval[string](p, `localStorage.getItem('clearkit.view') || ''`))
	}
	for sel, text := range map[string]string{"#save-site": l.Site, "#save-machine": l.Machine, "#save-filter": l.Filter} {
		if len(text) <= 40 {
			p.typeInto(sel, text)
			continue
		}
		// Long text key by key takes long on a loaded machine: set it whole.
		eval[bool](p, fmt.Sprintf(`(document.querySelector(%q).value = %s, true)`, sel, jsString(text)))
	}
	// The notes field is a textarea: set it whole (it may hold line breaks).
	eval[bool](p, fmt.Sprintf(`(document.getElementById('save-notes').value = %s, true)`, jsString(l.Notes)))
	p.do(chromedp.Click(chromedp.CSS(`[data-save="save"]`)))
	p.waitFor(`!document.getElementById('save-dialog').open`, 5*time.Second)
}

func jsString(s string) string {
	b, _ := json.Marshal(s)
	return string(b)
}

// storedRecords reads every record from the page's store (newest first).
func storedRecords(p *page) []map[string]any {
	p.t.Helper()
	return eval[[]map[string]any](p, `import('./js/store.js').then(m => m.openStore()).then(s => s.all())`)
}

// listed gives the text of each record in the log view's list.
func listed(p *page) []string {
	p.t.Helper()
	return eval[[]string](p, `[...document.querySelectorAll('[data-log-list] > li')].map(li => li.textContent)`)
}

// openLog shows the log tab and waits until it has read the store.
func (p *page) openLog() {
	p.t.Helper()
	p.waitLog()
	before := eval[string](p, `document.getElementById('view-log').dataset.refreshed || '0'`)
	p.do(chromedp.Click(chromedp.CSS(`.view-tab[data-view="log"]`)))
	p.waitFor(`(document.getElementById('view-log').dataset.refreshed || '0') !== '`+before+`'`, 10*time.Second)
}

func logMessage(p *page) string {
	p.t.Helper()
	return eval[string](p, `document.querySelector('[data-log-message]').textContent`)
}

// The scenario of the issue: install, lose the network, reload, compute
// and save; reload again and the record is there, and opens.
func TestLogSaveOfflineSurvivesReload(t *testing.T) {
	p := openPage(t, "")
	waitOffline(p)
	p.server.offline.Store(true)
	p.reload()
	p.typeInto("#compare-qb", "280")
	p.typeInto("#compare-qd", "700")
	p.typeInto("#compare-koa", "950")
	p.saveRecord("compare", labels{"North ward, bay 3", "HD-0417", "Model F-60 (invented)", "after descaling"})
	if note := eval[string](p, `document.querySelector('#view-compare .save-note').textContent`); note != "Saved to the service log." {
		t.Errorf("save note %q", note)
	}
	p.reload()
	p.waitLog()
	recs := storedRecords(p)
	if len(recs) != 1 {
		t.Fatalf("%d records after the offline reload, want 1", len(recs))
	}
	r := recs[0]
	if want := map[string]any{"site": "North ward, bay 3", "machine_id": "HD-0417", "filter": "Model F-60 (invented)", "notes": "after descaling"}; !reflect.DeepEqual(r["labels"], want) {
		t.Errorf("labels %v, want %v", r["labels"], want)
	}
	if want := map[string]any{"qb": "280", "qd": "700", "koa": "950", "cbi": "", "cdi": "", "qf": "", "sieving": "", "hct": "", "plasma_water": "", "red_cell_water": ""}; !reflect.DeepEqual(r["inputs"], want) {
		t.Errorf("inputs %v, want %v", r["inputs"], want)
	}
	// The saved result is the API's answer at those inputs, without the
	// chart series.
	c, err := core.Compare(core.Operating{QB: 280, QD: 700, KoA: 950, CBi: 1})
	if err != nil {
		t.Fatal(err)
	}
	result := r["result"].(map[string]any)
	if got := result["countercurrent"].(map[string]any)["clearance"]; got != c.Countercurrent.Clearance {
		t.Errorf("saved counter-current clearance %v, want %v (core.Compare)", got, c.Countercurrent.Clearance)
	}
	if _, ok := result["sweeps"]; ok {
		t.Error("the saved result holds the chart series")
	}
	if saved, _ := time.Parse(time.RFC3339, r["saved_at"].(string)); time.Since(saved) > time.Minute || time.Since(saved) < 0 {
		t.Errorf("saved_at %v is not the time of saving", r["saved_at"])
	}

	p.openLog()
	items := listed(p)
	if len(items) != 1 || !strings.Contains(items[0], "HD-0417") || !strings.Contains(items[0], "North ward, bay 3") {
		t.Fatalf("log lists %q", items)
	}
	p.screenshot("log-one-record-1024x768")
	// Open the record in another state of the view: it comes back.
	p.do(chromedp.Click(chromedp.CSS(`.view-tab[data-view="compare"]`)))
	p.do(chromedp.Click(chromedp.CSS(`#compare-demo`)))
	p.openLog()
	p.do(chromedp.Click(chromedp.CSS(`[data-log-list] li button`))) // Open
	if v := eval[bool](p, `document.getElementById('view-compare').hidden`); v {
		t.Fatal("Open did not show the compare view")
	}
	wantOutputs(t, p, core.Operating{QB: 280, QD: 700, KoA: 950, CBi: 1})
	if got := eval[string](p, `document.querySelector('.record-check').dataset.state`); got != "same" {
		t.Errorf("record check %q, want same (this build recomputes the saved numbers exactly)", got)
	}
	p.screenshot("log-record-opened-1024x768")
	// Changing an input leaves the record: the banner goes.
	p.typeInto("#compare-qb", "300")
	if n := eval[int](p, `document.querySelectorAll('.record-banner').length`); n != 0 {
		t.Error("the record banner stays after an input changed")
	}
}

// download clicks the element sel and returns the name and content of the
// file the browser saves.
func (p *page) download(sel string) (name string, data []byte) {
	p.t.Helper()
	dir := p.t.TempDir()
	ctx, cancel := context.WithTimeout(p.ctx, 20*time.Second)
	defer cancel()
	begin := chromedp.Events(ctx, browser.DownloadWillBegin)
	progress := chromedp.Events(ctx, browser.DownloadProgress)
	if _, err := chromedp.Call(ctx, browser.SetDownloadBehavior, browser.SetDownloadBehaviorParams{
		Behavior: browser.SetDownloadBehaviorBehaviorAllowAndName, DownloadPath: dir, EventsEnabled: new(true),
	}); err != nil {
		p.t.Fatal(err)
	}
	p.do(chromedp.Click(chromedp.CSS(sel)))
	for ev, err := range begin {
		if err != nil {
			p.t.Fatalf("download from %s did not begin: %v", sel, err)
		}
		name = ev.SuggestedFilename
		break
	}
	for ev, err := range progress {
		if err != nil {
			p.t.Fatalf("download from %s did not finish: %v", sel, err)
		}
		if ev.State == browser.DownloadProgressStateCompleted {
			data, err = os.ReadFile(filepath.Join(dir, ev.GUID))
			if err != nil {
				p.t.Fatal(err)
			}
			return name, data
		}
		if ev.State == browser.DownloadProgressStateCanceled {
			p.t.Fatalf("download from %s was cancelled", sel)
		}
	}
	p.t.Fatalf("download from %s: no file", sel)
	return "", nil
}

// importFile gives the log's import button the file holding data.
func (p *page) importFile(name string, data []byte) {
	p.t.Helper()
	path := filepath.Join(p.t.TempDir(), name)
	if err := os.WriteFile(path, data, 0o644); err != nil {
		p.t.Fatal(err)
	}
	eval[bool](p, `(document.querySelector('[data-log-message]').dataset.tone = 'waiting', true)`)
	p.do(chromedp.SetUploadFiles(chromedp.CSS(`[data-log-file]`), []string{path}, chromedp.NodeReady))
	p.waitFor(`document.querySelector('[data-log-message]').dataset.tone !== 'waiting'`, 10*time.Second)
}

// saveThree saves three records with different inputs and labels.
func saveThree(p *page) {
	p.t.Helper()
	for i, in := range []struct{ qb, koa string }{{"250", "700"}, {"300", "800"}, {"350", "1100"}} {
		p.typeInto("#compare-qb", in.qb)
		p.typeInto("#compare-koa", in.koa)
		p.saveRecord("compare", labels{"Site " + string(rune('A'+i)), fmt.Sprintf("M-%d", i+1), "F-60", "line one\nline two, with \"quotes\""})
	}
}

func TestLogExportClearImport(t *testing.T) {
	p := openPage(t, "")
	saveThree(p)
	before := storedRecords(p)
	if len(before) != 3 {
		t.Fatalf("%d records saved, want 3", len(before))
	}
	p.openLog()

	name, data := p.download(`[data-log="export-json"]`)
	if !strings.HasPrefix(name, "clearkit-log-") || !strings.HasSuffix(name, ".json") {
		t.Errorf("export file name %q", name)
	}
	var file struct {
		Format     string           `json:"format"`
		Schema     int              `json:"schema"`
		ExportedAt string           `json:"exported_at"`
		AppVersion string           `json:"app_version"`
		Records    []map[string]any `json:"records"`
	}
	if err := json.Unmarshal(data, &file); err != nil {
		t.Fatalf("the export is not JSON: %v", err)
	}
	if file.Format != "clearkit-service-log" || file.Schema != 1 {
		t.Errorf("export format %q schema %d, want clearkit-service-log 1", file.Format, file.Schema)
	}
	if !reflect.DeepEqual(file.Records, before) {
		t.Errorf("exported records differ from the stored ones:\n%v\n%v", file.Records, before)
	}

	csvName, csv := p.download(`[data-log="export-csv"]`)
	if !strings.HasSuffix(csvName, ".csv") {
		t.Errorf("CSV file name %q", csvName)
	}
	checkCSV(t, csv, before)

	// Clear: Delete all asks first, then deletes.
	p.do(chromedp.Click(chromedp.CSS(`[data-log="delete-all"]`)))
	if n := len(storedRecords(p)); n != 3 {
		t.Fatalf("Delete all deleted before it was confirmed (%d left)", n)
	}
	p.screenshot("log-delete-all-confirm")
	p.do(chromedp.Click(chromedp.CSS(`[data-log-actions] button.danger`)))
	p.waitFor(`document.querySelectorAll('[data-log-list] > li').length === 0`, 5*time.Second)
	if n := len(storedRecords(p)); n != 0 {
		t.Fatalf("%d records after Delete all", n)
	}

	p.importFile(name, data)
	if msg := logMessage(p); !strings.Contains(msg, "Imported 3 records") {
		t.Errorf("import message %q", msg)
	}
	if after := storedRecords(p); !reflect.DeepEqual(after, before) {
		t.Errorf("imported records differ from the exported ones:\n%v\n%v", after, before)
	}
	// The same file again adds nothing.
	p.importFile(name, data)
	if msg := logMessage(p); !strings.Contains(msg, "Imported 0 records") || !strings.Contains(msg, "3 were already in the log") {
		t.Errorf("second import message %q", msg)
	}
	if after := storedRecords(p); !reflect.DeepEqual(after, before) {
		t.Errorf("after a second import of the same file: %d records, want the same 3", len(after))
	}
	if n := len(listed(p)); n != 3 {
		t.Errorf("the log lists %d records, want 3", n)
	}
	p.screenshot("log-three-records-1024x768")
}

// checkCSV reads the CSV export by RFC 4180 rules, independently of the
// page's writer, and checks it against the records.
func checkCSV(t *testing.T, data []byte, records []map[string]any) {
	t.Helper()
	text := string(data)
	if !strings.HasPrefix(text, "\uFEFF") {
		t.Error("CSV has no UTF-8 byte-order mark")
	}
	rows, err := readCSV(strings.TrimPrefix(text, "\uFEFF"))
	if err != nil {
		t.Fatal(err)
	}
	if len(rows) != len(records)+1 {
		t.Fatalf("CSV has %d rows, want a header and %d", len(rows), len(records))
	}
	col := map[string]int{}
	for i, h := range rows[0] {
		col[h] = i
	}
	for _, h := range []string{"id", "saved_at", "view", "site", "machine_id", "filter", "notes", "app_version", "input.qb", "input.koa", "result.countercurrent.clearance", "result.ntu"} {
		if _, ok := col[h]; !ok {
			t.Errorf("CSV has no column %q (header %q)", h, rows[0])
		}
	}
	for i, r := range records {
		row := rows[i+1]
		labels := r["labels"].(map[string]any)
		if row[col["id"]] != r["id"] || row[col["notes"]] != labels["notes"] || row[col["site"]] != labels["site"] {
			t.Errorf("CSV row %d = %q, want the record %v", i+1, row, r)
		}
		want := r["result"].(map[string]any)["countercurrent"].(map[string]any)["clearance"].(float64)
		if got := row[col["result.countercurrent.clearance"]]; got != fmt.Sprint(want) && got != strings.TrimSuffix(fmt.Sprintf("%.17g", want), "0") {
			var f float64
			if _, err := fmt.Sscan(got, &f); err != nil || f != want {
				t.Errorf("CSV row %d clearance %q, want %v", i+1, got, want)
			}
		}
	}
}

// readCSV splits RFC 4180 text (CRLF records, double-quoted fields).
func readCSV(text string) ([][]string, error) {
	var rows [][]string
	var row []string
	var field strings.Builder
	quoted, inQuotes := false, false
	for i := 0; i < len(text); i++ {
		c := text[i]
		switch {
		case inQuotes && c == '"' && i+1 < len(text) && text[i+1] == '"':
			field.WriteByte('"')
			i++
		case inQuotes && c == '"':
			inQuotes = false
		case inQuotes:
			field.WriteByte(c)
		case c == '"' && field.Len() == 0 && !quoted:
			inQuotes, quoted = true, true
		case c == ',':
			row = append(row, field.String())
			field.Reset()
			quoted = false
		case c == '\r' && i+1 < len(text) && text[i+1] == '\n':
			row = append(row, field.String())
			rows = append(rows, row)
			row, quoted = nil, false
			field.Reset()
			i++
		case c == '\n' || c == '\r':
			return nil, fmt.Errorf("bare line break at byte %d (want CRLF)", i)
		default:
			field.WriteByte(c)
		}
	}
	if inQuotes {
		return nil, fmt.Errorf("unterminated quoted field")
	}
	if field.Len() > 0 || len(row) > 0 {
		return nil, fmt.Errorf("last record has no CRLF")
	}
	return rows, nil
}

func TestLogMalformedImportChangesNothing(t *testing.T) {
	p := openPage(t, "")
	saveThree(p)
	before := storedRecords(p)
	p.openLog()
	good, _ := json.Marshal(before[0])
	rec := func(edit func(map[string]any)) string {
		var r map[string]any
		json.Unmarshal(good, &r)
		r["id"] = "imported-1"
		edit(r)
		b, _ := json.Marshal(r)
		return string(b)
	}
	file := func(records ...string) string {
		return `{"format":"clearkit-service-log","schema":1,"records":[` + strings.Join(records, ",") + `]}`
	}
	same := rec(func(map[string]any) {})
	for _, tc := range []struct{ name, body, want string }{
		{"empty", ``, "not JSON"},
		{"text", `site,machine`, "not JSON"},
		{"truncated", file(same)[:40], "not JSON"},
		{"foreign", `{"name":"some other app","items":[]}`, `lacks "format"`},
		{"array", `[1,2,3]`, `lacks "format"`},
		{"newer", `{"format":"clearkit-service-log","schema":2,"records":[]}`, "newer ClearKit"},
		{"schema text", `{"format":"clearkit-service-log","schema":"1","records":[]}`, `"schema" is "1"`},
		{"records not a list", `{"format":"clearkit-service-log","schema":1,"records":{}}`, "not a list"},
		{"unknown top", `{"format":"clearkit-service-log","schema":1,"records":[],"extra":1}`, `unknown member "extra"`},
		{"no id", file(rec(func(r map[string]any) { delete(r, "id") })), `Record 1 has no "id"`},
		{"bad id", file(same, rec(func(r map[string]any) { r["id"] = "<b>" })), `Record 2: "id"`},
		{"bad time", file(rec(func(r map[string]any) { r["saved_at"] = "yesterday" })), `"saved_at"`},
		{"bad date", file(rec(func(r map[string]any) { r["saved_at"] = "2025-02-30T10:00:00Z" })), `"saved_at"`},
		{"label not text", file(rec(func(r map[string]any) { r["labels"].(map[string]any)["site"] = 5 })), `label "site" must be text`},
		{"unknown label", file(rec(func(r map[string]any) { r["labels"].(map[string]any)["owner"] = "x" })), `unknown label "owner"`},
		{"long notes", file(rec(func(r map[string]any) { r["labels"].(map[string]any)["notes"] = strings.Repeat("n", 4001) })), "longer than 4000"},
		{"inputs list", file(rec(func(r map[string]any) { r["inputs"] = []int{1} })), `"inputs" must be an object`},
		{"no result", file(rec(func(r map[string]any) { r["result"] = nil })), `"result" must be an object`},
		{"extra member", file(rec(func(r map[string]any) { r["owner"] = "x" })), `unknown member "owner"`},
		{"bad view", file(rec(func(r map[string]any) { r["view"] = "Compare Flows" })), `"view"`},
		{"same id other content", file(same, rec(func(r map[string]any) { r["labels"].(map[string]any)["site"] = "elsewhere" })), "id of record 1 but other content"},
	} {
		p.importFile(tc.name+".json", []byte(tc.body))
		msg := logMessage(p)
		if !strings.Contains(msg, "Nothing was imported") || !strings.Contains(msg, tc.want) || !strings.Contains(msg, "The log is unchanged") {
			t.Errorf("import %s: message %q, want it to say nothing was imported because %q", tc.name, msg, tc.want)
		}
		if tone := eval[string](p, `document.querySelector('[data-log-message]').dataset.tone`); tone != "error" {
			t.Errorf("import %s: message tone %q, want error", tc.name, tone)
		}
		if after := storedRecords(p); !reflect.DeepEqual(after, before) {
			t.Fatalf("import %s changed the log: %d records, want the same %d", tc.name, len(after), len(before))
		}
	}
	p.screenshot("log-import-refused")
	// A valid file of one new record and one that conflicts with a stored
	// one: the new one comes in, the stored one is kept.
	conflict := strings.Replace(string(good), `"site":"Site`, `"site":"Changed site`, 1)
	p.importFile("mixed.json", []byte(file(same, conflict)))
	if msg := logMessage(p); !strings.Contains(msg, "Imported 1 record") || !strings.Contains(msg, "1 had the id of a different record") {
		t.Errorf("mixed import message %q", msg)
	}
	after := storedRecords(p)
	if len(after) != 4 {
		t.Fatalf("%d records after the mixed import, want 4", len(after))
	}
	for _, r := range after {
		if r["id"] == before[0]["id"] && !reflect.DeepEqual(r, before[0]) {
			t.Errorf("the stored record %v was overwritten by an import", r["id"])
		}
	}
}

func TestLogDeleteUndo(t *testing.T) {
	p := openPage(t, "")
	saveThree(p)
	before := storedRecords(p)
	p.openLog()
	// Delete the second record listed.
	p.do(chromedp.Click(chromedp.CSS(`[data-log-list] > li:nth-child(2) button.danger`)))
	p.waitFor(`document.querySelectorAll('[data-log-list] > li').length === 2`, 5*time.Second)
	if recs := storedRecords(p); len(recs) != 2 || recs[0]["id"] != before[0]["id"] || recs[1]["id"] != before[2]["id"] {
		t.Fatalf("after deleting the second record: %v", recs)
	}
	if msg := logMessage(p); !strings.Contains(msg, "Deleted the record") {
		t.Errorf("delete message %q", msg)
	}
	p.do(chromedp.Click(chromedp.CSS(`[data-log-actions] button`))) // Undo
	p.waitFor(`document.querySelectorAll('[data-log-list] > li').length === 3`, 5*time.Second)
	if after := storedRecords(p); !reflect.DeepEqual(after, before) {
		t.Errorf("undo gave %v, want %v", after, before)
	}
	// Delete all, then undo, restores all.
	p.do(chromedp.Click(chromedp.CSS(`[data-log="delete-all"]`)))
	p.do(chromedp.Click(chromedp.CSS(`[data-log-actions] button.danger`)))
	p.waitFor(`document.querySelectorAll('[data-log-list] > li').length === 0`, 5*time.Second)
	p.do(chromedp.Click(chromedp.CSS(`[data-log-actions] button`)))
	p.waitFor(`document.querySelectorAll('[data-log-list] > li').length === 3`, 5*time.Second)
	if after := storedRecords(p); !reflect.DeepEqual(after, before) {
		t.Errorf("undo of delete all gave %d records, want the 3 back", len(after))
	}
}

// smallControls lists the shown controls smaller than 44 x 44 px (WCAG 2.2
// target size, enhanced level 2.5.5).
func smallControls(p *page) []string {
	p.t.Helper()
	return eval[[]string](p, `[...document.querySelectorAll('button, input, summary, select, textarea')].filter(e => e.checkVisibility()).filter(e => { const r = e.getBoundingClientRect(); return r.height < 44 || r.width < 44; }).map(e => e.id || e.name || e.textContent.trim())`)
}

func TestLogSearch(t *testing.T) {
	p := openPage(t, "")
	saveThree(p)
	p.do(chromedp.Click(chromedp.CSS(`[data-save-view="compare"]`)))
	if small := smallControls(p); len(small) > 0 {
		t.Errorf("save dialog: controls smaller than 44 x 44 px: %v", small)
	}
	p.screenshot("log-save-dialog")
	p.do(chromedp.Click(chromedp.CSS(`[data-save="cancel"]`)))
	p.openLog()
	if small := smallControls(p); len(small) > 0 {
		t.Errorf("log view: controls smaller than 44 x 44 px: %v", small)
	}
	noSideScroll(t, p, "log, landscape 1024x768")
	p.do(chromedp.EmulateViewport(768, 1024))
	noSideScroll(t, p, "log, portrait 768x1024")
	p.screenshot("log-portrait-768x1024")
	p.do(chromedp.EmulateViewport(1024, 768, chromedp.EmulateLandscape))
	p.typeInto("#log-search", "m-2")
	if items := listed(p); len(items) != 1 || !strings.Contains(items[0], "M-2") {
		t.Errorf("search m-2 lists %q, want the record of machine M-2", items)
	}
	p.typeInto("#log-search", "")
	if n := len(listed(p)); n != 3 {
		t.Errorf("cleared search lists %d records, want 3", n)
	}
}

func TestLastInputsSurviveReload(t *testing.T) {
	p := openPage(t, "")
	p.typeInto("#compare-qb", "410")
	p.typeInto("#compare-qd", "650,5")
	p.typeInto("#compare-koa", "12x") // in error: kept as typed all the same
	p.openLog()
	p.reload()
	for sel, want := range map[string]string{"#compare-qb": "410", "#compare-qd": "650,5", "#compare-koa": "12x"} {
		if got := eval[string](p, `document.querySelector('`+sel+`').value`); got != want {
			t.Errorf("after reload %s = %q, want %q", sel, got, want)
		}
	}
	if msg := eval[string](p, `document.querySelector('[data-error-for="koa"]').textContent`); !strings.Contains(msg, "number") {
		t.Errorf("after reload the KoA error reads %q", msg)
	}
	if hidden := eval[bool](p, `document.getElementById('view-log').hidden`); hidden {
		t.Error("after reload the open tab (Service log) was not reopened")
	}
}

// TestLastInputsKeptWhileTyping: the inputs are kept 200 ms after the
// last keystroke of a burst (last-inputs.js moves one timer's time due at
// each keystroke rather than setting a timer anew), without a reload:
// keystrokes typed one after another, then what localStorage holds.
func TestLastInputsKeptWhileTyping(t *testing.T) {
	p := openPage(t, "")
	p.do(chromedp.Focus(chromedp.CSS("#compare-qb")),
		chromedp.Evaluate[chromedp.Void](`document.querySelector('#compare-qb').select()`),
		chromedp.SendKeys(chromedp.CSS("#compare-qb"), "4"), chromedp.Sleep(120*time.Millisecond),
		chromedp.SendKeys(chromedp.CSS("#compare-qb"), "1"), chromedp.Sleep(120*time.Millisecond),
		chromedp.SendKeys(chromedp.CSS("#compare-qb"), "3"))
	p.waitFor(`(JSON.parse(localStorage.getItem('clearkit.inputs.compare') || '{}').qb) === '413'`, 5*time.Second)
}

// refuseStorage makes the next documents of the tab behave as Chromium
// does when the user blocks site data: IndexedDB.open and localStorage
// throw a SecurityError.
func (p *page) refuseStorage() {
	p.t.Helper()
	ctx, cancel := context.WithTimeout(p.ctx, 5*time.Second)
	defer cancel()
	_, err := chromedp.Call(ctx, cdppage.AddScriptToEvaluateOnNewDocument, cdppage.AddScriptToEvaluateOnNewDocumentParams{Source: `
		IDBFactory.prototype.open = function () { throw new DOMException('Access to the Indexed Database API is denied in this context.', 'SecurityError'); };
		Object.defineProperty(window, 'localStorage', { get() { throw new DOMException("Failed to read the 'localStorage' property from 'Window': Access is denied for this document.", 'SecurityError'); } });`})
	if err != nil {
		p.t.Fatal(err)
	}
}

func TestLogStorageRefused(t *testing.T) {
	p := openPage(t, "")
	p.refuseStorage()
	p.reload()
	p.waitLog()
	if kind := eval[string](p, `document.body.dataset.log`); kind != "tab" {
		t.Fatalf("store kind %q with storage refused, want tab", kind)
	}
	p.saveRecord("compare", labels{"Private tab", "M-9", "F-60", ""})
	if note := eval[string](p, `document.querySelector('#view-compare .save-note').textContent`); !strings.Contains(note, "this tab only") || !strings.Contains(note, "export") {
		t.Errorf("save note %q, want it to say the record lasts for this tab only and to export", note)
	}
	p.openLog()
	storage := eval[string](p, `document.querySelector('[data-log-storage]').textContent`)
	for _, want := range []string{"does not let ClearKit keep records", "export the log", "last inputs"} {
		if !strings.Contains(storage, want) {
			t.Errorf("storage message %q, want it to say %q", storage, want)
		}
	}
	if n := len(listed(p)); n != 1 {
		t.Errorf("the log lists %d records in this tab, want 1", n)
	}
	// The export still works.
	_, data := p.download(`[data-log="export-json"]`)
	if !strings.Contains(string(data), `"M-9"`) {
		t.Errorf("export with storage refused lacks the record: %s", data)
	}
	p.screenshot("log-storage-refused")
}

func TestLogStorageFull(t *testing.T) {
	p := openPage(t, "")
	waitOffline(p) // the offline copy counts against the quota: let it land first
	p.waitLog()
	used := eval[float64](p, `navigator.storage.estimate().then(e => e.usage)`)
	ctx, cancel := context.WithTimeout(p.ctx, 5*time.Second)
	defer cancel()
	quota := used + 1024
	if _, err := chromedp.Call(ctx, storage.OverrideQuotaForOrigin, storage.OverrideQuotaForOriginParams{Origin: p.server.URL, QuotaSize: &quota}); err != nil {
		t.Fatal(err)
	}
	// Notes too long for what is left.
	p.do(chromedp.Click(chromedp.CSS(`[data-save-view="compare"]`)))
	p.waitFor(`document.getElementById('save-dialog').open`, 5*time.Second)
	if visible(p, `[data-save-fallback]`) {
		t.Error("the save dialog offers the export before anything failed")
	}
	eval[bool](p, `(document.getElementById('save-notes').value = 'x'.repeat(3999), true)`)
	for i := 0; i < 20 && eval[string](p, `document.querySelector('[data-save-error]').textContent`) == ""; i++ {
		p.do(chromedp.Click(chromedp.CSS(`[data-save="save"]`)))
		time.Sleep(100 * time.Millisecond)
		if !eval[bool](p, `document.getElementById('save-dialog').open`) {
			// It fitted: save again until the quota is reached.
			p.do(chromedp.Click(chromedp.CSS(`[data-save-view="compare"]`)))
			eval[bool](p, `(document.getElementById('save-notes').value = 'x'.repeat(3999), true)`)
		}
	}
	msg := eval[string](p, `document.querySelector('[data-save-error]').textContent`)
	if !strings.Contains(msg, "storage for ClearKit is full") || !strings.Contains(msg, "Export it now") {
		t.Fatalf("save error %q, want it to say storage is full and to export", msg)
	}
	if !visible(p, `[data-save-fallback]`) {
		t.Fatal("no export offered when storage is full")
	}
	p.screenshot("log-storage-full")
	kept := len(storedRecords(p))
	name, data := p.download(`[data-save="export-record"]`)
	if !strings.HasPrefix(name, "clearkit-record-") || !strings.Contains(string(data), strings.Repeat("x", 3999)) {
		t.Errorf("export of the unsaved record: %s, %d bytes", name, len(data))
	}
	if n := len(storedRecords(p)); n != kept {
		t.Errorf("records changed from %d to %d by a failed save", kept, n)
	}
}

// Records saved in another tab of the page show when the log is opened.
func TestLogShowsOtherTabsRecords(t *testing.T) {
	p := openPage(t, "")
	p.openLog()
	p.waitLog()
	if n := len(listed(p)); n != 0 {
		t.Fatalf("a new page lists %d records", n)
	}
	other := openPageOn(t, p.server, "")
	// It opens on the tab open last (the log): go to the calculator.
	other.do(chromedp.Click(chromedp.CSS(`.view-tab[data-view="compare"]`)))
	other.saveRecord("compare", labels{"Other tab", "M-7", "F-60", ""})
	p.do(chromedp.Click(chromedp.CSS(`.view-tab[data-view="compare"]`)))
	p.openLog()
	p.waitFor(`document.querySelectorAll('[data-log-list] > li').length === 1`, 5*time.Second)
	if items := listed(p); !strings.Contains(items[0], "M-7") {
		t.Errorf("log lists %q, want the other tab's record", items)
	}
}

// A long log lists the newest 100 records and adds 100 at a time.
func TestLogLongListPages(t *testing.T) {
	p := openPage(t, "")
	p.saveRecord("compare", labels{"Site", "M-0", "F-60", ""})
	eval[bool](p, `(async () => {
		const store = await import('./js/store.js');
		const s = await store.openStore();
		const [r] = await s.all();
		await s.merge(Array.from({length: 249}, (_, i) => ({...structuredClone(r), id: 'r' + i,
			labels: {...r.labels, machine_id: 'M-' + (i + 1)}, saved_at: new Date(Date.parse(r.saved_at) - (i + 1) * 60000).toISOString()})));
		return true;
	})()`)
	p.openLog()
	p.waitFor(`document.querySelectorAll('[data-log-list] > li').length === 100`, 5*time.Second)
	if got := eval[string](p, `document.querySelector('.log-more').textContent`); got != "Show 100 more (of 150 not shown)" {
		t.Errorf("more button %q", got)
	}
	p.do(chromedp.Click(chromedp.CSS(`.log-more`)))
	p.do(chromedp.Click(chromedp.CSS(`.log-more`)))
	p.waitFor(`document.querySelectorAll('[data-log-list] > li').length === 250`, 5*time.Second)
	if visible(p, ".log-more") {
		t.Error("the more button shows with every record listed")
	}
	// Newest first: the last one listed is the oldest, M-249.
	if last := eval[string](p, `document.querySelector('[data-log-list] > li:last-child').textContent`); !strings.Contains(last, "M-249") {
		t.Errorf("last listed %q, want the oldest record M-249", last)
	}
	// The search reaches records not listed yet.
	p.typeInto("#log-search", "m-248")
	if items := listed(p); len(items) != 1 || !strings.Contains(items[0], "M-248") {
		t.Errorf("search m-248 lists %d records", len(items))
	}
}

// Every registered view saves to the log, and its record opens again with
// the same results (this build recomputes them to the bit).
func TestLogEveryView(t *testing.T) {
	p := openPage(t, "")
	p.waitLog()
	names := eval[[]string](p, `import('./js/views.js').then(m => [...m.views.keys()])`)
	if len(names) == 0 {
		t.Fatal("no view registered")
	}
	for _, name := range names {
		p.do(chromedp.Click(chromedp.CSS(`.view-tab[data-view="` + name + `"]`)))
		p.saveRecord(name, labels{"Every view", "M-" + name, "F", ""})
	}
	recs := storedRecords(p)
	if len(recs) != len(names) {
		t.Fatalf("%d records for %d views", len(recs), len(names))
	}
	p.reload()
	// Each record's line of inputs shows its figures, a field check's
	// (kept one level down, under its part) as well as the others'.
	p.openLog()
	for i, text := range eval[[]string](p, `[...document.querySelectorAll('[data-log-list] .record-inputs')].map((e) => e.textContent)`) {
		if !strings.Contains(text, "qb ") {
			t.Errorf("the %s record's inputs read %q, without its QB", names[len(names)-1-i], text)
		}
	}
	for i := range names {
		p.openLog()
		// Newest first: record i is view names[len-1-i].
		name := names[len(names)-1-i]
		p.do(chromedp.Click(chromedp.CSS(fmt.Sprintf(`[data-log-list] > li:nth-child(%d) button`, i+1))))
		if hidden := eval[bool](p, `document.getElementById('view-`+name+`').hidden`); hidden {
			t.Errorf("opening the %s record did not show its view", name)
			continue
		}
		if state := eval[string](p, `document.querySelector('#view-`+name+` .record-check').dataset.state`); state != "same" {
			t.Errorf("%s record: check %q (%s), want same", name, state, eval[string](p, `document.querySelector('.record-banner').textContent`))
		}
		p.screenshot("log-record-opened-" + name)
	}
	p.openLog()
	_, csv := p.download(`[data-log="export-csv"]`)
	rows, err := readCSV(strings.TrimPrefix(string(csv), "\uFEFF"))
	if err != nil || len(rows) != len(names)+1 {
		t.Errorf("CSV of every view: %d rows, %v", len(rows), err)
	}
}

// TestSaveRefusedNote: Save to log with an input in error opens no dialog
// and says why, under the view's title (not over it: its box and the
// title's do not meet, at both tablet orientations), marked as a warning
// rather than with the tick of a save; the next input clears it.
func TestSaveRefusedNote(t *testing.T) {
	p := openPage(t, "")
	p.waitLog()
	for _, size := range [][2]int64{{1024, 768}, {768, 1024}} {
		p.do(chromedp.EmulateViewport(size[0], size[1]))
		p.typeInto("#compare-qb", "abc")
		p.do(chromedp.Click(chromedp.CSS(`[data-save-view="compare"]`)))
		if eval[bool](p, `document.getElementById('save-dialog').open`) {
			t.Fatalf("%v: Save to log opened the dialog with QB in error", size)
		}
		note := `document.querySelector('#view-compare .save-note')`
		if text := eval[string](p, note+`.textContent`); !strings.Contains(text, "Correct the inputs marked in red") {
			t.Errorf("%v: refusal note %q", size, text)
		}
		if mark := eval[string](p, `getComputedStyle(`+note+`, '::before').content`); strings.Contains(mark, "✓") || strings.Contains(mark, `\2713`) {
			t.Errorf("%v: the refusal is marked %s, the mark of a save", size, mark)
		}
		if meet := eval[bool](p, `(() => {
			const a = `+note+`.getBoundingClientRect(), b = document.getElementById('compare-title').getBoundingClientRect();
			return a.width > 0 && b.width > 0 && a.left < b.right && b.left < a.right && a.top < b.bottom && b.top < a.bottom;
		})()`); meet {
			t.Errorf("%v: the refusal note covers the view's title", size)
		}
		p.typeInto("#compare-qb", "300")
		if text := eval[string](p, note+`.textContent`); text != "" {
			t.Errorf("%v: after the next input the note still says %q", size, text)
		}
	}
}
