package baseline

import (
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
	"time"

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

func day(y int, m time.Month, d int) time.Time { return time.Date(y, m, d, 0, 0, 0, 0, time.UTC) }

// bare is a parsed file without what Parse adds for messages (its name, entry lines).
func bare(f File) File {
	f.name = ""
	for i := range f.Entries {
		f.Entries[i].line = 0
	}
	return f
}

func TestConstants(t *testing.T) {
	// Both are on disk in adopting repositories; changing either breaks them.
	if SchemaVersion != 2 {
		t.Errorf("SchemaVersion = %d, want 2", SchemaVersion)
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
	// The least message of a fingerprint is the one recorded.
	if scan.Message != "scan takes 40 s" {
		t.Errorf("scan entry = %+v, want the least message", scan)
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
		Severity:    "warning",
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
	if got := string(Build(nil, identity).Marshal()); got != "{\n  \"schema_version\": 2,\n  \"entries\": []\n}\n" {
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
		got, err := Parse("b.json", data, schema.DefaultLimits)
		if err != nil {
			t.Fatalf("%s: Parse(Marshal) = %v", name, err)
		}
		if !reflect.DeepEqual(bare(got), b) {
			t.Errorf("%s: round trip:\n got %#v\nwant %#v", name, got, b)
		}
		if again := got.Marshal(); string(again) != string(data) {
			t.Errorf("%s: bytes changed on the second trip:\n%s\n%s", name, data, again)
		}
	}
}

// Every rule of the registry but schema, on many files: what Build writes, Parse reads.
// 2,000 files keep the file well inside the default size limit whatever rules are added.
func TestParseReadsWhatBuildWrites(t *testing.T) {
	const files = 2000
	var in []rules.Finding
	for i := 0; i < files; i++ {
		for _, r := range rules.All() {
			in = append(in, finding(r.ID, fmt.Sprintf("/ci/checkout/models/m%d.yaml", i), "t", "s", "m", 1))
		}
	}
	b := Build(in, repoURI)
	if len(b.Entries) != files*(len(rules.All())-1) {
		t.Fatalf("built %d entries", len(b.Entries))
	}
	got, err := Parse("b.json", b.Marshal(), schema.DefaultLimits)
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(bare(got), b) {
		t.Error("the parsed baseline differs from the built one")
	}
}

const fp1, fp2 = "0123456789abcdef0123456789abcdef", "fedcba9876543210fedcba9876543210"

func TestParseAccepts(t *testing.T) {
	got, err := Parse("b.json", []byte(`{"schema_version":1,"entries":[{"fingerprint":"`+fp1+`","rule":"scan-time","file":"m.yaml","message":"x"}]}`), schema.DefaultLimits)
	if err != nil {
		t.Fatal(err)
	}
	want := File{SchemaVersion: 1, Entries: []Entry{{Fingerprint: fp1, Rule: "scan-time", File: "m.yaml", Message: "x"}}}
	if !reflect.DeepEqual(bare(got), want) {
		t.Errorf("Parse = %#v, want %#v", got, want)
	}
}

// A byte-order mark is skipped and CR LF is a line break, as the manifest loader does.
func TestParseAcceptsTestdata(t *testing.T) {
	orders := Entry{Fingerprint: fp1, Rule: "scan-time", File: "models/a.yaml", Table: "orders", Message: "scan takes 40 s"}
	lines := Entry{Fingerprint: fp2, Rule: "scan-time", File: "models/a.yaml", Table: "lines", Message: "scan takes 40 s"}
	for name, want := range map[string][]Entry{
		"good-bom.json":  {orders},
		"good-crlf.json": {orders, lines},
	} {
		got, err := Parse(name, readTestdata(t, name), schema.DefaultLimits)
		if err != nil {
			t.Errorf("%s: %v", name, err)
			continue
		}
		if !reflect.DeepEqual(bare(got).Entries, want) {
			t.Errorf("%s: entries %+v, want %+v", name, got.Entries, want)
		}
	}
}

func readTestdata(t *testing.T, name string) []byte {
	t.Helper()
	data, err := os.ReadFile(filepath.Join("..", "..", "testdata", "baselines", name))
	if err != nil {
		t.Fatal(err)
	}
	return data
}

const pathWords = "is not a repository path; write it relative to the repository root with forward slashes, without . or .. segments, a leading slash, a backslash or control characters"

// Every file of testdata/baselines/bad-*.json with its whole error: the position is the
// character the problem is about (columns in characters, CR LF and a lone CR line breaks).
var badBaselines = map[string]string{
	"bad-crlf-columns.json":           "7:31: /entries/0/rule: must be a string, not a number",
	"bad-duplicate-entry-key.json":    `7:7: /entries/0: key "rule" is already defined at line 6; remove one of them`,
	"bad-duplicate-fingerprint.json":  "12:22: /entries/1/fingerprint: fingerprint " + fp1 + " is already recorded at line 5; remove one of the entries",
	"bad-duplicate-key.json":          `3:3: key "schema_version" is already defined at line 2; remove one of them`,
	"bad-expires-date.json":           `11:18: /entries/0/expires: "2027-02-30" is not a calendar date; write it as YYYY-MM-DD`,
	"bad-expires-form.json":           `11:18: /entries/0/expires: "31/03/2027" is not a date; write it as YYYY-MM-DD (ISO 8601)`,
	"bad-severity.json":               `8:19: /entries/0/severity: fatal is not one of error, warning, note`,
	"bad-v2-no-severity.json":         `5:5: /entries/0: missing required key "severity"`,
	"bad-empty.json":                  `1:1: file is empty; a baseline starts with {"schema_version": 2`,
	"bad-entries-null.json":           "3:14: /entries: must be an array, not null",
	"bad-entries-object.json":         "3:14: /entries: must be an array, not an object",
	"bad-entry-empty.json":            `4:5: /entries/0: missing required key "fingerprint", "rule", "file", "message"`,
	"bad-file-absolute.json":          `7:15: /entries/0/file: "/etc/passwd" ` + pathWords,
	"bad-file-backslash.json":         `7:15: /entries/0/file: "models\\a.yaml" ` + pathWords,
	"bad-file-control.json":           `7:15: /entries/0/file: "models/a\a.yaml" ` + pathWords,
	"bad-file-dotdot.json":            `7:15: /entries/0/file: "../../etc/passwd" ` + pathWords,
	"bad-fingerprint-control.json":    `5:22: /entries/0/fingerprint: "0123456789abcdef\n\x00" is not a fingerprint; a fingerprint is 32 lowercase hexadecimal digits`,
	"bad-fingerprint-number.json":     "5:22: /entries/0/fingerprint: must be a string, not a number",
	"bad-fingerprint-upper.json":      `5:22: /entries/0/fingerprint: "0123456789ABCDEF0123456789ABCDEF" is not a fingerprint; a fingerprint is 32 lowercase hexadecimal digits`,
	"bad-lone-cr.json":                "4:128: /entries/0/table: must be a string, not a number",
	"bad-merge-conflict.json":         "1:1: merge conflict marker <<<<<<<; resolve the conflict, then run again",
	"bad-schema-rule.json":            "6:15: /entries/0/rule: schema findings are never baselined (a broken manifest always fails); remove the entry",
	"bad-schema-version-3.json":       "2:21: /schema_version: 3 is not one of 1, 2",
	"bad-schema-version-missing.json": `1:1: missing required key "schema_version"`,
	"bad-schema-version-string.json":  `2:21: /schema_version: must be a number, not a string`,
	"bad-syntax.json":                 "3:15: invalid JSON: unexpected \"}\"; a value is an object, a list, a \"string\", a number, true, false or null",
	"bad-top-array.json":              "1:1: must be an object, not an array",
	"bad-trailing-text.json":          "4:3: invalid JSON: the file holds more than one value; remove what follows the first: a file holds one document",
	"bad-truncated.json":              "6:1: invalid JSON: expected a key in double quotes; write \"key\": value",
	"bad-two-objects.json":            "5:1: invalid JSON: the file holds more than one value; remove what follows the first: a file holds one document",
	"bad-unknown-entry-field.json":    `10:7: /entries/0/line: unknown key "line"; allowed here: expires, file, fingerprint, message, reason, rule, severity, table`,
	"bad-unknown-field.json":          `4:3: /extra: unknown key "extra"; allowed here: entries, schema_version, written`,
	"bad-unknown-rule.json":           `6:15: /entries/0/rule: unknown rule "scan-tme"; use one of ` + strings.Join(recordable(), ", "),
}

func recordable() []string {
	var ids []string
	for _, r := range rules.All() {
		if r.ID != rules.Schema.ID {
			ids = append(ids, r.ID)
		}
	}
	return ids
}

func TestParseRefusesTestdata(t *testing.T) {
	files, _ := filepath.Glob(filepath.Join("..", "..", "testdata", "baselines", "bad-*.json"))
	if len(files) != len(badBaselines) {
		t.Errorf("%d bad-*.json files, %d expected errors: every file needs its error here", len(files), len(badBaselines))
	}
	for _, path := range files {
		name := filepath.Base(path)
		want, ok := badBaselines[name]
		if !ok {
			t.Errorf("%s: no expected error", name)
			continue
		}
		_, err := Parse(name, readTestdata(t, name), schema.DefaultLimits)
		if err == nil {
			t.Errorf("%s: accepted", name)
			continue
		}
		var se *schema.Error
		if !errors.As(err, &se) {
			t.Errorf("%s: error %T, want *schema.Error", name, err)
		}
		if got := err.Error(); got != name+":"+want {
			t.Errorf("%s:\n got %q\nwant %q", name, got, name+":"+want)
		}
	}
}

// Inline refusals, whole messages pinned.
func TestParseRefusals(t *testing.T) {
	for _, c := range []struct{ name, in, want string }{
		// The decoder's offset counts the bad byte, so the first byte comes out as column 1.
		{"syntax at first byte", `x`, "1:1: invalid JSON: unexpected \"x\"; write a string in double quotes, a number, true, false or null"},
		{"syntax on a later line", "{\n  \"schema_version\": 1,\n  x\n}", "3:3: invalid JSON: expected a key in double quotes; write \"key\": value"},
		{"only white space", " \n\t", `1:1: file is empty; a baseline starts with {"schema_version": 2`},
		{"cut off after a comma", `{"schema_version":1,`, "1:21: invalid JSON: expected a key in double quotes; write \"key\": value"},
		{"trailing comma after the object", `{"schema_version":1,"entries":[]},`, "1:34: invalid JSON: the file holds more than one value; remove what follows the first: a file holds one document"},
		{"conflict marker between entries", "{\"schema_version\":1,\"entries\":[\n=======\n]}", "2:1: merge conflict marker =======; resolve the conflict, then run again"},
		{"infinite number", `{"schema_version":1e999,"entries":[]}`, "1:19: /schema_version: \"1e999\" is not a finite number; write a plain number"},
		{"UTF-16", "\xff\xfe{\x00}\x00", "1:1: file is UTF-16; save it as UTF-8"},
		{"NUL byte", "{\"schema_version\":1,\n\x00}", "2:1: file is not UTF-8 text (binary data or another encoding); save it as UTF-8"},
		{"deep nesting", strings.Repeat("[", 100), "1:66: nesting deeper than 64 levels; no scangate file needs more than a few"},
	} {
		_, err := Parse("b.json", []byte(c.in), schema.DefaultLimits)
		if err == nil {
			t.Errorf("%s: Parse(%q) accepted it", c.name, c.in)
			continue
		}
		if got := strings.TrimPrefix(err.Error(), "b.json:"); got != c.want {
			t.Errorf("%s: Parse(%q)\n got %q\nwant %q", c.name, c.in, got, c.want)
		}
	}
}

// A type error points at the value's first character, not one past it, and is worded
// without the program's type names.
func TestParseTypeErrors(t *testing.T) {
	for _, c := range []struct{ name, in, want string }{
		{"schema_version as a string", `{"schema_version":"1","entries":[]}`, `1:19: /schema_version: must be a number, not a string`},
		{"schema_version not whole", `{"schema_version":1.5,"entries":[]}`, "1:19: /schema_version: 1.5 is not one of 1, 2"},
		{"top level an array", `[]`, "1:1: must be an object, not an array"},
		{"entries an object", `{"schema_version":1,"entries":{}}`, "1:31: /entries: must be an array, not an object"},
		{"fingerprint as a number", "{\n \"schema_version\": 1,\n \"entries\": [{\"fingerprint\": 5, \"rule\": \"scan-time\", \"file\": \"m.yaml\", \"message\": \"\"}]\n}", "3:30: /entries/0/fingerprint: must be a string, not a number"},
		{"entry a string", `{"schema_version":1,"entries":["x"]}`, "1:32: /entries/0: must be an object, not a string"},
	} {
		_, err := Parse("b.json", []byte(c.in), schema.DefaultLimits)
		if err == nil {
			t.Errorf("%s: Parse(%q) accepted it", c.name, c.in)
			continue
		}
		got := strings.TrimPrefix(err.Error(), "b.json:")
		if got != c.want {
			t.Errorf("%s: Parse(%q)\n got %q\nwant %q", c.name, c.in, got, c.want)
		}
		for _, goName := range []string{"baseline.", "[]", "json:", " int", "Entry"} {
			if strings.Contains(got, goName) {
				t.Errorf("%s: %q names a Go type (%q)", c.name, got, goName)
			}
		}
	}
}

// The file field is a clean relative repository path, whatever the platform.
func TestParseFilePaths(t *testing.T) {
	doc := func(file string) []byte {
		q, _ := json.Marshal(file)
		return []byte(`{"schema_version":1,"entries":[{"fingerprint":"` + fp1 + `","rule":"scan-time","file":` + string(q) + `,"message":""}]}`)
	}
	for _, ok := range []string{"a.yaml", "models/a.yaml", "stdin", ".hidden/a.yaml", "a..b/c.yaml", ".../a", "a b/é.yaml", "c:/a.yaml"} {
		if _, err := Parse("b.json", doc(ok), schema.DefaultLimits); err != nil {
			t.Errorf("%q refused: %v", ok, err)
		}
	}
	for _, bad := range []string{"", "/a.yaml", "a/", "a//b", ".", "./a", "a/./b", "..", "../a", "a/..", "a/../b",
		`a\b`, `\\server\a`, "a\x00b", "a\nb", "a\tb", "a\x7fb", "a\u0085b"} {
		_, err := Parse("b.json", doc(bad), schema.DefaultLimits)
		if err == nil || !strings.Contains(err.Error(), pathWords) {
			t.Errorf("%q: err %v, want a path refusal", bad, err)
		}
	}
}

// Baselines are bounded like manifests: a file above the limit is refused unread.
func TestParseSizeLimit(t *testing.T) {
	data := Build(nil, identity).Marshal()
	lim := schema.DefaultLimits
	lim.MaxFileBytes = len(data) - 1
	_, err := Parse("b.json", data, lim)
	if err == nil || !strings.Contains(err.Error(), fmt.Sprintf("b.json:1:1: file is %d bytes, above the limit of %d", len(data), len(data)-1)) {
		t.Errorf("err = %v", err)
	}
	lim.MaxFileBytes = len(data)
	if _, err := Parse("b.json", data, lim); err != nil {
		t.Errorf("at the limit: %v", err)
	}
}

// Findings of one fingerprint differ only in their message; the baseline does not depend
// on which came first.
func TestBuildKeepsLeastMessage(t *testing.T) {
	a := finding("scan-time", "m.yaml", "orders", "scan", "scan takes 41 s", 9)
	b := finding("scan-time", "m.yaml", "orders", "scan", "scan takes 40 s", 30)
	one, two := Build([]rules.Finding{a, b}, identity), Build([]rules.Finding{b, a}, identity)
	if !reflect.DeepEqual(one, two) || len(one.Entries) != 1 || one.Entries[0].Message != "scan takes 40 s" {
		t.Errorf("order changed the baseline or kept another message:\n%+v\n%+v", one.Entries, two.Entries)
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
	fixed := b.Apply(now, repoURI, day(2026, 1, 1)).Fixed
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
	if fixed := b.Apply(now, repoURI, day(2026, 1, 1)).Fixed; fixed != 0 || !now[0].Baselined {
		t.Errorf("with the repository path: fixed = %d, Baselined = %v; want 0, true", fixed, now[0].Baselined)
	}
	// Without the mapping the local path is hashed and nothing matches.
	now = []rules.Finding{f}
	if fixed := b.Apply(now, identity, day(2026, 1, 1)).Fixed; fixed != 1 || now[0].Baselined {
		t.Errorf("with the local path: fixed = %d, Baselined = %v; want 1, false", fixed, now[0].Baselined)
	}
}

func TestApplyNeverAcceptsSchemaFindings(t *testing.T) {
	bad := finding(rules.Schema.ID, "m.yaml", "", "/tables/0/rows", "rows must be a count", 4)
	// A hand-edited file may hold a schema fingerprint; a broken manifest must still fail.
	b := File{SchemaVersion: 1, Entries: []Entry{{Fingerprint: rules.Fingerprint(bad, "m.yaml"), Rule: rules.Schema.ID}}}
	now := []rules.Finding{bad}
	fixed := b.Apply(now, identity, day(2026, 1, 1)).Fixed
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

	if fixed := b.Apply(nil, identity, day(2026, 1, 1)).Fixed; fixed != 3 {
		t.Errorf("no findings: fixed = %d, want 3", fixed)
	}
	// One entry matched by two findings (same fingerprint, two lines) counts once.
	now := []rules.Finding{a, a, c}
	now[1].Pos.Line = 50
	if fixed := b.Apply(now, identity, day(2026, 1, 1)).Fixed; fixed != 1 {
		t.Errorf("fixed = %d, want 1 (only t3 is gone)", fixed)
	}
	for i, f := range now {
		if !f.Baselined {
			t.Errorf("finding %d not marked Baselined", i)
		}
	}
	if fixed := (File{SchemaVersion: 1, Entries: []Entry{}}).Apply([]rules.Finding{a}, identity, day(2026, 1, 1)).Fixed; fixed != 0 {
		t.Errorf("empty baseline: fixed = %d, want 0", fixed)
	}
}

// Fixed counts entries, not fingerprints: two entries of one fingerprint that match
// nothing are two fixed entries (Parse refuses such a file; a File built in code may not).
func TestApplyCountsEveryEntry(t *testing.T) {
	a := finding("scan-time", "m.yaml", "t1", "scan", "m", 1)
	c := finding("scan-time", "m.yaml", "t2", "scan", "m", 2)
	e := Entry{Fingerprint: rules.Fingerprint(a, "m.yaml"), Rule: "scan-time", File: "m.yaml"}
	b := File{SchemaVersion: 1, Entries: []Entry{e, e}}
	if fixed := b.Apply([]rules.Finding{c}, identity, day(2026, 1, 1)).Fixed; fixed != 2 {
		t.Errorf("fixed = %d, want 2", fixed)
	}
	if fixed := b.Apply([]rules.Finding{a}, identity, day(2026, 1, 1)).Fixed; fixed != 0 {
		t.Errorf("both entries matched: fixed = %d, want 0", fixed)
	}
}

// Build keeps the highest severity of a fingerprint, whatever the order.
func TestBuildKeepsHighestSeverity(t *testing.T) {
	a := finding("scan-time", "m.yaml", "orders", "scan", "scan takes 41 s", 9)
	b := a
	b.Severity = rules.Error
	for _, in := range [][]rules.Finding{{a, b}, {b, a}} {
		if got := Build(in, identity).Entries[0].Severity; got != "error" {
			t.Errorf("severity %q, want error", got)
		}
	}
}

// Stamp writes the date on the file and the reason and expiry on every entry; the
// stamped file reads back as written.
func TestStampRoundTrip(t *testing.T) {
	b := Build([]rules.Finding{finding("scan-time", "m.yaml", "orders", "scan", "m", 9), finding("scan-time", "m.yaml", "lines", "scan", "m", 12)}, identity)
	b.Stamp(day(2026, 12, 2), "moves next quarter", day(2027, 3, 31))
	data := b.Marshal()
	for _, want := range []string{"\"schema_version\": 2,\n  \"written\": \"2026-12-02\",", "\"severity\": \"warning\",", "\"reason\": \"moves next quarter\",\n      \"expires\": \"2027-03-31\"\n"} {
		if !strings.Contains(string(data), want) {
			t.Errorf("stamped file lacks %q:\n%s", want, data)
		}
	}
	got, err := Parse("b.json", data, schema.DefaultLimits)
	if err != nil || !reflect.DeepEqual(bare(got), b) {
		t.Errorf("round trip: %v\n%+v\n%+v", err, got, b)
	}
	// Without a reason or expiry neither key is written.
	c := Build([]rules.Finding{finding("scan-time", "m.yaml", "orders", "scan", "m", 9)}, identity)
	c.Stamp(day(2026, 12, 2), "", time.Time{})
	if data := string(c.Marshal()); strings.Contains(data, "reason") || strings.Contains(data, "expires") {
		t.Errorf("unstamped keys written:\n%s", data)
	}
}

// A version 1 file (no date, no severity, no expiry) is still read, and absorbs its
// findings at any severity: it recorded none to compare with.
func TestVersion1StillRead(t *testing.T) {
	b, err := Parse("good-crlf.json", readTestdata(t, "good-crlf.json"), schema.DefaultLimits)
	if err != nil || b.SchemaVersion != 1 || b.Written != "" || b.Entries[0].Severity != "" {
		t.Fatalf("Parse = %+v, %v", b, err)
	}
	f := rules.Finding{Rule: "scan-time", Severity: rules.Error, File: "models/a.yaml", Table: "orders", Subject: "x"}
	b.Entries[0].Fingerprint = rules.Fingerprint(f, "models/a.yaml")
	now := []rules.Finding{f}
	if o := b.Apply(now, identity, day(2030, 1, 1)); !now[0].Baselined || o.Escalated+o.Expired != 0 {
		t.Errorf("version 1 entry: baselined %v, outcome %+v", now[0].Baselined, o)
	}
	// Version 2 reads its reason and expiry.
	v2, err := Parse("good-v2.json", readTestdata(t, "good-v2.json"), schema.DefaultLimits)
	if err != nil || v2.Written != "2026-12-02" || v2.Entries[0].Reason != "the nightly job moves next quarter" || v2.Entries[0].Expires != "2027-03-31" || v2.Entries[1].Severity != "error" {
		t.Errorf("Parse(good-v2.json) = %+v, %v", v2, err)
	}
}

// A finding more severe than its entry recorded counts again and says so, with the
// entry's line; one as severe or less stays absorbed.
func TestApplyEscalated(t *testing.T) {
	warn := finding("scan-time", "models/a.yaml", "orders", "scan", "scan takes 40 s", 9)
	data := Build([]rules.Finding{warn}, identity).Marshal()
	b, err := Parse(".scangate-baseline.json", data, schema.DefaultLimits)
	if err != nil {
		t.Fatal(err)
	}
	worse := warn
	worse.Severity = rules.Error
	better := warn
	better.Severity = rules.Note
	now := []rules.Finding{worse}
	o := b.Apply(now, identity, day(2026, 1, 1))
	// The entry's object starts on line 4: {, "schema_version", "entries": [, {.
	if now[0].Baselined || o.Escalated != 1 || o.Fixed != 0 ||
		now[0].Message != "scan takes 40 s (escalated: baselined as a warning in .scangate-baseline.json:4; it counts again)" {
		t.Errorf("escalated: baselined %v, outcome %+v, message %q", now[0].Baselined, o, now[0].Message)
	}
	for _, f := range []rules.Finding{warn, better} {
		now := []rules.Finding{f}
		if o := b.Apply(now, identity, day(2026, 1, 1)); !now[0].Baselined || o.Escalated != 0 {
			t.Errorf("%s: baselined %v, outcome %+v", f.Severity, now[0].Baselined, o)
		}
	}
}

// An entry absorbs its finding up to and including its expiry day, then the finding
// counts again and names the entry and the day it expired.
func TestApplyExpired(t *testing.T) {
	f := finding("scan-time", "models/a.yaml", "orders", "scan", "scan takes 40 s", 9)
	built := Build([]rules.Finding{f}, identity)
	built.Stamp(day(2026, 12, 2), "", day(2027, 1, 31))
	b, err := Parse("bl.json", built.Marshal(), schema.DefaultLimits)
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		today   time.Time
		absorbs bool
		note    string
	}{
		{day(2027, 1, 30), true, ""},
		{day(2027, 1, 31), true, ""}, // the expiry day itself still counts
		{day(2027, 2, 1), false, " (baseline entry bl.json:5 expired on 2027-01-31, 1 day ago; it counts again)"},
		{day(2027, 3, 2), false, " (baseline entry bl.json:5 expired on 2027-01-31, 30 days ago; it counts again)"},
	} {
		now := []rules.Finding{f}
		o := b.Apply(now, identity, c.today)
		if now[0].Baselined != c.absorbs || now[0].Message != f.Message+c.note || o.Expired != map[bool]int{true: 0, false: 1}[c.absorbs] || o.Fixed != 0 {
			t.Errorf("%s: baselined %v, outcome %+v, message %q", c.today.Format(dateLayout), now[0].Baselined, o, now[0].Message)
		}
	}
}

// Lapsed: the findings of an expired manifest waiver (the reminder and the findings of
// its rule on its table, not other rules or tables) and those of expired entries of the
// baseline written over.
func TestLapsed(t *testing.T) {
	reminder := rules.Finding{Rule: rules.ExpiredWaiver.ID, Severity: rules.Warning, File: "m.yaml", Table: "orders", Subject: "waiver:scan-time", Message: "waiver for scan-time expired"}
	waived := finding("scan-time", "m.yaml", "orders", "scan", "scan takes 40 s", 9)
	otherRule := finding("scan-overhead", "m.yaml", "orders", "scan-overhead", "overhead", 9)
	otherTable := finding("scan-time", "m.yaml", "lines", "scan", "scan takes 40 s", 20)
	all := []rules.Finding{reminder, waived, otherRule, otherTable}
	got := Lapsed(all, identity, File{}, day(2027, 1, 1))
	if len(got) != 2 || got[0].Rule != rules.ExpiredWaiver.ID || got[1].Table != "orders" || got[1].Rule != "scan-time" {
		t.Errorf("lapsed %+v", got)
	}
	prior := Build([]rules.Finding{otherTable}, identity)
	prior.Stamp(day(2026, 1, 1), "", day(2026, 6, 30))
	if got := Lapsed(all[2:], identity, prior, day(2026, 6, 30)); len(got) != 0 {
		t.Errorf("on the expiry day nothing has lapsed: %+v", got)
	}
	if got := Lapsed(all[2:], identity, prior, day(2026, 7, 1)); len(got) != 1 || got[0].Table != "lines" {
		t.Errorf("after it: %+v", got)
	}
}
