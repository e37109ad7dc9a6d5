package schema

import (
	"bytes"
	_ "embed"
	"errors"
	"fmt"
	"math/big"
	"slices"
	"sort"
	"strconv"
	"strings"
	"sync"

	"github.com/santhosh-tekuri/jsonschema/v6"
	"github.com/santhosh-tekuri/jsonschema/v6/kind"
	"golang.org/x/text/message"
)

//go:embed manifest.schema.json
var manifestSchema []byte

// ManifestSchema returns the embedded JSON Schema of the manifest format.
func ManifestSchema() []byte { return bytes.Clone(manifestSchema) }

// document is one embedded JSON Schema, compiled on first use and shared by every load.
type document struct {
	url      string
	raw      []byte
	compiled func() (*jsonschema.Schema, error)
	quick    func() (*quick, error)
	doc      func() any
	json     bool // a JSON file: types are worded as JSON names them
}

func newDocument(url string, raw []byte) *document {
	d := &document{url: url, raw: raw}
	d.doc = sync.OnceValue(func() any {
		v, _ := jsonschema.UnmarshalJSON(bytes.NewReader(raw))
		return v
	})
	d.quick = sync.OnceValues(func() (*quick, error) { return compileQuick(d.doc()) })
	d.compiled = sync.OnceValues(func() (*jsonschema.Schema, error) {
		c := jsonschema.NewCompiler()
		if err := c.AddResource(url, d.doc()); err != nil {
			return nil, err
		}
		return c.Compile(url)
	})
	return d
}

var manifestDoc = newDocument("https://github.com/scangate/scangate/schema/manifest.schema.json", manifestSchema)

var printer = message.NewPrinter(message.MatchLanguage("en"))

// check validates the tree against the schema and returns the conversion's problems and
// the schema's, with the values either found wrong: decoding skips those, so one wrong
// value is reported once.
func (t *tree) check(d *document) ([]Problem, badValues) {
	var bad badValues
	for ptr := range t.refused {
		bad.add(ptr)
	}
	ps := append([]Problem(nil), t.problems...)
	schemaPs, wrong := t.validate(d)
	for i, p := range schemaPs {
		if bad.covers(p.Path) {
			continue // the conversion refused this value and said why
		}
		ps = append(ps, p)
		if wrong[i] {
			bad.add(p.Path)
		}
	}
	return ps, bad
}

// validate checks the document against the schema and returns one problem per
// failing leaf, positioned at the value (or key) it is about; wrong[i] says the problem
// is about the value at its path (not a key missing from it).
func (t *tree) validate(d *document) (out []Problem, wrong []bool) {
	q, err := d.quick()
	if err != nil {
		panic(fmt.Sprintf("embedded schema %s: %v", d.url, err)) // a build defect, as below
	}
	root := t.root
	if !t.built {
		root = nodeValue(t.doc)
	}
	if q.check(root) == passes {
		return nil, nil
	}
	sch, err := d.compiled()
	if err != nil {
		// The schema is embedded and compiled in tests; reaching this is a build defect.
		panic(fmt.Sprintf("embedded schema %s does not compile: %v", d.url, err))
	}
	err = sch.Validate(t.values())
	if err == nil {
		return nil, nil
	}
	var ve *jsonschema.ValidationError
	ok := errors.As(err, &ve)
	if !ok {
		return []Problem{{Message: err.Error()}}, []bool{false}
	}
	var leaves []*jsonschema.ValidationError
	collectLeaves(ve, &leaves)
	seen := map[string]bool{}
	for _, l := range leaves {
		_, missing := l.ErrorKind.(*kind.Required)
		for _, p := range t.describe(d, l) {
			if k := p.Path + "\x00" + p.Message; !seen[k] {
				seen[k] = true
				out = append(out, p)
				wrong = append(wrong, !missing)
			}
		}
	}
	return out, wrong
}

// badValues are the pointers of values found wrong, so the checks that read them are
// skipped: at holds the pointers, within every pointer that holds one of them.
type badValues struct {
	at     map[string]bool
	within map[string]bool
}

func (b *badValues) add(ptr string) {
	if b.at == nil {
		b.at, b.within = map[string]bool{}, map[string]bool{}
	}
	b.at[ptr] = true
	for p := ptr; p != "" && !b.within[parentPointer(p)]; {
		p = parentPointer(p)
		b.within[p] = true
	}
}

// covers reports whether the value at ptr, or one holding it, is wrong.
func (b badValues) covers(ptr string) bool {
	for p := ptr; ; p = parentPointer(p) {
		if b.at[p] {
			return true
		}
		if p == "" {
			return false
		}
	}
}

// touches reports whether the value at ptr, one holding it or one inside it is wrong.
func (b badValues) touches(ptr string) bool { return b.within[ptr] || b.covers(ptr) }

// parentPointer is the pointer of the value holding ptr's; "" for the root.
func parentPointer(ptr string) string {
	if i := strings.LastIndexByte(ptr, '/'); i > 0 {
		return ptr[:i]
	}
	return ""
}

func collectLeaves(e *jsonschema.ValidationError, out *[]*jsonschema.ValidationError) {
	if len(e.Causes) == 0 {
		*out = append(*out, e)
		return
	}
	for _, c := range e.Causes {
		collectLeaves(c, out)
	}
}

// describe words a schema failure the way a manifest author thinks of it.
func (t *tree) describe(d *document, e *jsonschema.ValidationError) []Problem {
	ptr := pointer(e.InstanceLocation)
	loc := t.locate(ptr)
	at := func(p string, l located, msg string) Problem {
		n := l.value
		if n == nil {
			n = l.key
		}
		pr := problemAt(n, p, msg)
		return *pr
	}
	if msg, ok := t.settingProblem(d, e); ok {
		return []Problem{at(ptr, loc, msg)}
	}
	switch k := e.ErrorKind.(type) {
	case *kind.AdditionalProperties:
		// Point at each unknown key itself, and say which keys are allowed.
		var out []Problem
		for _, name := range k.Properties {
			p := child(ptr, name)
			l := t.locate(p)
			if l.key != nil {
				l.value = l.key
			}
			out = append(out, at(p, l, fmt.Sprintf("unknown key %q; allowed here: %s", name, t.allowedKeys(d, e))))
		}
		return out
	case *kind.FalseSchema:
		name := ""
		if n := len(e.InstanceLocation); n > 0 {
			name = e.InstanceLocation[n-1]
		}
		if loc.key != nil {
			loc.value = loc.key
		}
		return []Problem{at(ptr, loc, fmt.Sprintf("%q is not allowed here%s; remove it", name, t.schemeContext(e)))}
	case *kind.Required:
		return []Problem{at(ptr, loc, fmt.Sprintf("missing required key %s%s", quoteList(k.Missing), t.schemeContext(e)))}
	case *kind.Type:
		if d.json {
			return []Problem{at(ptr, loc, fmt.Sprintf("must be %s, not %s", jsonTypeWords(k.Want), jsonTypeWords([]string{k.Got})))}
		}
		return []Problem{at(ptr, loc, fmt.Sprintf("must be %s, not %s", typeWords(k.Want, e.SchemaURL), k.Got))}
	case *kind.Minimum:
		return []Problem{at(ptr, loc, fmt.Sprintf("must be >= %s", ratWords(k.Want)))}
	case *kind.ExclusiveMinimum:
		return []Problem{at(ptr, loc, fmt.Sprintf("must be > %s", ratWords(k.Want)))}
	case *kind.Maximum:
		return []Problem{at(ptr, loc, fmt.Sprintf("must be <= %s", ratWords(k.Want)))}
	case *kind.Pattern:
		return []Problem{at(ptr, loc, patternWords(fmt.Sprint(k.Got), e.SchemaURL))}
	case *kind.Const:
		if d.json {
			return []Problem{at(ptr, loc, fmt.Sprintf("must be %v, not %s", k.Want, jsonValueWords(valueAt(t.root, e.InstanceLocation))))}
		}
		return []Problem{at(ptr, loc, fmt.Sprintf("must be %v", k.Want))}
	case *kind.Enum:
		return []Problem{at(ptr, loc, fmt.Sprintf("%v is not one of %s", k.Got, enumWords(k.Want)))}
	case *kind.MinItems:
		return []Problem{at(ptr, loc, fmt.Sprintf("must list at least %d item(s)", k.Want))}
	case *kind.MinLength:
		if k.Want <= 1 {
			return []Problem{at(ptr, loc, "must not be empty")}
		}
		return []Problem{at(ptr, loc, fmt.Sprintf("must be at least %d characters, not %d", k.Want, k.Got))}
	case *kind.MaxLength:
		return []Problem{at(ptr, loc, fmt.Sprintf("must be at most %d characters", k.Want))}
	}
	return []Problem{at(ptr, loc, e.ErrorKind.LocalizedString(printer))}
}

// settingProblem words a rule setting of the project config that is not a number in
// its range, naming the rule, the setting, the value and the range (SettingProblem).
func (t *tree) settingProblem(d *document, e *jsonschema.ValidationError) (string, bool) {
	loc := e.InstanceLocation
	if d != configDoc || len(loc) != 3 || loc[0] != "rules" || loc[2] == "severity" {
		return "", false
	}
	switch e.ErrorKind.(type) {
	case *kind.Type, *kind.Minimum, *kind.ExclusiveMinimum, *kind.Maximum:
	default:
		return "", false
	}
	obj, _ := valueAt(d.doc(), []string{"properties", "rules", "properties", loc[1], "properties", loc[2]}).(map[string]any)
	r, ok := rangeOf(obj)
	if !ok {
		return "", false
	}
	return SettingProblem(loc[1], loc[2], valueWords(valueAt(t.root, loc)), r), true
}

// allowedKeys lists the properties the failing object's schema declares.
func (t *tree) allowedKeys(d *document, e *jsonschema.ValidationError) string {
	keys := schemaKeys(d, strings.TrimSuffix(e.SchemaURL, "/additionalProperties"))
	if len(keys) == 0 {
		return "see the manifest reference"
	}
	return strings.Join(keys, ", ")
}

// schemeContext names the partition scheme when a rule depends on it.
func (t *tree) schemeContext(e *jsonschema.ValidationError) string {
	if !strings.Contains(e.SchemaURL, "/partitions/allOf/") {
		return ""
	}
	loc := e.InstanceLocation
	for i := len(loc); i >= 0; i-- {
		if obj, ok := valueAt(t.root, loc[:i]).(map[string]any); ok {
			if s, ok := obj["scheme"].(string); ok {
				return fmt.Sprintf(" with scheme %s", s)
			}
		}
	}
	return ""
}

// schemaKeys lists, sorted, the properties of the schema object at url's fragment.
func schemaKeys(d *document, url string) []string {
	_, frag, _ := strings.Cut(url, "#")
	var tokens []string
	if frag != "" {
		tokens = strings.Split(strings.TrimPrefix(frag, "/"), "/")
	}
	obj, _ := valueAt(d.doc(), tokens).(map[string]any)
	props, _ := obj["properties"].(map[string]any)
	keys := make([]string, 0, len(props))
	for k := range props {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	return keys
}

func valueAt(v any, tokens []string) any {
	for _, tok := range tokens {
		switch x := v.(type) {
		case map[string]any:
			v = x[tok]
		case []any:
			i := 0
			if _, err := fmt.Sscan(tok, &i); err != nil || i < 0 || i >= len(x) {
				return nil
			}
			v = x[i]
		default:
			return nil
		}
	}
	return v
}

func typeWords(want []string, schemaURL string) string {
	switch {
	case strings.Contains(schemaURL, "/$defs/count"):
		return `a whole number or a count with a suffix such as "8Mi" or "7.2G"`
	case strings.Contains(schemaURL, "/$defs/bytes"):
		return `a byte size such as "500MB" or "64GiB"`
	}
	words := make([]string, len(want))
	for i, w := range want {
		switch w {
		case "object":
			words[i] = "a mapping"
		case "array":
			words[i] = "a list"
		case "integer":
			words[i] = "a whole number"
		default:
			words[i] = "a " + w
		}
	}
	return strings.Join(words, " or ")
}

// jsonTypeWords names JSON types as RFC 8259 does, with an article.
func jsonTypeWords(types []string) string {
	words := make([]string, len(types))
	for i, w := range types {
		switch w {
		case "object", "array", "integer":
			words[i] = "an " + w
		case "null":
			words[i] = "null"
		default:
			words[i] = "a " + w
		}
	}
	return strings.Join(words, " or ")
}

// jsonValueWords quotes a scalar as the file wrote it and names the type of anything
// else in JSON's words (object, array), for files that are JSON whatever their syntax.
func jsonValueWords(v any) string {
	switch v := v.(type) {
	case string:
		return strconv.Quote(v)
	case map[string]any:
		return "an object"
	case []any:
		return "an array"
	case nil:
		return "null"
	}
	return fmt.Sprint(v)
}

// ratWords writes a schema bound as a plain decimal: -0.99, not -99/100.
func ratWords(r *big.Rat) string {
	if r.IsInt() {
		return r.Num().String()
	}
	f, _ := r.Float64()
	return strconv.FormatFloat(f, 'g', -1, 64)
}

func patternWords(got, schemaURL string) string {
	switch {
	case strings.HasSuffix(schemaURL, "/$defs/fingerprint"):
		return fmt.Sprintf("%q is not a fingerprint; a fingerprint is 32 lowercase hexadecimal digits", got)
	case strings.HasSuffix(schemaURL, "/$defs/path"):
		return fmt.Sprintf("%q is not a repository path; write it relative to the repository root with forward slashes, without . or .. segments, a leading slash, a backslash or control characters", got)
	}
	if strings.HasSuffix(schemaURL, "/expires") || strings.HasSuffix(schemaURL, "/$defs/date") {
		return fmt.Sprintf("%q is not a date; write it as YYYY-MM-DD (ISO 8601)", got)
	}
	if !strings.Contains(schemaURL, "/$defs/count") && !strings.Contains(schemaURL, "/$defs/bytes") {
		return fmt.Sprintf("%q does not have the expected form", got)
	}
	if strings.Contains(schemaURL, "/$defs/bytes") {
		return fmt.Sprintf("%q is not a byte size; write a number with a unit: B, kB, MB, GB, TB, PB or KiB, MiB, GiB, TiB, PiB (e.g. \"64GiB\")", got)
	}
	return fmt.Sprintf("%q is not a count; write digits with an optional suffix k, M, G, T (powers of 1000) or Ki, Mi, Gi, Ti (powers of 1024), e.g. \"8Mi\"", got)
}

func enumWords(want []any) string {
	s := make([]string, len(want))
	for i, w := range want {
		s[i] = fmt.Sprint(w)
	}
	return strings.Join(s, ", ")
}

func quoteList(names []string) string {
	q := make([]string, len(names))
	for i, n := range names {
		q[i] = fmt.Sprintf("%q", n)
	}
	return strings.Join(q, ", ")
}

// sortProblems orders problems by position and drops exact repeats.
func sortProblems(ps []Problem) []Problem {
	sort.SliceStable(ps, func(i, j int) bool {
		a, b := ps[i], ps[j]
		if a.Pos.Line != b.Pos.Line {
			return a.Pos.Line < b.Pos.Line
		}
		if a.Pos.Col != b.Pos.Col {
			return a.Pos.Col < b.Pos.Col
		}
		if a.Message != b.Message {
			return a.Message < b.Message
		}
		return a.Path < b.Path
	})
	return slices.CompactFunc(ps, func(a, b Problem) bool { return a == b })
}

//go:embed output.schema.json
var outputSchema []byte

// OutputSchema returns the JSON Schema of the JSON report.
func OutputSchema() []byte { return bytes.Clone(outputSchema) }
