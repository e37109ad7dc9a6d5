package yamledit

import (
	"errors"
	"fmt"
	"strings"
	"testing"
)

type edit func(d *Doc) error

func set(text string, path ...Step) edit {
	return func(d *Doc) error { return d.SetText(text, path...) }
}
func del(path ...Step) edit { return func(d *Doc) error { return d.Delete(path...) } }
func appendItem(text string, path ...Step) edit {
	return func(d *Doc) error {
		v, err := Parsed(text)
		if err != nil {
			return err
		}
		return d.Append(v, path...)
	}
}

var table = func(name string) Step { return Where("table "+name, Field("name", name)) }

func TestEdits(t *testing.T) {
	cases := []struct {
		name, in string
		json     bool
		edit     edit
		want     string
	}{
		{"scalar keeps its comment", "a: 1 # one\nb: 2\n", false, set("5", Key("a")), "a: 5 # one\nb: 2\n"},
		{"flow value stays flow", "t:\n  partitions: {scheme: even, count: 40} # want: x\n", false,
			set("{scheme: none}", Key("t"), Key("partitions")), "t:\n  partitions: {scheme: none} # want: x\n"},
		{"key inside flow", "p: {scheme: even, count: 40}\n", false, set("5", Key("p"), Key("count")), "p: {scheme: even, count: 5}\n"},
		{"new key in block mapping", "engine:\n  cores: 4 # c\nx: 1\n", false, set("8Mi", Key("engine"), Key("segment_rows")),
			"engine:\n  cores: 4 # c\n  segment_rows: 8Mi\nx: 1\n"},
		{"new key in flow mapping", "engine: {cores: 4}\n", false, set("8Mi", Key("engine"), Key("segment_rows")), "engine: {cores: 4, segment_rows: 8Mi}\n"},
		{"block replaced by block", "p:\n  scheme: time\n  tiers:\n    - {grain: day, keep: 730} # daily\nq: 1\n", false,
			set("- {grain: day, keep: 14}\n- {grain: month, keep: 24}", Key("p"), Key("tiers")),
			"p:\n  scheme: time\n  tiers:\n    - {grain: day, keep: 14}\n    - {grain: month, keep: 24} # daily\nq: 1\n"},
		{"block replaced by inline", "p:\n  scheme: list\n  items:\n    - a\n    - b\nq: 1\n", false,
			set("{scheme: none}", Key("p")), "p: {scheme: none}\nq: 1\n"},
		{"item by predicate", "tables:\n  - name: a\n    rows: 1\n  - name: b # bee\n    rows: 2\n", false,
			set("3", Key("tables"), table("b"), Key("rows")), "tables:\n  - name: a\n    rows: 1\n  - name: b # bee\n    rows: 3\n"},
		{"crlf", "a: 1\r\nb:\r\n  c: 2\r\n", false, set("x", Key("b"), Key("d")), "a: 1\r\nb:\r\n  c: 2\r\n  d: x\r\n"},
		{"bom", "\ufeffa: 1\nb: é\n", false, set("2", Key("b")), "\ufeffa: 1\nb: 2\n"},
		{"multibyte column", "ééé: x # é\nb: 1\n", false, set("y", Key("ééé")), "ééé: y # é\nb: 1\n"},
		{"empty value", "a:\nb: 1\n", false, set("3", Key("a")), "a: 3\nb: 1\n"},
		{"quoted value", "a: 'it''s' # q\n", false, set("\"yes\"", Key("a")), "a: \"yes\" # q\n"},
		{"string that needs quotes", "a: b\n", false, set("'5'", Key("a")), "a: '5'\n"},
		{"string that needs quotes from Go", "a: b\n", false, func(d *Doc) error { return d.SetScalar("5", Key("a")) }, "a: \"5\"\n"},
		{"block mapping from Go", "a: 1\nb: 2\n", false, func(d *Doc) error {
			v, _ := Parsed("{x: 1, y: [p, q]}")
			v.Style = 0
			return d.Set(v, Key("b"))
		}, "a: 1\nb: {x: 1, y: [p, q]}\n"},
		{"block scalar", "a: |\n  one\n  two\nb: 1\n", false, set("x", Key("a")), "a: x\nb: 1\n"},
		{"multi-line plain", "a: one\n  two\nb: 1\n", false, set("x", Key("a")), "a: x\nb: 1\n"},
		{"unused anchor", "a: &A 1\nb: 2\n", false, set("3", Key("a")), "a: 3\nb: 2\n"},
		{"delete key line", "p:\n  scheme: even\n  count: 4 # c\n  x: 1\n", false, del(Key("p"), Key("count")), "p:\n  scheme: even\n  x: 1\n"},
		{"delete first key of item", "- name: a\n  rows: 1\n", false, del(Index(0), Key("name")), "- rows: 1\n"},
		{"delete in flow", "p: {scheme: even, count: 4}\n", false, del(Key("p"), Key("count")), "p: {scheme: even}\n"},
		{"delete first in flow", "p: {count: 4, scheme: even}\n", false, del(Key("p"), Key("count")), "p: {scheme: even}\n"},
		{"delete item crlf", "s:\r\n  - a\r\n  - b\r\n", false, del(Key("s"), Index(0)), "s:\r\n  - b\r\n"},
		{"append block item", "tables:\n  - name: a\n    rows: 1 # r\nz: 1\n", false, appendItem("name: b\nrows: 2", Key("tables")),
			"tables:\n  - name: a\n    rows: 1 # r\n  - name: b\n    rows: 2\nz: 1\n"},
		{"append flow item to block", "tables:\n  - name: a\n", false, appendItem("{name: b, rows: 2}", Key("tables")),
			"tables:\n  - name: a\n  - {name: b, rows: 2}\n"},
		{"append unindented item", "tables:\n- name: a\n", false, appendItem("name: b", Key("tables")), "tables:\n- name: a\n- name: b\n"},
		{"append flow item", "s: [a, b]\n", false, appendItem("c", Key("s")), "s: [a, b, c]\n"},
		{"json scalar", "{\"a\": 1, \"b\": \"x\\/y\"}", true, set("5", Key("a")), "{\"a\": 5, \"b\": \"x\\/y\"}"},
		{"json string word", "{\"a\": 1}", true, set("8Mi", Key("a")), "{\"a\": \"8Mi\"}"},
		{"json object inline", "{\"p\": {\"scheme\": \"even\", \"count\": 4}}", true, set("{scheme: none}", Key("p")), "{\"p\": {\"scheme\": \"none\"}}"},
		{"json object multi-line", "{\n  \"p\": {\n    \"scheme\": \"even\"\n  }\n}\n", true, set("{scheme: time, tiers: [{grain: day, keep: 3}]}", Key("p")),
			"{\n  \"p\": {\n    \"scheme\": \"time\",\n    \"tiers\": [\n      {\n        \"grain\": \"day\",\n        \"keep\": 3\n      }\n    ]\n  }\n}\n"},
		{"json new key", "{\n  \"e\": {\n    \"cores\": 4\n  }\n}", true, set("1000", Key("e"), Key("segment_rows")), "{\n  \"e\": {\n    \"cores\": 4,\n    \"segment_rows\": 1000\n  }\n}"},
		{"json new key inline", "{\"e\": {\"cores\": 4}}", true, set("1000", Key("e"), Key("segment_rows")), "{\"e\": {\"cores\": 4, \"segment_rows\": 1000}}"},
		{"json delete", "{\"p\": {\"scheme\": \"even\", \"count\": 4}}", true, del(Key("p"), Key("count")), "{\"p\": {\"scheme\": \"even\"}}"},
		{"json append", "{\"s\": [1, 2]}", true, appendItem("3", Key("s")), "{\"s\": [1, 2, 3]}"},
		{"json crlf", "{\r\n  \"a\": {\r\n    \"b\": 1\r\n  }\r\n}\r\n", true, set("{c: 2, d: 3}", Key("a")), "{\r\n  \"a\": {\r\n    \"c\": 2,\r\n    \"d\": 3\r\n  }\r\n}\r\n"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			d, err := Parse([]byte(c.in), c.json)
			if err != nil {
				t.Fatal(err)
			}
			if err := c.edit(d); err != nil {
				t.Fatal(err)
			}
			if got := string(d.Bytes()); got != c.want {
				t.Errorf("got\n%q\nwant\n%q", got, c.want)
			}
			checkOutside(t, []byte(c.in), d)
		})
	}
}

// checkOutside holds every byte outside the recorded changes equal.
func checkOutside(t *testing.T, in []byte, d *Doc) {
	t.Helper()
	out := d.Bytes()
	po, pn := 0, 0
	for _, c := range d.Changes() {
		if c.Old[0]-po != c.New[0]-pn || string(in[po:c.Old[0]]) != string(out[pn:c.New[0]]) {
			t.Fatalf("bytes before change %v differ", c)
		}
		po, pn = c.Old[1], c.New[1]
	}
	if string(in[po:]) != string(out[pn:]) {
		t.Fatalf("bytes after the last change differ:\n%q\n%q", in[po:], out[pn:])
	}
}

func TestRefusals(t *testing.T) {
	cases := []struct {
		name, in string
		edit     edit
		want     string
	}{
		{"alias", "a: &A {x: 1}\nb: *A\n", set("2", Key("b"), Key("x")), `"b" is an alias of &A (line 1)`},
		{"used anchor", "a: &A {x: 1}\nb: *A\n", set("2", Key("a"), Key("x")), `"a" is the anchor &A, also used at line 2`},
		{"anchor inside a replaced value", "a: {k: &A 1}\nb: *A\n", set("2", Key("a")), "also used at line 2"},
		{"merged key", "base: &B {p: {x: 1}}\nt:\n  <<: *B\n", set("2", Key("t"), Key("p"), Key("x")), "comes from a merge key"},
		{"not a mapping", "a: [1]\n", set("2", Key("a"), Key("b")), `"a" is not a mapping`},
		{"no such item", "s: [1]\n", set("2", Key("s"), Index(3)), "has no item 3"},
		{"only key", "a:\n  b: 1\n", del(Key("a"), Key("b")), "only entry"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			d, err := Parse([]byte(c.in), false)
			if err != nil {
				t.Fatal(err)
			}
			err = c.edit(d)
			var e *Error
			if !errors.As(err, &e) || !strings.Contains(e.Msg, c.want) {
				t.Fatalf("got %v, want an error with %q", err, c.want)
			}
			if string(d.Bytes()) != c.in {
				t.Fatalf("a refused edit changed the document: %q", d.Bytes())
			}
		})
	}
}

func TestMergedKeyOverride(t *testing.T) {
	// Setting a key a merge key supplies writes it in the mapping itself: own keys win.
	d, err := Parse([]byte("base: &B {x: 1}\nt:\n  <<: *B\n  y: 2\n"), false)
	if err != nil {
		t.Fatal(err)
	}
	if err := d.SetScalar(5, Key("t"), Key("x")); err != nil {
		t.Fatal(err)
	}
	if got := string(d.Bytes()); got != "base: &B {x: 1}\nt:\n  <<: *B\n  y: 2\n  x: 5\n" {
		t.Fatalf("%q", got)
	}
}

// In a batch every path refers to the document as it was: removing item 1 leaves item 2
// at index 2; the edits land at once and are read back once.
func TestBatch(t *testing.T) {
	src := "a: [x, y, z]\nb:\n  - p\n  - q # q\n  - r\nc: {k: 1}\n"
	d, err := Parse([]byte(src), false)
	if err != nil {
		t.Fatal(err)
	}
	d.Batch()
	for _, e := range []error{
		d.Delete(Key("b"), Index(1)),
		d.SetScalar("R", Key("b"), Index(2)),
		d.SetScalar(2, Key("c"), Key("k")),
		d.SetScalar(3, Key("c"), Key("n")),
		d.Append(Scalar("w"), Key("a")),
		d.Delete(Key("a"), Index(0)),
	} {
		if e != nil {
			t.Fatal(e)
		}
	}
	if string(d.Bytes()) != src {
		t.Fatal("a batch changed the document before Commit")
	}
	if err := d.Commit(); err != nil {
		t.Fatal(err)
	}
	want := "a: [y, z, w]\nb:\n  - p\n  - R\nc: {k: 2, n: 3}\n"
	if got := string(d.Bytes()); got != want {
		t.Fatalf("got\n%q\nwant\n%q", got, want)
	}
	checkOutside(t, []byte(src), d)
	// Overlapping edits are refused, and nothing lands.
	d.Batch()
	d.SetScalar(1, Key("c"))
	d.SetScalar(2, Key("c"), Key("k"))
	if err := d.Commit(); err == nil || string(d.Bytes()) != want {
		t.Fatalf("overlapping edits: %v\n%s", err, d.Bytes())
	}
}

// Upsert replaces the item a predicate picks, or appends one: "add or replace table x".
func TestUpsert(t *testing.T) {
	cases := []struct {
		name, in string
		json     bool
		table    string
		want     string
	}{
		{"replace", "tables:\n  - name: a # first\n    rows: 1\n  - name: b\n    rows: 2\nz: 1\n", false, "a",
			"tables:\n  - name: a\n    rows: 9\n  - name: b\n    rows: 2\nz: 1\n"}, // comments inside a replaced item go with it
		{"append", "tables:\n  - name: a\n    rows: 1\nz: 1\n", false, "c",
			"tables:\n  - name: a\n    rows: 1\n  - name: c\n    rows: 9\nz: 1\n"},
		{"json replace", "{\"tables\": [{\"name\": \"a\", \"rows\": 1}]}", true, "a", "{\"tables\": [{\"name\": \"a\", \"rows\": 9}]}"},
		{"json append", "{\"tables\": [\n  {\"name\": \"a\", \"rows\": 1}\n]}", true, "c", "{\"tables\": [\n  {\"name\": \"a\", \"rows\": 1},\n  {\"name\": \"c\", \"rows\": 9}\n]}"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			d, err := Parse([]byte(c.in), c.json)
			if err != nil {
				t.Fatal(err)
			}
			v, _ := Parsed("name: " + c.table + "\nrows: 9")
			if err := d.Upsert(v, "table "+c.table, Field("name", c.table), Key("tables")); err != nil {
				t.Fatal(err)
			}
			if got := string(d.Bytes()); got != c.want {
				t.Errorf("got\n%q\nwant\n%q", got, c.want)
			}
			checkOutside(t, []byte(c.in), d)
		})
	}
}

// A second byte order mark after the first is refused at 1:1: the YAML parser drops it
// without counting a column (so every span on line 1 would be one character off, and
// deleting the first key took the mark with it), and a third makes it drop the first
// character of every later line ("model" reads "odel").
func TestExtraByteOrderMarks(t *testing.T) {
	for _, c := range []struct {
		in   string
		json bool
	}{
		{bomBytes + bomBytes + "format: 1\nmodel: m\n", false},
		{bomBytes + bomBytes + bomBytes + "format: 1\nmodel: m\n", false},
		{bomBytes + bomBytes + "# head\nformat: 1\n", false},
		{bomBytes + bomBytes + "{\"format\": 1}", true},
	} {
		d, err := Parse([]byte(c.in), c.json)
		var e *Error
		if !errors.As(err, &e) || e.Line != 1 || e.Col != 1 || !strings.Contains(e.Msg, "byte order mark") {
			got := ""
			if d != nil {
				v, _ := Value(d.Root())
				got = fmt.Sprintf(" (reads %v)", v)
			}
			t.Errorf("%q: %v%s; want a refusal at 1:1 naming the byte order mark", c.in, err, got)
		}
	}
}
