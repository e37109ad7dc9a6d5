package baseline

import (
	"reflect"
	"strings"
	"testing"

	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

// repoURI stands in for the run's path mapping: checkouts live under different roots,
// the repository path is what a baseline must record.
func repoURI(file string) string {
	file = strings.TrimPrefix(file, "/ci/checkout/")
	return strings.TrimPrefix(file, "/home/dev/repo/")
}

func identity(file string) string { return file }

func finding(rule, file, table, subject, msg string, line int) rules.Finding {
	return rules.Finding{
		Rule:     rule,
		Severity: rules.Warning,
		File:     file,
		Pos:      schema.Pos{Line: line, Col: 3},
		Table:    table,
		Subject:  subject,
		Message:  msg,
	}
}

const retry = "; write the file with `scangate baseline write`"

func TestConstants(t *testing.T) {
	// Both are on disk in adopting repositories; changing either breaks them.
	if SchemaVersion != 1 {
		t.Errorf("SchemaVersion = %d, want 1", SchemaVersion)
	}
	if DefaultFile != ".scangate-baseline.json" {
		t.Errorf("DefaultFile = %q", DefaultFile)
	}
}

func TestBuildExcludesSchemaFindings(t *testing.T) {
	in := []rules.Finding{
		finding(rules.Schema.ID, "/ci/checkout/models/a.yaml", "", "/tables/0/rows", "rows must be a count", 4),
		finding("scan-time", "/ci/checkout/models/a.yaml", "orders", "scan", "scan takes 40 s", 9),
		finding(rules.Schema.ID, "/ci/checkout/models/b.yaml", "", "", "file is empty", 1),
	}
	b := Build(in, repoURI)
	if b.SchemaVersion != SchemaVersion {
		t.Errorf("SchemaVersion = %d, want %d", b.SchemaVersion, SchemaVersion)
	}
	if len(b.Entries) != 1 || b.Entries[0].Rule != "scan-time" {
		t.Fatalf("entries = %+v, want only the scan-time finding", b.Entries)
	}

	// Only schema findings: an empty list, not nil, so the file says "entries": [].
	only := Build(in[:1], repoURI)
	if only.Entries == nil || len(only.Entries) != 0 {
		t.Errorf("entries = %#v, want an empty non-nil slice", only.Entries)
	}
}

func TestBuildOneEntryPerFingerprint(t *testing.T) {
	in := []rules.Finding{
		finding("scan-time", "/ci/checkout/models/a.yaml", "orders", "scan", "scan takes 40 s", 9),
		// Same rule, path, table and subject on another line with other numbers: same fingerprint.
		finding("scan-time", "/ci/checkout/models/a.yaml", "orders", "scan", "scan takes 41 s", 30),
		// Same repository path from another checkout root: still the same fingerprint.
		finding("scan-time", "/home/dev/repo/models/a.yaml", "orders", "scan", "scan takes 42 s", 2),
		// Only the subject differs: a finding of its own.
		finding("scan-time", "/ci/checkout/models/a.yaml", "orders", "refresh", "refresh takes 9 s", 12),
	}
	b := Build(in, repoURI)
	if len(b.Entries) != 2 {
		t.Fatalf("got %d entries, want 2: %+v", len(b.Entries), b.Entries)
	}
	byFP := map[string]Entry{}
	for _, e := range b.Entries {
		byFP[e.Fingerprint] = e
	}
	scan := byFP[rules.Fingerprint(in[0], "models/a.yaml")]
	// The first finding of a fingerprint is the one recorded.
	if scan.Message != "scan takes 40 s" {
		t.Errorf("scan entry = %+v, want the first finding's message", scan)
	}
	if _, ok := byFP[rules.Fingerprint(in[3], "models/a.yaml")]; !ok {
		t.Errorf("refresh finding missing from %+v", b.Entries)
	}
}

func TestBuildSortOrder(t *testing.T) {
	in := []rules.Finding{
		finding("scan-time", "/ci/checkout/models/b.yaml", "t", "s", "m", 1),
		finding("scan-time", "/ci/checkout/models/a.yaml", "z", "s", "m", 1),
		finding("row-count-mismatch", "/ci/checkout/models/a.yaml", "m", "s", "m", 1),
		finding("scan-time", "/ci/checkout/models/a.yaml", "m", "s", "m", 1),
		finding("unused-waiver", "/ci/checkout/models/a.yaml", "", "w", "m", 1),
		// Same file, table and rule: only the fingerprint can order these.
		finding("partition-count", "/ci/checkout/models/c.yaml", "t", "one", "m", 1),
		finding("partition-count", "/ci/checkout/models/c.yaml", "t", "two", "m", 1),
		finding("partition-count", "/ci/checkout/models/c.yaml", "t", "three", "m", 1),
	}
	b := Build(in, repoURI)
	type key struct{ file, table, rule string }
	want := []key{
		{"models/a.yaml", "", "unused-waiver"},
		{"models/a.yaml", "m", "row-count-mismatch"},
		{"models/a.yaml", "m", "scan-time"},
		{"models/a.yaml", "z", "scan-time"},
		{"models/b.yaml", "t", "scan-time"},
		{"models/c.yaml", "t", "partition-count"},
		{"models/c.yaml", "t", "partition-count"},
		{"models/c.yaml", "t", "partition-count"},
	}
	var got []key
	for _, e := range b.Entries {
		got = append(got, key{e.File, e.Table, e.Rule})
	}
	if !reflect.DeepEqual(got, want) {
		t.Fatalf("order:\n got %v\nwant %v", got, want)
	}
	for i := 5; i < 7; i++ {
		if b.Entries[i].Fingerprint >= b.Entries[i+1].Fingerprint {
			t.Errorf("entries %d and %d not ordered by fingerprint: %s, %s", i, i+1, b.Entries[i].Fingerprint, b.Entries[i+1].Fingerprint)
		}
	}

	// The order of the findings does not show in the file.
	rev := make([]rules.Finding, len(in))
	for i, f := range in {
		rev[len(in)-1-i] = f
	}
	if r := Build(rev, repoURI); !reflect.DeepEqual(r, b) {
		t.Errorf("reversed input gives another baseline:\n%+v\n%+v", r.Entries, b.Entries)
	}
}

func TestBuildUsesURI(t *testing.T) {
	f := finding("scan-time", "/ci/checkout/models/a.yaml", "orders", "scan", "scan takes 40 s", 9)
	var asked []string
	uri := func(file string) string {
		asked = append(asked, file)
		return repoURI(file)
	}
	b := Build([]rules.Finding{f}, uri)
	if !reflect.DeepEqual(asked, []string{"/ci/checkout/models/a.yaml"}) {
		t.Errorf("uri called with %q", asked)
	}
	want := Entry{
		Fingerprint: rules.Fingerprint(f, "models/a.yaml"),
		Rule:        "scan-time",
		File:        "models/a.yaml",
		Table:       "orders",
		Message:     "scan takes 40 s",
	}
	if len(b.Entries) != 1 || b.Entries[0] != want {
		t.Fatalf("entries = %+v, want [%+v]", b.Entries, want)
	}
	// The checkout root must not leak into the fingerprint, or no other machine matches.
	if b.Entries[0].Fingerprint == rules.Fingerprint(f, f.File) {
		t.Error("fingerprint was taken over the local path, not the repository path")
	}
}

func TestMarshalBytes(t *testing.T) {
	b := File{SchemaVersion: 1, Entries: []Entry{
		{Fingerprint: "00ff", Rule: "scan-time", File: "models/a.yaml", Table: "orders", Message: "scan > 30 s & <budget>"},
		{Fingerprint: "11ee", Rule: "unused-waiver", File: "models/a.yaml", Message: "waiver matches nothing"},
	}}
	// Two-space indent, no HTML escaping, table left out when empty, final newline.
	want := `{
  "schema_version": 1,
  "entries": [
    {
      "fingerprint": "00ff",
      "rule": "scan-time",
      "file": "models/a.yaml",
      "table": "orders",
      "message": "scan > 30 s & <budget>"
    },
    {
      "fingerprint": "11ee",
      "rule": "unused-waiver",
      "file": "models/a.yaml",
      "message": "waiver matches nothing"
    }
  ]
}
`
	if got := string(b.Marshal()); got != want {
		t.Errorf("Marshal:\n%s\nwant:\n%s", got, want)
	}
	if got := string(Build(nil, identity).Marshal()); got != "{\n  \"schema_version\": 1,\n  \"entries\": []\n}\n" {
		t.Errorf("empty baseline marshals as %q", got)
	}
}

func TestMarshalDeterministic(t *testing.T) {
	in := []rules.Finding{
		finding("scan-time", "/ci/checkout/models/b.yaml", "t", "s", "m1", 1),
		finding("scan-time", "/ci/checkout/models/a.yaml", "t", "s", "m2", 1),
		finding("refresh-memory", "/ci/checkout/models/a.yaml", "t", "s", "m3", 1),
	}
	first := Build(in, repoURI).Marshal()
	if again := Build(in, repoURI).Marshal(); string(again) != string(first) {
		t.Errorf("two builds differ:\n%s\n%s", first, again)
	}
	shuffled := []rules.Finding{in[2], in[0], in[1]}
	if other := Build(shuffled, repoURI).Marshal(); string(other) != string(first) {
		t.Errorf("input order changed the bytes:\n%s\n%s", first, other)
	}
}

func TestMarshalParseRoundTrip(t *testing.T) {
	for name, b := range map[string]File{
		"built": Build([]rules.Finding{
			finding("scan-time", "/ci/checkout/models/a.yaml", "orders", "scan", `scan "orders" takes 40 s`, 9),
			finding("unused-waiver", "/ci/checkout/models/a.yaml", "", "w0", "waiver ü matches nothing", 2),
		}, repoURI),
		"empty": Build(nil, identity),
	} {
		data := b.Marshal()
		got, err := Parse(data)
		if err != nil {
			t.Fatalf("%s: Parse(Marshal) = %v", name, err)
		}
		if !reflect.DeepEqual(got, b) {
			t.Errorf("%s: round trip:\n got %#v\nwant %#v", name, got, b)
		}
		if again := got.Marshal(); string(again) != string(data) {
			t.Errorf("%s: bytes changed on the second trip:\n%s\n%s", name, data, again)
		}
	}
}

func TestParseAccepts(t *testing.T) {
	got, err := Parse([]byte(`{"schema_version":1,"entries":[{"fingerprint":"ab","rule":"scan-time","file":"m.yaml","message":"x"}]}`))
	if err != nil {
		t.Fatal(err)
	}
	want := File{SchemaVersion: 1, Entries: []Entry{{Fingerprint: "ab", Rule: "scan-time", File: "m.yaml", Message: "x"}}}
	if !reflect.DeepEqual(got, want) {
		t.Errorf("Parse = %#v, want %#v", got, want)
	}
}

// Refusals whose position is exact: the whole message is pinned.
func TestParseRefusals(t *testing.T) {
	for _, c := range []struct{ name, in, want string }{
		{"empty", ``, "1:1: EOF" + retry},
		{"truncated", `{"schema_version":1,`, "1:1: unexpected EOF" + retry},
		// Offset counts the bad byte, so the first byte must come out as column 1.
		{"syntax at first byte", `x`, "1:1: not valid JSON: invalid character 'x' looking for beginning of value" + retry},
		{"syntax on a later line", "{\n  \"schema_version\": 1,\n  x\n}", "3:3: not valid JSON: invalid character 'x' looking for beginning of object key string" + retry},
		{"unknown top-level field", `{"schema_version":1,"entries":[],"extra":1}`, `1:1: json: unknown field "extra"` + retry},
		{"unknown entry field", `{"schema_version":1,"entries":[{"fingerprint":"a","line":3}]}`, `1:1: json: unknown field "line"` + retry},
		{"newer schema_version", `{"schema_version":2,"entries":[]}`, "1:1: schema_version 2 is not 1; write the file again with `scangate baseline write`"},
		{"missing schema_version", `{"entries":[]}`, "1:1: schema_version 0 is not 1; write the file again with `scangate baseline write`"},
		{"null", `null`, "1:1: schema_version 0 is not 1; write the file again with `scangate baseline write`"},
	} {
		_, err := Parse([]byte(c.in))
		if err == nil {
			t.Errorf("%s: Parse(%q) accepted it", c.name, c.in)
			continue
		}
		if err.Error() != c.want {
			t.Errorf("%s: Parse(%q)\n got %q\nwant %q", c.name, c.in, err, c.want)
		}
	}
}

// Type errors: the line and the text are pinned; the column is not, because it points
// just past the offending value rather than at it.
func TestParseTypeErrors(t *testing.T) {
	for _, c := range []struct{ name, in, line, text string }{
		{"schema_version as a string", `{"schema_version":"1","entries":[]}`, "1", "schema_version must be int" + retry},
		{"schema_version not whole", `{"schema_version":1.5,"entries":[]}`, "1", "schema_version must be int" + retry},
		{"fingerprint as a number", "{\n \"schema_version\": 1,\n \"entries\": [{\"fingerprint\": 5}]\n}", "3", "entries.fingerprint must be string" + retry},
	} {
		_, err := Parse([]byte(c.in))
		if err == nil {
			t.Errorf("%s: Parse(%q) accepted it", c.name, c.in)
			continue
		}
		parts := strings.SplitN(err.Error(), ":", 3)
		if len(parts) != 3 || parts[0] != c.line || strings.TrimPrefix(parts[2], " ") != c.text {
			t.Errorf("%s: Parse(%q) = %q, want line %s and %q", c.name, c.in, err, c.line, c.text)
		}
	}
}

func TestApply(t *testing.T) {
	kept := finding("scan-time", "/ci/checkout/models/a.yaml", "orders", "scan", "scan takes 40 s", 9)
	gone := finding("refresh-memory", "/ci/checkout/models/a.yaml", "orders", "refresh", "refresh needs 9 GiB", 14)
	b := Build([]rules.Finding{kept, gone}, repoURI)

	// Next run, another machine: the kept finding moved and its numbers changed.
	moved := finding("scan-time", "/home/dev/repo/models/a.yaml", "orders", "scan", "scan takes 44 s", 31)
	fresh := finding("scan-time", "/home/dev/repo/models/a.yaml", "orders", "scan-overhead", "new", 40)
	now := []rules.Finding{moved, fresh}
	fixed := b.Apply(now, repoURI)
	if !now[0].Baselined {
		t.Error("recorded finding not marked Baselined")
	}
	if now[1].Baselined {
		t.Error("new finding marked Baselined")
	}
	if fixed != 1 {
		t.Errorf("fixed = %d, want 1 (the refresh-memory entry)", fixed)
	}
}

func TestApplyUsesURI(t *testing.T) {
	f := finding("scan-time", "/ci/checkout/models/a.yaml", "orders", "scan", "m", 9)
	b := File{SchemaVersion: 1, Entries: []Entry{{Fingerprint: rules.Fingerprint(f, "models/a.yaml")}}}

	now := []rules.Finding{f}
	if fixed := b.Apply(now, repoURI); fixed != 0 || !now[0].Baselined {
		t.Errorf("with the repository path: fixed = %d, Baselined = %v; want 0, true", fixed, now[0].Baselined)
	}
	// Without the mapping the local path is hashed and nothing matches.
	now = []rules.Finding{f}
	if fixed := b.Apply(now, identity); fixed != 1 || now[0].Baselined {
		t.Errorf("with the local path: fixed = %d, Baselined = %v; want 1, false", fixed, now[0].Baselined)
	}
}

func TestApplyNeverAcceptsSchemaFindings(t *testing.T) {
	bad := finding(rules.Schema.ID, "m.yaml", "", "/tables/0/rows", "rows must be a count", 4)
	// A hand-edited file may hold a schema fingerprint; a broken manifest must still fail.
	b := File{SchemaVersion: 1, Entries: []Entry{{Fingerprint: rules.Fingerprint(bad, "m.yaml"), Rule: rules.Schema.ID}}}
	now := []rules.Finding{bad}
	fixed := b.Apply(now, identity)
	if now[0].Baselined {
		t.Error("schema finding marked Baselined")
	}
	if fixed != 1 {
		t.Errorf("fixed = %d, want 1", fixed)
	}
}

func TestApplyFixedCount(t *testing.T) {
	a := finding("scan-time", "m.yaml", "t1", "scan", "m", 1)
	c := finding("scan-time", "m.yaml", "t2", "scan", "m", 2)
	d := finding("scan-time", "m.yaml", "t3", "scan", "m", 3)
	b := Build([]rules.Finding{a, c, d}, identity)

	if fixed := b.Apply(nil, identity); fixed != 3 {
		t.Errorf("no findings: fixed = %d, want 3", fixed)
	}
	// One entry matched by two findings (same fingerprint, two lines) counts once.
	now := []rules.Finding{a, a, c}
	now[1].Pos.Line = 50
	if fixed := b.Apply(now, identity); fixed != 1 {
		t.Errorf("fixed = %d, want 1 (only t3 is gone)", fixed)
	}
	for i, f := range now {
		if !f.Baselined {
			t.Errorf("finding %d not marked Baselined", i)
		}
	}
	if fixed := (File{SchemaVersion: 1, Entries: []Entry{}}).Apply([]rules.Finding{a}, identity); fixed != 0 {
		t.Errorf("empty baseline: fixed = %d, want 0", fixed)
	}
}
