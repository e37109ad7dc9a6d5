package schema_test

import (
	"errors"
	"strings"
	"testing"
	"time"

	"github.com/scangate/scangate/schema"
)

// jsonProblems loads src as a .json file and expects it refused.
func jsonProblems(t *testing.T, src string) []schema.Problem {
	t.Helper()
	m, err := schema.Load("in.json", []byte(src), schema.DefaultLimits)
	var se *schema.Error
	if err == nil || !errors.As(err, &se) || m != nil {
		t.Fatalf("%.60q: Load = %v, %v; want an *Error", src, m, err)
	}
	return se.Problems
}

const jsonManifest = `{"format": 1, "model": "m", "engine": {"segment_rows": "8Mi"},
 "tables": [{"name": "t", "rows": 10, "partitions": {"scheme": "none"}}]}`

// A .json file is strict JSON (RFC 8259): what the YAML parser used to let through is
// refused at its own line and column, with what to change.
func TestLoadStrictJSON(t *testing.T) {
	cases := []struct {
		name, src string
		pos       schema.Pos
		fragment  string
	}{
		{"trailing comma in a list", "{\"format\": 1,\n \"tables\": [1, 2,]}", schema.Pos{Line: 2, Col: 17}, "a comma before ']'; JSON allows no comma after the last item, remove it"},
		{"trailing comma in an object", `{"format": 1,}`, schema.Pos{Line: 1, Col: 13}, "a comma before '}'"},
		{"line comment", "{\"format\": 1, // why\n\"model\": \"m\"}", schema.Pos{Line: 1, Col: 15}, "comments are not allowed in JSON"},
		{"block comment", "/* header */ {}", schema.Pos{Line: 1, Col: 1}, "comments are not allowed in JSON"},
		{"hash comment", "{}\n# note\n", schema.Pos{Line: 2, Col: 1}, "comments are not allowed in JSON"},
		{"lone high surrogate", `{"model": "ab\ud800"}`, schema.Pos{Line: 1, Col: 14}, `invalid surrogate \ud800: a high surrogate must be followed by a low one`},
		{"high surrogate before a letter", `{"model": "\ud800\u0041"}`, schema.Pos{Line: 1, Col: 12}, `invalid surrogate \ud800`},
		{"lone low surrogate", `{"model": "\udc00"}`, schema.Pos{Line: 1, Col: 12}, `invalid surrogate \udc00: a low surrogate without a high one`},
		{"unknown escape", `{"model": "a\x41"}`, schema.Pos{Line: 1, Col: 13}, `unknown escape \x`},
		{"short \\u", `{"model": "\u12"}`, schema.Pos{Line: 1, Col: 12}, "four hex digits"},
		{"control character", "{\"model\": \"a\tb\"}", schema.Pos{Line: 1, Col: 13}, "control character U+0009 inside a string"},
		{"single quotes", `{'model': 1}`, schema.Pos{Line: 1, Col: 2}, "expected a key in double quotes"},
		{"unquoted key", `{model: 1}`, schema.Pos{Line: 1, Col: 2}, "expected a key in double quotes"},
		{"missing colon", `{"model" 1}`, schema.Pos{Line: 1, Col: 10}, "expected ':' after the key"},
		{"missing comma", "{\"a\": 1\n \"b\": 2}", schema.Pos{Line: 2, Col: 2}, "expected ',' or '}' here"},
		{"hexadecimal", `{"format": 0x1}`, schema.Pos{Line: 1, Col: 12}, `"0x1" is a hexadecimal number`},
		{"leading zero", `{"format": 01}`, schema.Pos{Line: 1, Col: 12}, `"01" has a leading zero`},
		{"plus sign", `{"format": +1}`, schema.Pos{Line: 1, Col: 12}, `"+1" is a number with a plus sign`},
		{"bare fraction", `{"format": .5}`, schema.Pos{Line: 1, Col: 12}, `".5" is not a plain decimal number; write it as JSON does: 0.5`},
		{"NaN", `{"format": NaN}`, schema.Pos{Line: 1, Col: 12}, `"NaN" is not a finite number`},
		{"capital literal", `{"format": True}`, schema.Pos{Line: 1, Col: 12}, `unexpected "True"`},
		{"unclosed string", `{"model": "m`, schema.Pos{Line: 1, Col: 11}, "the string that starts here is not closed"},
		{"unclosed object", `{"format": 1`, schema.Pos{Line: 1, Col: 13}, "the file ends before the closing '}'"},
		{"two values", "{}\n{}", schema.Pos{Line: 2, Col: 1}, "the file holds more than one value"},
		{"empty", " \n", schema.Pos{Line: 1, Col: 1}, "file is empty"},
		{"YAML in a .json file", "format: 1\n", schema.Pos{Line: 1, Col: 1}, `unexpected "format"`},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			ps := jsonProblems(t, c.src)
			if len(ps) != 1 || ps[0].Pos != c.pos || !strings.Contains(ps[0].Message, c.fragment) {
				t.Errorf("got %v, want one problem at %v containing %q", ps, c.pos, c.fragment)
			}
		})
	}
}

// Duplicate keys in JSON are refused as in YAML, each at the repeat, and the rest of the
// file is still checked.
func TestLoadJSONDuplicateKeys(t *testing.T) {
	src := strings.Replace(jsonManifest, `"rows": 10,`, `"rows": 10, "rows": 20,`, 1)
	src = strings.Replace(src, `"model": "m",`, `"model": "m", "model": "n", "colour": 1,`, 1)
	ps := jsonProblems(t, src)
	want := []string{
		`key "model" is already defined at line 1; remove one of them`,
		`unknown key "colour"`,
		`key "rows" is already defined at line 2; remove one of them`,
	}
	if len(ps) != len(want) {
		t.Fatalf("got %v, want %d problems", ps, len(want))
	}
	for i, w := range want {
		if !strings.Contains(ps[i].Message, w) {
			t.Errorf("problem %d = %q, want %q", i, ps[i].Message, w)
		}
	}
	if ps[0].Pos != at(t, src, 1, `"model": "n"`) || ps[2].Pos != at(t, src, 2, `"rows": 20`) {
		t.Errorf("positions %v and %v", ps[0].Pos, ps[2].Pos)
	}
}

// What YAML refused in valid JSON is read: the \/ escape, a surrogate pair, a byte order
// mark. A pair decodes to its character (RFC 8259 section 7: U+1D11E is \ud834\udd1e).
func TestLoadJSONValidEscapes(t *testing.T) {
	src := strings.Replace(jsonManifest, `"model": "m"`, `"model": "a\/b \ud834\udd1e \u00e9"`, 1)
	m := mustLoad(t, "in.json", append([]byte("\uFEFF"), src...))
	if m.Model != "a/b \U0001D11E é" {
		t.Errorf("model = %q", m.Model)
	}
}

// The same content gives the same problems at the same positions as .json and as .yaml.
func TestLoadJSONAndYAMLReportAlike(t *testing.T) {
	srcs := []string{
		jsonManifest,
		`{"format": 2, "model": "", "engine": {"segment_rows": "8Xi", "cores": 0, "colour": "blue"},
  "tables": [
    {"name": "a", "rows": -5, "partitions": {"scheme": "time", "tiers": [{"grain": "month", "keep": 2}, {"grain": "day", "keep": 3}]}},
    {"name": "a", "partitions": {"scheme": "list", "items": [{"name": "x", "rows": "600T"}, {"name": "x", "rows": "600T"}]},
     "waivers": [{"rule": "scan-time", "reason": "ab", "expires": "2027-02-30"}]},
    {"name": "b", "rows": 1.5, "partitions": {"scheme": "none"}, "columns": [{"name": "c", "type": "int64"}, {"name": "c", "type": "int64"}]}
  ]}`,
	}
	for _, src := range srcs {
		_, jerr := schema.Load("m.json", []byte(src), schema.DefaultLimits)
		_, yerr := schema.Load("m.yaml", []byte(src), schema.DefaultLimits)
		j, y := "<nil>", "<nil>"
		if jerr != nil {
			j = strings.ReplaceAll(jerr.Error(), "m.json:", "m:")
		}
		if yerr != nil {
			y = strings.ReplaceAll(yerr.Error(), "m.yaml:", "m:")
		}
		if j != y {
			t.Errorf("JSON and YAML differ:\nJSON:\n%s\nYAML:\n%s", j, y)
		}
	}
}

// A key past 1024 characters (YAML 1.2's bound on an implicit key) is named as too long
// at its first character, not "could not find expected ':'"; a 1 MB key is read in
// linear time.
func TestLoadLongKey(t *testing.T) {
	key := "k" + strings.Repeat("x", 1<<20-1)
	yamlCases := []struct {
		name, src string
		pos       schema.Pos
	}{
		{"block, not the first line", "format: 1\nmodel: m\nengine:\n  " + key + ": 1\n", schema.Pos{Line: 4, Col: 3}},
		{"block, the first line", key + ": 1\n", schema.Pos{Line: 1, Col: 1}},
		{"list item", "tables:\n  - " + key + ": 1\n", schema.Pos{Line: 2, Col: 5}},
		{"flow, quoted", "engine: {\"" + key + "\": 1}\n", schema.Pos{Line: 1, Col: 10}},
	}
	for _, c := range yamlCases {
		t.Run(c.name, func(t *testing.T) {
			start := time.Now()
			ps := problems(t, []byte(c.src), schema.DefaultLimits)
			if len(ps) != 1 || ps[0].Pos != c.pos || !strings.Contains(ps[0].Message, "characters long, above YAML's limit of 1,024 characters for a key; shorten it") {
				t.Errorf("got %.300v, want one problem at %v", ps, c.pos)
			}
			if d := time.Since(start); d > 5*time.Second {
				t.Errorf("took %v", d)
			}
		})
	}
	// The missing ':' of a short key is named as such, at the key.
	ps := problems(t, []byte("format: 1\nmodel m\nengine: {}\n"), schema.DefaultLimits)
	if len(ps) != 1 || ps[0].Pos != (schema.Pos{Line: 2, Col: 1}) || !strings.Contains(ps[0].Message, "no ':' follows it") {
		t.Errorf("missing colon: %v", ps)
	}
	// JSON has no such bound, but the loader keeps it, and quotes no megabyte.
	ps = jsonProblems(t, strings.Replace(jsonManifest, `"model": "m"`, `"model": "m", "`+key+`": 1`, 1))
	if len(ps) != 1 || ps[0].Pos != (schema.Pos{Line: 1, Col: 29}) || ps[0].Message != "key is 1,048,576 characters long, above the limit of 1,024; shorten it (manifest keys are short names)" {
		t.Errorf("long JSON key: %.300v", ps)
	}
}

// A wrong value is reported once: by the reader or the schema, not again by the checks
// that read it.
func TestLoadReportsEachValueOnce(t *testing.T) {
	const src = `format: 1
model: m
engine: {segment_rows: 0x10, memory: -1GB, cores: 1_0}
tables:
  - name: a
    rows: -5
    partitions: {scheme: time, tiers: [{grain: hour, keep: 1}, {grain: day, keep: 1}]}
    waivers: [{rule: scan-time, reason: "why", expires: 31/03/2027}]
`
	ps := problems(t, []byte(src), schema.DefaultLimits)
	seen := map[string]bool{}
	for _, p := range ps {
		if seen[p.Path] {
			t.Errorf("%s reported twice: %v", p.Path, ps)
		}
		seen[p.Path] = true
	}
	// hour is no grain: day is not compared with it.
	for _, path := range []string{"/engine/segment_rows", "/engine/memory", "/engine/cores", "/tables/0/rows", "/tables/0/partitions/tiers/0/grain", "/tables/0/waivers/0/expires"} {
		if !seen[path] {
			t.Errorf("no problem at %s: %v", path, ps)
		}
	}
	if len(ps) != 6 {
		t.Errorf("got %d problems, want 6: %v", len(ps), ps)
	}
}

// The project config reports its schema problems and its decoding problems together.
func TestLoadConfigReportsEveryProblem(t *testing.T) {
	src := "colour: blue\nengines:\n  big: {segment_rows: \"1.5\", cores: 0x10}\n"
	_, err := schema.LoadConfig(".scangate.yaml", []byte(src), schema.DefaultLimits)
	var se *schema.Error
	if !errors.As(err, &se) || len(se.Problems) != 3 {
		t.Fatalf("LoadConfig: %v", err)
	}
	for i, w := range []string{`unknown key "colour"`, "not a whole number", "hexadecimal"} {
		if !strings.Contains(se.Problems[i].Message, w) {
			t.Errorf("problem %d = %q, want %q", i, se.Problems[i].Message, w)
		}
	}
}

// A refused value reached through aliases is reported once, at the anchor, and also when
// the anchor itself is never read (a merged key the mapping sets itself): a refused value
// must never load as nothing. A node with an anchor starts at the anchor.
func TestLoadRefusedThroughAlias(t *testing.T) {
	const src = `format: 1
model: m
engine: {segment_rows: 1M}
tables:
  - name: a
    rows: 5
    <<: {rows: &r 0x10}
    partitions: {scheme: none}
  - {name: b, rows: *r, partitions: {scheme: none}}
  - {name: c, rows: *r, partitions: {scheme: none}}
`
	ps := problems(t, []byte(src), schema.DefaultLimits)
	if len(ps) != 1 || ps[0].Pos != at(t, src, 7, "&r") || !strings.Contains(ps[0].Message, `"0x10" is a hexadecimal number`) {
		t.Errorf("problems = %v", ps)
	}
	const anchored = "format: 1\nmodel: m\nengine: {segment_rows: &s 0x10}\nbudgets: {refresh_memory: *s}\ntables: [{name: a, rows: *s, partitions: {scheme: none}}]\n"
	ps = problems(t, []byte(anchored), schema.DefaultLimits)
	if len(ps) != 1 || ps[0].Pos != at(t, anchored, 3, "&s") || ps[0].Path != "/engine/segment_rows" {
		t.Errorf("problems = %v", ps)
	}
}
