package schema_test

import (
	"bytes"
	"encoding/binary"
	"encoding/json"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"testing"
	"unicode/utf16"

	"github.com/scangate/scangate/schema"
)

func readFile(t testing.TB, path string) []byte {
	t.Helper()
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return data
}

func mustLoad(t *testing.T, name string, data []byte) *schema.Manifest {
	t.Helper()
	m, err := schema.Load(name, data, schema.DefaultLimits)
	if err != nil {
		t.Fatalf("Load(%s): %v", name, err)
	}
	return m
}

// problems loads data, expects it to be refused, and returns the problems.
func problems(t *testing.T, data []byte, lim schema.Limits) []schema.Problem {
	t.Helper()
	m, err := schema.Load("in.yaml", data, lim)
	if err == nil {
		t.Fatalf("Load succeeded (%d tables), want an error", len(m.Tables))
	}
	var se *schema.Error
	if !errors.As(err, &se) {
		t.Fatalf("Load error is %T (%v), want *schema.Error", err, err)
	}
	if m != nil {
		t.Error("Load returned a manifest together with an error")
	}
	return se.Problems
}

// oneProblem expects exactly one problem containing fragment at line:col.
func oneProblem(t *testing.T, data []byte, line, col int, fragment string) schema.Problem {
	t.Helper()
	ps := problems(t, data, schema.DefaultLimits)
	if len(ps) != 1 {
		t.Fatalf("got %d problems, want 1: %v", len(ps), ps)
	}
	p := ps[0]
	if p.Pos != (schema.Pos{Line: line, Col: col}) || !strings.Contains(p.Message, fragment) {
		t.Errorf("got %d:%d %q, want %d:%d containing %q", p.Pos.Line, p.Pos.Col, p.Message, line, col, fragment)
	}
	return p
}

// at returns the 1-based line and column of the first occurrence of token on the given
// line of src, so expected columns are read off the text rather than counted by hand.
func at(t *testing.T, src string, line int, token string) schema.Pos {
	t.Helper()
	lines := strings.Split(src, "\n")
	if line < 1 || line > len(lines) {
		t.Fatalf("line %d is outside the source", line)
	}
	i := strings.Index(lines[line-1], token)
	if i < 0 {
		t.Fatalf("line %d %q does not hold %q", line, lines[line-1], token)
	}
	return schema.Pos{Line: line, Col: i + 1}
}

func TestLoadDesignExample(t *testing.T) {
	m := mustLoad(t, "design-example.yaml", readFile(t, "testdata/design-example.yaml"))
	if m.File != "design-example.yaml" || m.Format != 1 || m.Model != "meter-telemetry" {
		t.Errorf("File, Format, Model = %q, %d, %q", m.File, m.Format, m.Model)
	}

	e := m.Engine
	if e.SegmentRows != 8_388_608 { // 8Mi, IEC 80000-13: 8 x 2^20
		t.Errorf("SegmentRows = %d", e.SegmentRows)
	}
	if e.Memory != 68_719_476_736 { // 64GiB, IEC 80000-13: 64 x 2^30
		t.Errorf("Memory = %d", e.Memory)
	}
	if e.Cores != 8 || e.SegmentOverheadMs != 1.5 || e.ScanMBPerS != 200 || e.RefreshParallelism != 4 {
		t.Errorf("Cores, SegmentOverheadMs, ScanMBPerS, RefreshParallelism = %d, %v, %v, %d", e.Cores, e.SegmentOverheadMs, e.ScanMBPerS, e.RefreshParallelism)
	}
	if e.Pos != (schema.Pos{Line: 3, Col: 1}) || e.SegmentRowsPos != (schema.Pos{Line: 4, Col: 17}) || e.MemoryPos != (schema.Pos{Line: 8, Col: 11}) {
		t.Errorf("engine positions = %v %v %v", e.Pos, e.SegmentRowsPos, e.MemoryPos)
	}

	b := m.Budgets
	if b.ScanOverheadMs == nil || *b.ScanOverheadMs != 500 || b.ScanMs == nil || *b.ScanMs != 2000 ||
		b.RefreshMemory == nil || *b.RefreshMemory != 51_539_607_552 { // 48GiB, IEC 80000-13
		t.Errorf("model budgets = %+v", b)
	}

	if len(m.Tables) != 4 {
		t.Fatalf("got %d tables, want 4", len(m.Tables))
	}
	mr := m.Tables[0]
	if mr.Name != "meter_reads" || mr.Rows != 7_200_000_000 || !mr.RowsDeclared || mr.GrowthPerYear != 0.15 { // 7.2G, SI: 7.2 x 10^9
		t.Errorf("meter_reads = %q rows %d declared %v growth %v", mr.Name, mr.Rows, mr.RowsDeclared, mr.GrowthPerYear)
	}
	if mr.Pos != (schema.Pos{Line: 15, Col: 5}) || mr.RowsPos != (schema.Pos{Line: 16, Col: 11}) || mr.Partitions.Pos != (schema.Pos{Line: 18, Col: 5}) {
		t.Errorf("meter_reads positions = %v %v %v", mr.Pos, mr.RowsPos, mr.Partitions.Pos)
	}
	wantTiers := []schema.Tier{
		{Grain: schema.Day, Keep: 14, Pos: schema.Pos{Line: 21, Col: 11}},
		{Grain: schema.Month, Keep: 23, Pos: schema.Pos{Line: 22, Col: 11}},
	}
	if mr.Partitions.Scheme != schema.SchemeTime || fmt.Sprint(mr.Partitions.Tiers) != fmt.Sprint(wantTiers) {
		t.Errorf("meter_reads partitions = %s %v", mr.Partitions.Scheme, mr.Partitions.Tiers)
	}
	if len(mr.Columns) != 3 {
		t.Fatalf("meter_reads has %d columns, want 3", len(mr.Columns))
	}
	ra := mr.Columns[1]
	if ra.Name != "read_at" || ra.Type != "datetime" || ra.Order != schema.Sorted || ra.Distinct != 1_300_000 { // 1.3M, SI
		t.Errorf("read_at = %+v", ra)
	}
	if c := mr.Columns[0]; c.Order != schema.Random || c.Distinct != 400_000 { // order defaults to random
		t.Errorf("meter_id = %+v", c)
	}

	// A table's own budget overrides the model's; the others fall through.
	eff := m.Budgets.Override(mr.Budgets)
	if *eff.ScanOverheadMs != 1500 || *eff.ScanMs != 2000 || *eff.RefreshMemory != 51_539_607_552 {
		t.Errorf("effective budgets of meter_reads = %v %v %v", *eff.ScanOverheadMs, *eff.ScanMs, *eff.RefreshMemory)
	}
	if *m.Budgets.ScanOverheadMs != 500 {
		t.Error("Override changed the model budgets")
	}
	if eff := m.Budgets.Override(m.Tables[1].Budgets); *eff.ScanOverheadMs != 500 {
		t.Errorf("a table without budgets gets scan_overhead_ms %v, want the model's 500", *eff.ScanOverheadMs)
	}

	if tb := m.Tables[1]; tb.Name != "meters" || tb.Rows != 400_000 || tb.Partitions.Scheme != schema.SchemeNone {
		t.Errorf("meters = %+v", tb)
	}
	if tb := m.Tables[2]; tb.Name != "invoices" || tb.Rows != 40_000_000 || tb.Partitions.Scheme != schema.SchemeEven || tb.Partitions.Count != 8 {
		t.Errorf("invoices = %+v", tb)
	}
	bl := m.Tables[3]
	if bl.Name != "billing_lines" || bl.RowsDeclared || bl.Rows != 150_000_000 || bl.Partitions.Scheme != schema.SchemeList {
		t.Errorf("billing_lines = %q declared %v rows %d scheme %s", bl.Name, bl.RowsDeclared, bl.Rows, bl.Partitions.Scheme)
	}
	// Without rows, findings about the row count point at the table.
	if bl.RowsPos != bl.Pos || bl.Pos != (schema.Pos{Line: 34, Col: 5}) {
		t.Errorf("billing_lines RowsPos %v, Pos %v", bl.RowsPos, bl.Pos)
	}
	if len(bl.Partitions.Items) != 2 || bl.Partitions.Items[0].Name != "2025" || bl.Partitions.Items[0].Rows != 70_000_000 ||
		bl.Partitions.Items[1].Name != "2026" || bl.Partitions.Items[1].Rows != 80_000_000 {
		t.Errorf("billing_lines items = %+v", bl.Partitions.Items)
	}
}

func TestLoadDefaults(t *testing.T) {
	m := mustLoad(t, "d.yaml", []byte("format: 1\nmodel: d\nengine: {segment_rows: 1M}\ntables: [{name: a, rows: 1, partitions: {scheme: none}}]\n"))
	e := m.Engine
	if e.Cores != 8 || e.SegmentOverheadMs != 1.5 || e.ScanMBPerS != 200 || e.RefreshParallelism != 8 || e.Memory != 0 {
		t.Errorf("defaults = %+v", e)
	}
	if m.Budgets.ScanOverheadMs != nil || m.Budgets.ScanMs != nil || m.Budgets.RefreshMemory != nil {
		t.Errorf("budgets without a budgets key = %+v", m.Budgets)
	}
	// refresh_parallelism follows the declared cores, not the default.
	m = mustLoad(t, "d.yaml", []byte("format: 1\nmodel: d\nengine: {segment_rows: 1M, cores: 16}\ntables: [{name: a, rows: 1, partitions: {scheme: none}}]\n"))
	if m.Engine.Cores != 16 || m.Engine.RefreshParallelism != 16 {
		t.Errorf("cores 16: Cores %d, RefreshParallelism %d", m.Engine.Cores, m.Engine.RefreshParallelism)
	}
}

// comparable turns a manifest into plain JSON values without positions and file name.
func comparable(t *testing.T, m *schema.Manifest) string {
	t.Helper()
	raw, err := json.Marshal(m)
	if err != nil {
		t.Fatal(err)
	}
	var v any
	if err := json.Unmarshal(raw, &v); err != nil {
		t.Fatal(err)
	}
	var strip func(any)
	strip = func(v any) {
		switch x := v.(type) {
		case map[string]any:
			for k, e := range x {
				if k == "File" || strings.HasSuffix(k, "Pos") {
					delete(x, k)
					continue
				}
				strip(e)
			}
		case []any:
			for _, e := range x {
				strip(e)
			}
		}
	}
	strip(v)
	out, _ := json.MarshalIndent(v, "", "  ")
	return string(out)
}

func TestLoadJSONEqualsYAML(t *testing.T) {
	y := mustLoad(t, "design-example.yaml", readFile(t, "testdata/design-example.yaml"))
	j := mustLoad(t, "design-example.json", readFile(t, "testdata/design-example.json"))
	if a, b := comparable(t, y), comparable(t, j); a != b {
		t.Errorf("JSON and YAML differ:\nYAML: %s\nJSON: %s", a, b)
	}
	// Plain JSON numbers decode to the same counts as suffixed strings.
	const src = `{"format": 1, "model": "n", "engine": {"segment_rows": 8388608, "memory": 68719476736},
		"tables": [{"name": "t", "rows": 7200000000, "partitions": {"scheme": "none"}}]}`
	n := mustLoad(t, "n.json", []byte(src))
	if n.Engine.SegmentRows != 8_388_608 || n.Engine.Memory != 68_719_476_736 || n.Tables[0].Rows != 7_200_000_000 {
		t.Errorf("numbers decoded to %d, %d, %d", n.Engine.SegmentRows, n.Engine.Memory, n.Tables[0].Rows)
	}
	// JSON positions are still line and column of the value.
	if n.Tables[0].RowsPos != at(t, src, 2, "7200000000") {
		t.Errorf("JSON rows position = %v", n.Tables[0].RowsPos)
	}
}

const anchorsManifest = `format: 1
model: anchors
engine: {segment_rows: 1Mi}
tables:
  - &defaults
    name: base
    rows: 10M
    growth_per_year: 0.1
    partitions: &part {scheme: none}
    budgets: {scan_overhead_ms: 100}
  - <<: *defaults
    name: copy
  - name: third
    <<: *defaults
    rows: 5M
  - name: listed
    partitions: {scheme: list, items: [&item {name: a, rows: 1M}, {<<: *item, name: b}]}
  - <<: [{rows: 1k, growth_per_year: 0.5}, *defaults]
    name: multi
    partitions: *part
`

func TestLoadAnchorsAliasesMergeKeys(t *testing.T) {
	m := mustLoad(t, "anchors.yaml", []byte(anchorsManifest))
	byName := map[string]schema.Table{}
	for _, tb := range m.Tables {
		byName[tb.Name] = tb
	}
	if len(byName) != 5 {
		t.Fatalf("tables = %v", byName)
	}
	check := func(name string, rows int64, growth float64, budget float64) {
		t.Helper()
		tb := byName[name]
		got := 0.0
		if tb.Budgets.ScanOverheadMs != nil {
			got = *tb.Budgets.ScanOverheadMs
		}
		if tb.Rows != rows || tb.GrowthPerYear != growth || tb.Partitions.Scheme != schema.SchemeNone || got != budget {
			t.Errorf("%s: rows %d growth %v scheme %q budget %v; want %d %v none %v", name, tb.Rows, tb.GrowthPerYear, tb.Partitions.Scheme, got, rows, growth, budget)
		}
	}
	check("base", 10_000_000, 0.1, 100)
	check("copy", 10_000_000, 0.1, 100) // everything merged, own name
	check("third", 5_000_000, 0.1, 100) // an explicit key beats a merged one, wherever the << stands
	check("multi", 1_000, 0.5, 100)     // in a list of merges, the first mapping wins
	items := byName["listed"].Partitions.Items
	if len(items) != 2 || items[0].Name != "a" || items[1].Name != "b" || items[1].Rows != 1_000_000 {
		t.Errorf("listed items = %+v", items)
	}
	// A table built by merging still points at its own mapping.
	if p := byName["copy"].Pos; p != (schema.Pos{Line: 11, Col: 5}) {
		t.Errorf("copy Pos = %v, want 11:5", p)
	}
}

// A merge key that refers to the mapping holding it used to recurse until the runtime
// killed the process with a stack overflow (not a recoverable panic).
func TestLoadSelfReferentialMerge(t *testing.T) {
	cases := map[string]string{
		"mapping":  "format: 1\nmodel: m\nengine: &e {segment_rows: 1M, <<: *e}\ntables: [{name: a, rows: 1, partitions: {scheme: none}}]\n",
		"sequence": "format: 1\nmodel: m\nengine: {segment_rows: 1M, <<: &s [*s]}\ntables: [{name: a, rows: 1, partitions: {scheme: none}}]\n",
		"nested":   "format: 1\nmodel: m\nengine: &e {segment_rows: 1M, <<: {<<: *e}}\ntables: [{name: a, rows: 1, partitions: {scheme: none}}]\n",
	}
	for name, src := range cases {
		t.Run(name, func(t *testing.T) {
			ps := problems(t, []byte(src), schema.DefaultLimits)
			if len(ps) != 1 || ps[0].Pos.Line != 3 || ps[0].Pos.Col < 1 {
				t.Errorf("problems = %v, want one on line 3", ps)
			}
		})
	}
}

// Merges of merges were not counted against MaxNodes: ten short lines took seconds, and
// every further line nine times as long, without converting a single node.
func TestLoadMergeBomb(t *testing.T) {
	var b strings.Builder
	b.WriteString("format: 1\nmodel: m\nengine: {segment_rows: 1M}\ntables:\n  - &m0 {name: a, rows: 1, partitions: {scheme: none}}\n")
	for i := 1; i <= 12; i++ {
		fmt.Fprintf(&b, "  - &m%d {<<: [", i)
		for j := range 9 {
			if j > 0 {
				b.WriteString(", ")
			}
			fmt.Fprintf(&b, "*m%d", i-1)
		}
		b.WriteString("]}\n")
	}
	ps := problems(t, []byte(b.String()), schema.DefaultLimits)
	if len(ps) != 1 || !strings.Contains(ps[0].Message, "aliases expand to more than 100,000 nodes") {
		t.Errorf("problems = %v", ps)
	}
}

// billionLaughs is nine levels of nine aliases: 9^9 (387,420,489) nodes once expanded.
func billionLaughs() []byte {
	var b strings.Builder
	b.WriteString("format: 1\nmodel: &l0 [lol, lol, lol, lol, lol, lol, lol, lol, lol]\nengine:\n")
	for i := 1; i <= 9; i++ {
		fmt.Fprintf(&b, "  l%d: &l%d [", i, i)
		for j := range 9 {
			if j > 0 {
				b.WriteString(", ")
			}
			fmt.Fprintf(&b, "*l%d", i-1)
		}
		b.WriteString("]\n")
	}
	b.WriteString("tables: [{name: a, rows: 1, partitions: {scheme: none}}]\n")
	return []byte(b.String())
}

func TestLoadAliasBomb(t *testing.T) {
	data := billionLaughs()
	// A small node budget shows the stop comes from the limit, at a position in the file.
	ps := problems(t, data, schema.Limits{MaxFileBytes: 1 << 20, MaxDepth: 64, MaxNodes: 10_000})
	if len(ps) != 1 || !strings.Contains(ps[0].Message, "more than 10,000 nodes") || ps[0].Pos.Line < 1 || ps[0].Pos.Col < 1 {
		t.Errorf("problems = %v", ps)
	}

	// The default limits stop it too, with bounded memory.
	var before, after runtime.MemStats
	runtime.ReadMemStats(&before)
	ps = problems(t, data, schema.DefaultLimits)
	runtime.ReadMemStats(&after)
	if len(ps) != 1 || !strings.Contains(ps[0].Message, "aliases expand to more than 100,000 nodes") {
		t.Errorf("problems = %v", ps)
	}
	if alloc := after.TotalAlloc - before.TotalAlloc; alloc > 4<<30 {
		t.Errorf("Load allocated %d MiB", alloc>>20)
	}
}

func TestLoadDeepNesting(t *testing.T) {
	depth := schema.DefaultLimits.MaxDepth
	// The root sequence is level 0 at column 1; the first level past the limit opens at
	// column depth+2.
	src := strings.Repeat("[", 200) + strings.Repeat("]", 200) + "\n"
	oneProblem(t, []byte(src), 1, depth+2, "nesting deeper than "+strconv.Itoa(depth))
	// Inside a manifest, and as block mappings on many lines.
	var b strings.Builder
	b.WriteString("format: 1\nmodel: m\nengine:\n")
	for i := range 200 {
		fmt.Fprintf(&b, "%sk%d:\n", strings.Repeat(" ", 2*(i+1)), i)
	}
	ps := problems(t, []byte(b.String()), schema.DefaultLimits)
	if len(ps) != 1 || !strings.Contains(ps[0].Message, "nesting deeper") {
		t.Fatalf("problems = %v", ps)
	}
	// engine's value is level 1 and k{i}'s value level i+2; the first level past the limit
	// is a block mapping, positioned at its first key: k{depth} on line depth+4.
	if want := (schema.Pos{Line: depth + 4, Col: 2*(depth+1) + 1}); ps[0].Pos != want {
		t.Errorf("block nesting reported at %v, want %v", ps[0].Pos, want)
	}
	// Far deeper than the YAML parser allows: still an error, not a crash.
	deep := strings.Repeat("[", 100_000) + strings.Repeat("]", 100_000)
	ps = problems(t, []byte(deep), schema.DefaultLimits)
	if len(ps) != 1 || ps[0].Pos.Line != 1 {
		t.Errorf("problems = %v", ps)
	}
}

func TestLoadFileTooLarge(t *testing.T) {
	data := readFile(t, "testdata/design-example.yaml")
	lim := schema.DefaultLimits
	lim.MaxFileBytes = len(data) - 1
	ps := problems(t, data, lim)
	if len(ps) != 1 || !strings.Contains(ps[0].Message, fmt.Sprintf("file is %d bytes, above the limit of %d", len(data), lim.MaxFileBytes)) {
		t.Errorf("problems = %v", ps)
	}
	// Exactly at the limit is fine.
	lim.MaxFileBytes = len(data)
	if _, err := schema.Load("x", data, lim); err != nil {
		t.Errorf("a file of exactly MaxFileBytes: %v", err)
	}
	// The default limit refuses a big file before parsing it.
	big := append(bytes.Repeat([]byte("# padding\n"), schema.DefaultLimits.MaxFileBytes/10), data...)
	oneProblem(t, big, 1, 1, fmt.Sprintf("file is %d bytes", len(big)))
}

func TestLoadEncodings(t *testing.T) {
	data := readFile(t, "testdata/design-example.yaml")

	// A UTF-8 byte order mark is allowed and moves no position.
	m := mustLoad(t, "bom.yaml", append([]byte{0xEF, 0xBB, 0xBF}, data...))
	if m.Engine.SegmentRows != 8_388_608 || m.Engine.SegmentRowsPos != (schema.Pos{Line: 4, Col: 17}) {
		t.Errorf("with a BOM: SegmentRows %d at %v", m.Engine.SegmentRows, m.Engine.SegmentRowsPos)
	}

	units := utf16.Encode([]rune(string(data)))
	le := binary.LittleEndian.AppendUint16(nil, 0xFEFF)
	be := binary.BigEndian.AppendUint16(nil, 0xFEFF)
	for _, u := range units {
		le = binary.LittleEndian.AppendUint16(le, u)
		be = binary.BigEndian.AppendUint16(be, u)
	}
	oneProblem(t, le, 1, 1, "UTF-16; save it as UTF-8")
	oneProblem(t, be, 1, 1, "UTF-16; save it as UTF-8")
	// Without a byte order mark UTF-16 is full of NUL bytes: not text.
	oneProblem(t, le[2:], 1, 2, "not UTF-8 text") // the NUL after the first letter
	// Two byte order marks: the parser would read "odel" for "model" on the next line.
	oneProblem(t, []byte("\uFEFF\uFEFFformat: 1\nmodel: m\nengine: {segment_rows: 1M}\ntables: []\n"), 1, 1, "more than one byte order mark")

	garbage := []byte{0x7F, 'E', 'L', 'F', 2, 1, 1, 0, 0, 0, 0xFF, 0xFE, 0x80, '\n', 0}
	oneProblem(t, garbage, 1, 8, "not UTF-8 text") // the first NUL, the 8th byte
	// A NUL byte further down is reported at its own line and column.
	oneProblem(t, []byte("format: 1\nmodel: m\nengine:\x00\n"), 3, 8, "not UTF-8 text")

	// Invalid UTF-8 (a Latin-1 byte) refuses the file with one problem at that byte.
	ps := problems(t, []byte("format: 1\nmodel: caf\xe9\nengine: {segment_rows: 1M}\n"), schema.DefaultLimits)
	if len(ps) != 1 || !strings.Contains(ps[0].Message, "not UTF-8 text") || ps[0].Pos != (schema.Pos{Line: 2, Col: 11}) {
		t.Errorf("invalid UTF-8: %v", ps)
	}
}

func TestLoadEmpty(t *testing.T) {
	for _, src := range []string{"", "\n", "   \n\n", "# only a comment", "# a comment\n\n# and another\n", "\xEF\xBB\xBF"} {
		oneProblem(t, []byte(src), 1, 1, "file is empty")
	}
}

// Every schema error is reported, each where it is, sorted by line then column.
func TestLoadReportsEveryProblem(t *testing.T) {
	const src = `format: 1
model: ""
engine:
  segment_rows: 8Mi
  cores: 9000
tables:
  - name: t
    rows: 10M
    partitions:
      scheme: time
      tiers:
        - {grain: hour, keep: 0}
    columns:
      - {name: c, type: int64, sise: 3}
`
	want := []struct {
		pos      schema.Pos
		fragment string
	}{
		{at(t, src, 2, `""`), "/model: must not be empty"},
		{at(t, src, 5, "9000"), "/engine/cores: must be <= 4096"},
		{at(t, src, 12, "hour"), "hour is not one of day, week, month, quarter, year"},
		{at(t, src, 12, "0}"), "/keep: must be >= 1"},
		{at(t, src, 14, "sise"), `unknown key "sise"`},
	}
	ps := problems(t, []byte(src), schema.DefaultLimits)
	if len(ps) != len(want) {
		t.Fatalf("got %d problems, want %d:\n%v", len(ps), len(want), ps)
	}
	for i, w := range want {
		if ps[i].Pos != w.pos || !strings.Contains(ps[i].Text(), w.fragment) {
			t.Errorf("problem %d = %v %q, want %v containing %q", i, ps[i].Pos, ps[i].Text(), w.pos, w.fragment)
		}
	}
}

func TestLoadUnknownKeys(t *testing.T) {
	const src = `format: 1
model: m
colour: blue
engine:
  segment_rows: 1M
  spare:
    nested: 1
tables:
  - name: t
    rows: 1
    partitions: {scheme: none, sheme: even}
    columns:
      - name: c
        type: int64
        distinc: 4
`
	want := []struct {
		pos     schema.Pos
		key     string
		allowed string
	}{
		{at(t, src, 3, "colour"), "colour", "budgets, engine, format, model, tables"},
		{at(t, src, 6, "spare"), "spare", "cores, max_segment_rows, memory, profile, refresh_parallelism, refresh_rows_per_s, scan_mb_per_s, segment_overhead_ms, segment_rows"},
		{at(t, src, 11, "sheme"), "sheme", "count, items, scheme, tiers"},
		{at(t, src, 15, "distinc"), "distinc", "avg_length, distinct, encoded_bytes, name, order, run_length, type"},
	}
	ps := problems(t, []byte(src), schema.DefaultLimits)
	if len(ps) != len(want) {
		t.Fatalf("got %d problems, want %d:\n%v", len(ps), len(want), ps)
	}
	for i, w := range want {
		msg := fmt.Sprintf("unknown key %q; allowed here: %s", w.key, w.allowed)
		if ps[i].Pos != w.pos || ps[i].Message != msg {
			t.Errorf("problem %d = %v %q, want %v %q", i, ps[i].Pos, ps[i].Message, w.pos, msg)
		}
	}
}

// checkOutcome asserts the contract every input must meet: a manifest, or an *Error whose
// problems all have a message and a position inside the file.
func checkOutcome(t testing.TB, name string, data []byte) {
	t.Helper()
	defer func() {
		if r := recover(); r != nil {
			t.Fatalf("%s: Load panicked: %v", name, r)
		}
	}()
	m, err := schema.Load(name, data, schema.DefaultLimits)
	if err == nil {
		if m == nil {
			t.Fatalf("%s: Load returned neither a manifest nor an error", name)
		}
		return
	}
	var se *schema.Error
	if !errors.As(err, &se) {
		t.Fatalf("%s: Load error is %T: %v", name, err, err)
	}
	if m != nil {
		t.Errorf("%s: Load returned a manifest and an error", name)
	}
	if len(se.Problems) == 0 {
		t.Fatalf("%s: *Error without problems", name)
	}
	// YAML 1.2 (section 5.4) breaks lines at CR LF, a lone CR and LF.
	lines := bytes.Count(bytes.ReplaceAll(bytes.ReplaceAll(data, []byte("\r\n"), []byte("\n")), []byte("\r"), []byte("\n")), []byte("\n")) + 1
	for _, p := range se.Problems {
		if p.Pos.Line < 1 || p.Pos.Col < 1 || p.Pos.Line > lines || p.Message == "" {
			t.Errorf("%s: problem at %d:%d (file has %d lines): %q", name, p.Pos.Line, p.Pos.Col, lines, p.Message)
		}
	}
}

func TestLoadNeverPanicsOnTestdata(t *testing.T) {
	n := 0
	for _, root := range []string{"testdata", filepath.Join("..", "testdata")} {
		err := filepath.WalkDir(root, func(path string, d fs.DirEntry, err error) error {
			if err != nil || !d.Type().IsRegular() {
				return err
			}
			checkOutcome(t, path, readFile(t, path))
			n++
			return nil
		})
		if err != nil {
			t.Fatal(err)
		}
	}
	if n < 10 {
		t.Errorf("walked only %d files", n)
	}
}

func TestLoadNeverPanicsOnTruncation(t *testing.T) {
	for _, path := range []string{"testdata/design-example.yaml", "testdata/design-example.json"} {
		data := readFile(t, path)
		for i := range len(data) + 1 {
			// The name keeps the extension, so the JSON file is read as JSON.
			checkOutcome(t, fmt.Sprintf("%s-%d%s", path, i, filepath.Ext(path)), data[:i])
		}
	}
}

func FuzzLoad(f *testing.F) {
	for _, root := range []string{"testdata", filepath.Join("..", "testdata")} {
		_ = filepath.WalkDir(root, func(path string, d fs.DirEntry, err error) error {
			if err == nil && d.Type().IsRegular() && !strings.Contains(path, "fuzz") {
				f.Add(readFile(f, path))
			}
			return nil
		})
	}
	f.Add([]byte(anchorsManifest))
	f.Fuzz(func(t *testing.T, data []byte) {
		checkOutcome(t, "fuzz.yaml", data)
		checkOutcome(t, "fuzz.json", data) // the strict JSON reader
	})
}

// Positions count lines as YAML 1.2 (section 5.4) does, at CR LF, a lone CR and LF: the
// same manifest saved with any of them gets its problems at the same line and column.
func TestPositionsAcrossLineBreaks(t *testing.T) {
	for _, src := range []string{"format: 1\nmodel: m\n\tengine: {}\n", "format: 1\nmodel: \"m\x00\"\n"} {
		var want string
		for _, br := range []string{"\n", "\r\n", "\r"} {
			_, err := schema.Load("m.yaml", []byte(strings.ReplaceAll(src, "\n", br)), schema.DefaultLimits)
			if err == nil {
				t.Fatalf("%q: no error", src)
			}
			if br == "\n" {
				want = err.Error()
			} else if err.Error() != want {
				t.Errorf("%q with %q line breaks: %v, want %v", src, br, err, want)
			}
		}
	}
}

// A segment capacity above the engine's largest is refused where it is written.
func TestSegmentRowsAboveMaximum(t *testing.T) {
	src := "format: 1\nmodel: m\nengine: {segment_rows: 64Mi, max_segment_rows: 32Mi}\ntables: [{name: t, rows: 1, partitions: {scheme: none}}]\n"
	ps := problems(t, []byte(src), schema.DefaultLimits)
	if len(ps) != 1 || ps[0].Pos.Line != 3 || !strings.Contains(ps[0].Message, "segment_rows 67,108,864 is above max_segment_rows 33,554,432") {
		t.Fatalf("problems %+v", ps)
	}
	m, err := schema.Load("m.yaml", []byte("format: 1\nmodel: m\nengine: {segment_rows: 8Mi}\ntables: [{name: t, rows: 1, partitions: {scheme: none}}]\n"), schema.DefaultLimits)
	if err != nil || m.Engine.MaxSegmentRows != schema.DefaultMaxSegmentRows {
		t.Fatalf("default maximum %v, err %v", m.Engine.MaxSegmentRows, err)
	}
}
