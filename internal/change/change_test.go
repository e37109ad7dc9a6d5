package change

import (
	"errors"
	"reflect"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/scangate/scangate/internal/analysis"
	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

// manifest writes a model with segments of 1,000 rows; tables is the YAML of its tables.
func manifest(model, overhead, tables string) string {
	return "format: 1\nmodel: " + model + "\nengine: {segment_rows: 1000, segment_overhead_ms: " + overhead + "}\n" +
		"budgets: {scan_overhead_ms: 100}\ntables:\n" + tables
}

const (
	// 10,000 rows in one partition: ceil(10,000/1,000) = 10 segments, fill 1, 10 x 1.5 = 15 ms.
	ordersNone = "  - name: orders\n    rows: 10k\n    partitions: {scheme: none}\n"
	// 4 partitions of 2,500 rows: 4 x ceil(2.5) = 12 segments, fill 10,000/12,000, 18 ms;
	// 2 excess segments, a note of truncated-segments (a warning needs max(8, 12/10) = 8).
	ordersEven4 = "  - name: orders\n    rows: 10k\n    partitions: {scheme: even, count: 4}\n"
	// 20 partitions of 500 rows: 20 segments, 10 excess: a warning of truncated-segments.
	ordersEven20 = "  - name: orders\n    rows: 10k\n    partitions: {scheme: even, count: 20}\n"
	// 500 rows: 1 segment, 1.5 ms.
	stores = "  - name: stores\n    rows: 500\n    partitions: {scheme: none}\n"
)

// side loads and checks files (key -> manifest) as the command does; files are named
// label:key so the two sides' names differ.
func side(t *testing.T, label string, keys []string, bodies ...string) Side {
	t.Helper()
	s := Side{Label: label}
	for i, key := range keys {
		name := label + ":" + key
		m, err := schema.Load(name, []byte(bodies[i]), schema.DefaultLimits)
		if err != nil {
			if se := (*schema.Error)(nil); errors.As(err, &se) {
				s.Files = append(s.Files, File{Name: name, Key: key, Invalid: true})
				s.Findings = append(s.Findings, rules.SchemaFindings(se)...)
				continue
			}
			t.Fatal(err)
		}
		md, findings := rules.Check(m, rules.Config{Today: time.Date(2026, 1, 1, 0, 0, 0, 0, time.UTC)})
		s.Files = append(s.Files, File{Name: name, Key: key, Model: m.Model, Tables: analysis.Rows(md.Tables)})
		s.Findings = append(s.Findings, findings...)
	}
	return s
}

func table(t *testing.T, d *Diff, model, name string) TableChange {
	t.Helper()
	for _, tc := range d.Tables() {
		if tc.Model == model && tc.Name == name {
			return tc
		}
	}
	t.Fatalf("no table %s/%s in %+v", model, name, d.Models)
	return TableChange{}
}

func rulesOf(fs []FindingChange) string {
	var out []string
	for _, f := range fs {
		out = append(out, f.Finding.Rule+"/"+f.Finding.Severity.String()+"/"+f.Finding.Table)
	}
	return strings.Join(out, " ")
}

func TestCompareChangedTable(t *testing.T) {
	base := side(t, "base", []string{"m.yaml"}, manifest("sales", "1.5", ordersNone+stores))
	head := side(t, "head", []string{"m.yaml"}, manifest("sales", "1.5", ordersEven4+stores))
	d := Compare(base, head)
	orders := table(t, d, "sales", "orders")
	if orders.Status != Changed || orders.Moved {
		t.Errorf("orders: status %s moved %v, want changed in place", orders.Status, orders.Moved)
	}
	// 10 -> 12 segments (see ordersEven4), 15 -> 18 ms, fill 1 -> 10,000/12,000.
	if orders.Before.Segments != 10 || orders.After.Segments != 12 || orders.AddedSegments() != 2 {
		t.Errorf("segments %d -> %d", orders.Before.Segments, orders.After.Segments)
	}
	if orders.Before.FixedMs != 15 || orders.After.FixedMs != 18 || orders.AddedMs() != 3 {
		t.Errorf("fixed ms %v -> %v", orders.Before.FixedMs, orders.After.FixedMs)
	}
	if orders.Before.Partitions != 1 || orders.After.Partitions != 4 || orders.Before.Fill != 1 || Round(orders.After.Fill) != 0.833333 {
		t.Errorf("partitions %d -> %d, fill %v -> %v", orders.Before.Partitions, orders.After.Partitions, orders.Before.Fill, orders.After.Fill)
	}
	if s := table(t, d, "sales", "stores"); s.Status != Unchanged {
		t.Errorf("stores did not change: %s", s.Status)
	}
	// Totals: before 10 + 1 = 11 segments, 15 + 1.5 = 16.5 ms; after 12 + 1 = 13, 19.5 ms.
	m := d.Models[0]
	if m.Status != Changed || *m.Before != (Totals{Tables: 2, Partitions: 2, Segments: 11, FixedMs: 16.5}) ||
		*m.After != (Totals{Tables: 2, Partitions: 5, Segments: 13, FixedMs: 19.5}) {
		t.Errorf("model %s totals %+v -> %+v", m.Status, *m.Before, *m.After)
	}
	if got := rulesOf(d.Introduced); got != "truncated-segments/note/orders" {
		t.Errorf("introduced %q", got)
	}
	if len(d.Resolved) != 0 || len(d.Unchanged) != 0 {
		t.Errorf("resolved %q unchanged %q", rulesOf(d.Resolved), rulesOf(d.Unchanged))
	}
	if v := d.Verdict(); v != "adds 3.0 ms per scan to orders" {
		t.Errorf("verdict %q", v)
	}
	if len(d.Files) != 1 || d.Files[0].Status != FileKept {
		t.Errorf("files %+v", d.Files)
	}
}

// Releasing the rows changes nothing compared: the same diff, and the sides' files hold
// no rows afterwards.
func TestCompareRelease(t *testing.T) {
	sides := func() (Side, Side) {
		return side(t, "base", []string{"m.yaml"}, manifest("sales", "1.5", ordersNone+stores)),
			side(t, "head", []string{"m.yaml"}, manifest("sales", "1.5", ordersEven4+stores))
	}
	base, head := sides()
	kept := Compare(base, head)
	base, head = sides()
	released := CompareWith(base, head, Options{FigureThreshold: DefaultFigureThreshold, Release: true})
	if a, b := modelsOf(kept), modelsOf(released); !reflect.DeepEqual(a, b) || !reflect.DeepEqual(kept.Introduced, released.Introduced) {
		t.Errorf("release changed the diff:\n%+v\n%+v", a, b)
	}
	for _, f := range append(base.Files, head.Files...) {
		if f.Tables != nil {
			t.Errorf("%s still holds %d rows", f.Name, len(f.Tables))
		}
	}
	if kept.Files[0].Head.Tables == nil {
		t.Error("Compare without Release dropped the rows")
	}
	// stores is unchanged in place, so kept in brief: it must read as a table in full.
	var got []TableChange
	for _, tc := range released.Tables() {
		got = append(got, tc)
	}
	if len(got) != 2 || released.TableCount() != 2 {
		t.Fatalf("tables %+v", got)
	}
	st := got[1]
	if st.Model != "sales" || st.Name != "stores" || st.Status != Unchanged || st.Moved ||
		st.BaseFile != "base:m.yaml" || st.HeadFile != "head:m.yaml" || st.Before == nil || st.Before != st.After ||
		st.BasePos != st.HeadPos || st.HeadPos.Line == 0 || got[0].Name != "orders" || got[0].Status != Changed {
		t.Errorf("tables %+v", got)
	}
}

// Reordering tables, reflowing mappings, adding comments and blank lines: nothing to report.
func TestCompareMovedLinesOnly(t *testing.T) {
	base := side(t, "base", []string{"m.yaml"}, manifest("sales", "1.5", ordersEven4+stores))
	moved := "format: 1\n# a comment\nmodel: sales\n\nbudgets:\n  scan_overhead_ms: 100\nengine:\n  segment_overhead_ms: 1.5\n  segment_rows: 1000\n" +
		"tables:\n" + stores + "\n  - name: orders\n    partitions:\n      count: 4\n      scheme: even\n    rows: 10000\n"
	head := side(t, "head", []string{"m.yaml"}, moved)
	d := Compare(base, head)
	for _, tc := range d.Tables() {
		if tc.Status != Unchanged || tc.AddedMs() != 0 || tc.AddedSegments() != 0 {
			t.Errorf("%s: %s, %v ms, %d segments", tc.Name, tc.Status, tc.AddedMs(), tc.AddedSegments())
		}
	}
	if d.Models[0].Status != Unchanged || len(d.Introduced) != 0 || len(d.Resolved) != 0 || len(d.Unchanged) != 1 {
		t.Errorf("model %s, introduced %q, resolved %q, unchanged %q", d.Models[0].Status, rulesOf(d.Introduced), rulesOf(d.Resolved), rulesOf(d.Unchanged))
	}
	if v := d.Verdict(); v != "no change in segments or ms per scan" {
		t.Errorf("verdict %q", v)
	}
}

// A renamed file keeps its tables and its findings: nothing is added, removed,
// introduced or resolved.
func TestCompareRename(t *testing.T) {
	body := manifest("sales", "1.5", ordersEven4+stores)
	other := manifest("stock", "1.5", stores)
	base := side(t, "base", []string{"models/a.yaml", "models/z.yaml"}, body, other)
	head := side(t, "head", []string{"models/b.yaml", "models/z.yaml"}, body, other)
	d := Compare(base, head)
	if len(d.Files) != 2 || d.Files[0].Status != FileRenamed || d.Files[0].Base.Key != "models/a.yaml" || d.Files[0].Head.Key != "models/b.yaml" || d.Files[1].Status != FileKept {
		t.Fatalf("files %+v", d.Files)
	}
	orders := table(t, d, "sales", "orders")
	if orders.Status != Unchanged || !orders.Moved || orders.BaseFile != "base:models/a.yaml" || orders.HeadFile != "head:models/b.yaml" {
		t.Errorf("orders %+v", orders)
	}
	if len(d.Introduced) != 0 || len(d.Resolved) != 0 || rulesOf(d.Unchanged) != "truncated-segments/note/orders" {
		t.Errorf("introduced %q resolved %q unchanged %q", rulesOf(d.Introduced), rulesOf(d.Resolved), rulesOf(d.Unchanged))
	}
	if d.Verdict() != "no change in segments or ms per scan" {
		t.Errorf("verdict %q", d.Verdict())
	}
	// A new model at a new path next to a gone one is no rename: added and removed.
	head = side(t, "head", []string{"models/b.yaml", "models/z.yaml"}, manifest("orders-v2", "1.5", ordersEven4), other)
	d = Compare(base, head)
	var statuses []string
	for _, f := range d.Files {
		statuses = append(statuses, string(f.Status))
	}
	if strings.Join(statuses, " ") != "removed added kept" {
		t.Errorf("statuses %v", statuses)
	}
}

// Deleting a file removes its tables; the change saves all of their overhead.
func TestCompareDelete(t *testing.T) {
	base := side(t, "base", []string{"a.yaml", "b.yaml"}, manifest("sales", "1.5", ordersEven4), manifest("stock", "1.5", stores))
	head := side(t, "head", []string{"b.yaml"}, manifest("stock", "1.5", stores))
	d := Compare(base, head)
	orders := table(t, d, "sales", "orders")
	// 12 segments at 1.5 ms (ordersEven4) go away: -12 segments, -18 ms.
	if orders.Status != Removed || orders.After != nil || orders.AddedSegments() != -12 || orders.AddedMs() != -18 {
		t.Errorf("orders %+v", orders)
	}
	if d.Models[0].Name != "sales" || d.Models[0].Status != Removed || d.Models[0].After != nil {
		t.Errorf("model %+v", d.Models[0])
	}
	if rulesOf(d.Resolved) != "truncated-segments/note/orders" || len(d.Introduced) != 0 {
		t.Errorf("resolved %q", rulesOf(d.Resolved))
	}
	if v := d.Verdict(); v != "saves 18.0 ms per scan on orders" {
		t.Errorf("verdict %q", v)
	}
	if d.Files[0].Status != FileRemoved || d.Files[1].Status != FileKept {
		t.Errorf("files %+v", d.Files)
	}
	// An added table counts from zero: 12 segments, 18 ms.
	d = Compare(head, base)
	if o := table(t, d, "sales", "orders"); o.Status != Added || o.AddedSegments() != 12 || o.AddedMs() != 18 {
		t.Errorf("added orders %+v", o)
	}
}

// The gate at its boundaries: exactly the limit passes, a thousandth more fails.
func TestGateBoundaries(t *testing.T) {
	// Base: 10,000 rows at 1 ms per segment: 10 segments, 10 ms. Head: 20,000 rows,
	// 20 segments; at 1 ms that is 20 ms (adds exactly 10 ms and 10 segments), at
	// 1.00005 ms it is 20 x 1.00005 = 20.001 ms (adds 10.001 ms).
	rows := func(n string) string {
		return "  - name: orders\n    rows: " + n + "\n    partitions: {scheme: none}\n"
	}
	base := side(t, "base", []string{"m.yaml"}, manifest("sales", "1", rows("10k")))
	exact := Compare(base, side(t, "head", []string{"m.yaml"}, manifest("sales", "1", rows("20k"))))
	over := Compare(base, side(t, "head", []string{"m.yaml"}, manifest("sales", "1.00005", rows("20k"))))
	ms := func(x float64) *float64 { return &x }
	segs := func(n int64) *int64 { return &n }
	for _, c := range []struct {
		name string
		d    *Diff
		g    Gate
		want string
	}{
		{"exactly 10 ms", exact, Gate{MaxAddedMs: ms(10)}, ""},
		{"10 ms against 9.999", exact, Gate{MaxAddedMs: ms(9.999)}, "added-ms"},
		{"10.001 ms against 10", over, Gate{MaxAddedMs: ms(10)}, "added-ms"},
		{"10.001 ms against 10.001", over, Gate{MaxAddedMs: ms(10.001)}, ""},
		{"exactly 10 segments", exact, Gate{MaxAddedSegments: segs(10)}, ""},
		{"10 segments against 9", exact, Gate{MaxAddedSegments: segs(9)}, "added-segments"},
		{"no limits", over, Gate{}, ""},
	} {
		var kinds []string
		for _, b := range c.g.Check(c.d) {
			kinds = append(kinds, b.Kind)
		}
		if got := strings.Join(kinds, " "); got != c.want {
			t.Errorf("%s: breaches %q, want %q", c.name, got, c.want)
		}
	}
	b := Gate{MaxAddedMs: ms(10)}.Check(over)
	if len(b) != 1 || b[0].Value != 10.001 || b[0].Message != "orders adds 10.001 ms per scan, more than the 10 ms allowed (--max-added-ms)" {
		t.Errorf("breach %+v", b)
	}
}

func TestGateNewFindings(t *testing.T) {
	base := side(t, "base", []string{"m.yaml"}, manifest("sales", "1.5", ordersNone))
	note := Compare(base, side(t, "head", []string{"m.yaml"}, manifest("sales", "1.5", ordersEven4)))
	for _, c := range []struct {
		level rules.Severity
		n     int
	}{{0, 0}, {rules.Error, 0}, {rules.Warning, 0}, {rules.Note, 1}} {
		if got := len(Gate{FailOnNew: c.level}.Check(note)); got != c.n {
			t.Errorf("a new note against --fail-on-new %v: %d breaches, want %d", c.level, got, c.n)
		}
	}
	// 4 -> 20 even partitions turns the truncated-segments note into a warning: the same
	// fingerprint, so worsened, not new, but it counts as new at the warning level.
	worse := Compare(side(t, "base", []string{"m.yaml"}, manifest("sales", "1.5", ordersEven4)),
		side(t, "head", []string{"m.yaml"}, manifest("sales", "1.5", ordersEven20)))
	if len(worse.Introduced) != 0 || len(worse.Worsened) != 1 || !worse.Worsened[0].Escalated() || worse.Worsened[0].Was != rules.Note {
		t.Fatalf("introduced %q worsened %q", rulesOf(worse.Introduced), rulesOf(worse.Worsened))
	}
	b := Gate{FailOnNew: rules.Warning}.Check(worse)
	if len(b) != 1 || b[0].Kind != "new-finding" || !strings.Contains(b[0].Message, "truncated-segments on orders at head:m.yaml:") || !strings.HasSuffix(b[0].Message, "rose from note to warning (--fail-on-new warning)") {
		t.Errorf("breaches %+v", b)
	}
	if b := (Gate{FailOnNew: rules.Error}).Check(worse); len(b) != 0 {
		t.Errorf("a warning does not reach --fail-on-new error: %+v", b)
	}
}

func TestVerdictWording(t *testing.T) {
	var tables, bigger string
	// Five tables of 1,000 rows each in one partition: 1 segment, 1.5 ms each. The head
	// splits table tN into N+1 even partitions of at most 1,000 rows: N+1 segments, so
	// it adds N segments and 1.5 N ms.
	for i, name := range []string{"t1", "t2", "t3", "t4", "t5"} {
		tables += "  - name: " + name + "\n    rows: 1000\n    partitions: {scheme: none}\n"
		bigger += "  - name: " + name + "\n    rows: 1000\n    partitions: {scheme: even, count: " + string(rune('2'+i)) + "}\n"
	}
	d := Compare(side(t, "base", []string{"m.yaml"}, manifest("m", "1.5", tables)), side(t, "head", []string{"m.yaml"}, manifest("m", "1.5", bigger)))
	if v := d.Verdict(); v != "adds 7.5 ms per scan to t5, 6.0 ms to t4, 4.5 ms to t3 and 2 more tables" {
		t.Errorf("verdict %q", v)
	}
	// Two models with a table of the same name are told apart by model.
	d = Compare(side(t, "base", []string{"a.yaml", "b.yaml"}, manifest("sales", "1.5", ordersNone), manifest("stock", "1.5", ordersEven4)),
		side(t, "head", []string{"a.yaml", "b.yaml"}, manifest("sales", "1.5", ordersEven4), manifest("stock", "1.5", ordersNone)))
	if v := d.Verdict(); v != "adds 3.0 ms per scan to orders (sales); saves 3.0 ms per scan on orders (stock)" {
		t.Errorf("verdict %q", v)
	}
	// With an overhead of 0 segments still change: named by segments. 10 -> 12 segments.
	d = Compare(side(t, "base", []string{"m.yaml"}, manifest("sales", "0", ordersNone)), side(t, "head", []string{"m.yaml"}, manifest("sales", "0", ordersEven4)))
	if v := d.Verdict(); v != "adds 2 segments to orders" {
		t.Errorf("verdict %q", v)
	}
}

// A file that breaks the schema on either side stops the comparison and is reported
// with its problems.
func TestCompareInvalid(t *testing.T) {
	base := side(t, "base", []string{"m.yaml"}, manifest("sales", "1.5", ordersNone))
	head := side(t, "head", []string{"m.yaml"}, manifest("sales", "1.5", "  - name: orders\n    rows: -1\n    partitions: {scheme: none}\n"))
	d := Compare(base, head)
	if len(d.Invalid) != 1 || d.Invalid[0].Side != "head" || len(d.Invalid[0].Findings) == 0 || len(d.Models) != 0 {
		t.Fatalf("invalid %+v models %+v", d.Invalid, d.Models)
	}
	f := d.Invalid[0].Findings[0]
	// rows is on line 7 of the manifest (format, model, engine, budgets, tables, - name,
	// rows), its value at column 11.
	if f.Rule != "schema" || f.Pos != (schema.Pos{Line: 7, Col: 11}) {
		t.Errorf("finding %+v", f)
	}
	if v := d.Verdict(); v != "cannot compare: 1 file breaks the schema or cannot be read" {
		t.Errorf("verdict %q", v)
	}
}

// The model's refresh peak, as the refresh-memory rule states it: 2 x the encoded size
// + refresh_parallelism x segment_rows x the widest row. One int64 column (8 bytes a
// value) measured at 1MB = 1,000,000 bytes, segments of 1,000 rows:
// parallelism 2: 2 x 1,000,000 + 2 x 1,000 x 8 = 2,016,000 bytes;
// parallelism 4: 2 x 1,000,000 + 4 x 1,000 x 8 = 2,032,000 bytes.
func TestRefreshPeak(t *testing.T) {
	m := func(parallelism string) string {
		return "format: 1\nmodel: sales\nengine: {segment_rows: 1000, refresh_parallelism: " + parallelism + "}\ntables:\n" +
			"  - name: orders\n    rows: 10k\n    partitions: {scheme: none}\n    columns:\n      - {name: id, type: int64, encoded_bytes: 1MB}\n" +
			"  - name: stores\n    rows: 500\n    partitions: {scheme: none}\n"
	}
	d := Compare(side(t, "base", []string{"m.yaml"}, m("2")), side(t, "head", []string{"m.yaml"}, m("4")))
	md := d.Models[0]
	if md.Before.RefreshBytes == nil || *md.Before.RefreshBytes != 2016000 || md.After.RefreshBytes == nil || *md.After.RefreshBytes != 2032000 {
		t.Fatalf("refresh peak %v -> %v", md.Before.RefreshBytes, md.After.RefreshBytes)
	}
	// No table figure moved, but the model's peak did.
	if md.Status != Changed || table(t, d, "sales", "orders").Status != Unchanged || d.Verdict() != "no change in segments or ms per scan" {
		t.Errorf("model %s, verdict %q", md.Status, d.Verdict())
	}
	// Without column profiles there is no peak to show.
	d = Compare(side(t, "base", []string{"m.yaml"}, manifest("sales", "1.5", ordersNone)), side(t, "head", []string{"m.yaml"}, manifest("sales", "1.5", ordersEven4)))
	if d.Models[0].Before.RefreshBytes != nil || d.Models[0].After.RefreshBytes != nil {
		t.Error("a model without profiles has no refresh peak")
	}
}

// Tables pair first within their file, then across the model's files, each base table
// once, the earliest first: a model split in two keeps both tables, and a copy of a
// table in the new file is added, not matched again.
func TestCompareSplitModelPairsEachTableOnce(t *testing.T) {
	base := side(t, "base", []string{"a.yaml"}, manifest("sales", "1.5", ordersEven4+stores))
	head := side(t, "head", []string{"a.yaml", "b.yaml"}, manifest("sales", "1.5", ordersEven4), manifest("sales", "1.5", stores+ordersNone))
	d := Compare(base, head)
	var got []string
	for _, tc := range d.Tables() {
		got = append(got, tc.HeadFile+" "+tc.Name+" "+string(tc.Status)+" from "+tc.BaseFile)
	}
	want := "head:a.yaml orders unchanged from base:a.yaml; head:b.yaml stores unchanged from base:a.yaml; head:b.yaml orders added from "
	if strings.Join(got, "; ") != want {
		t.Errorf("tables:\n%s\nwant:\n%s", strings.Join(got, "; "), want)
	}
}

// shownModel is a model as the reports see it: its tables as TableChanges yields them.
type shownModel struct {
	Name          string
	Status        Status
	Before, After *Totals
	Tables        []TableChange
}

func modelsOf(d *Diff) []shownModel {
	var out []shownModel
	for i := range d.Models {
		m := &d.Models[i]
		out = append(out, shownModel{m.Name, m.Status, m.Before, m.After, slices.Collect(m.TableChanges())})
	}
	return out
}
