package schema

import (
	"encoding/json"
	"io/fs"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
)

// The quick check must never disagree with the JSON Schema library (the reference
// implementation of the JSON Schema 2020-12 validation vocabulary here): when it says
// passes the library must accept, when it says fails the library must reject. "unsure"
// is always allowed; it only costs time.

func TestQuickCompilesEmbeddedSchemas(t *testing.T) {
	for _, d := range []*document{manifestDoc, configDoc, baselineDoc, surveyDoc} {
		if _, err := d.quick(); err != nil {
			t.Errorf("%s: %v", d.url, err)
		}
	}
}

// agree reports a disagreement between the quick check and the library on one value.
func agree(t *testing.T, name string, d *document, v any) verdict {
	t.Helper()
	q, err := d.quick()
	if err != nil {
		t.Fatal(err)
	}
	sch, err := d.compiled()
	if err != nil {
		t.Fatal(err)
	}
	got := q.check(v)
	libErr := sch.Validate(v)
	switch {
	case got == passes && libErr != nil:
		t.Errorf("%s: quick check passes what the library rejects: %v", name, libErr)
	case got == fails && libErr == nil:
		t.Errorf("%s: quick check fails what the library accepts", name)
	}
	return got
}

func testdataFiles(t testing.TB) []string {
	var paths []string
	for _, root := range []string{"testdata", filepath.Join("..", "testdata")} {
		err := filepath.WalkDir(root, func(path string, d fs.DirEntry, err error) error {
			if err != nil || !d.Type().IsRegular() {
				return err
			}
			if ext := filepath.Ext(path); ext == ".yaml" || ext == ".yml" || ext == ".json" {
				paths = append(paths, path)
			}
			return nil
		})
		if err != nil {
			t.Fatal(err)
		}
	}
	return paths
}

func TestQuickAgreesWithLibraryOnTestdata(t *testing.T) {
	n := map[verdict]int{}
	for _, path := range testdataFiles(t) {
		data, err := os.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		tr, _ := parse(path, data, DefaultLimits, "")
		if tr == nil {
			continue
		}
		viewsAgree(t, path, data, tr)
		n[agree(t, path, manifestDoc, tr.root)]++
		agree(t, path+" (as a config)", configDoc, tr.root)
		agree(t, path+" (as a baseline)", baselineDoc, tr.root)
		agree(t, path+" (as a survey)", surveyDoc, tr.root)
		// Every manifest meant to be valid must take the quick path, or the quick check
		// has quietly stopped saving time.
		if strings.Contains(path, filepath.Join("testdata", "baselines", "good-")) {
			if got := mustQuick(t, baselineDoc).check(tr.root); got != passes {
				t.Errorf("%s: valid baseline not passed by the quick check (verdict %d)", path, got)
			}
		}
		if strings.Contains(path, filepath.Join("testdata", "valid")) || strings.Contains(path, filepath.Join("testdata", "demo")) {
			if got := mustQuick(t, manifestDoc).check(tr.root); got != passes {
				t.Errorf("%s: valid manifest not passed by the quick check (verdict %d)", path, got)
			}
		}
	}
	if n[passes] < 20 || n[fails] < 20 {
		t.Errorf("too few verdicts of each kind to compare: %v", n)
	}
}

// viewsAgree: the tree read through views (a manifest's) is the tree built (a config's):
// the same problems, the same values and the same quick verdicts.
func viewsAgree(t *testing.T, name string, data []byte, tr *tree) {
	t.Helper()
	vt, _ := parseTree(isJSON(name), data, DefaultLimits, "", false)
	if vt == nil || vt.built || vt.root != nil {
		t.Fatalf("%s: the built tree parses, the viewed one does not or holds values", name)
	}
	if !reflect.DeepEqual(vt.problems, tr.problems) || !reflect.DeepEqual(vt.refused, tr.refused) {
		t.Errorf("%s: problems viewed %v, built %v", name, vt.problems, tr.problems)
	}
	view := nodeValue(vt.doc)
	if got := built(view); !reflect.DeepEqual(got, tr.root) {
		t.Errorf("%s: viewed values\n%#v\nbuilt\n%#v", name, got, tr.root)
	}
	for _, d := range []*document{manifestDoc, configDoc, baselineDoc} {
		q := mustQuick(t, d)
		if v, b := q.check(view), q.check(tr.root); v != b {
			t.Errorf("%s: quick verdict on the views %d, on the built values %d (%s)", name, v, b, d.url)
		}
	}
	if vt.values(); !reflect.DeepEqual(vt.root, tr.root) || !reflect.DeepEqual(vt.problems, tr.problems) {
		t.Errorf("%s: values built after the check differ from those built at once", name)
	}
}

func mustQuick(t *testing.T, d *document) *quick {
	q, err := d.quick()
	if err != nil {
		t.Fatal(err)
	}
	return q
}

// edgeValues replace one leaf at a time in valid manifests: the schema's bounds, their
// neighbours, numbers the quick check leaves to the library, and other types.
var edgeValues = []any{
	json.Number("0"), json.Number("-0"), json.Number("1"), json.Number("-1"), json.Number("0.5"),
	json.Number("1.0"), json.Number("1e3"), json.Number("-0.99"), json.Number("-0.991"),
	json.Number("100"), json.Number("100.000000000001"), json.Number("4096"), json.Number("4097"),
	json.Number("1000000000"), json.Number("1000000000.5"), json.Number("100000"), json.Number("100000.1"),
	json.Number("1000000"), json.Number("1000001"), json.Number("0.0000000000000001"),
	json.Number("123456789012345678901234567890"),
	"", "x", "8Mi", "1.5G", "64GiB", "10 GB", "1KB", "list", "time", "even", "none", "day", "string", "int64",
	strings.Repeat("é", 200), strings.Repeat("é", 201),
	true, nil, []any{}, map[string]any{},
}

func TestQuickAgreesWithLibraryOnEdges(t *testing.T) {
	paths, _ := filepath.Glob(filepath.Join("..", "testdata", "valid", "*.yaml"))
	demo, _ := filepath.Glob(filepath.Join("..", "testdata", "demo", "*.yaml"))
	paths = append(paths, demo...)
	if len(paths) == 0 {
		t.Fatal("no valid manifests found")
	}
	for _, path := range paths {
		data, err := os.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		tr, ps := parse(path, data, DefaultLimits, "")
		if tr == nil {
			t.Fatalf("%s: %v", path, ps)
		}
		var leaves []func(any) any // each sets one leaf and returns the old value
		collectSetters(tr.root, &leaves)
		for _, set := range leaves {
			for _, e := range edgeValues {
				old := set(e)
				agree(t, path, manifestDoc, tr.root)
				set(old)
			}
		}
		// Removing each key in turn probes required and the if/then/else conditions.
		forEachRemoval(tr.root, func() { agree(t, path+" (key removed)", manifestDoc, tr.root) })
	}
}

func collectSetters(v any, out *[]func(any) any) {
	switch v := v.(type) {
	case map[string]any:
		for k, c := range v {
			*out = append(*out, func(n any) any { old := v[k]; v[k] = n; return old })
			collectSetters(c, out)
		}
	case []any:
		for i, c := range v {
			*out = append(*out, func(n any) any { old := v[i]; v[i] = n; return old })
			collectSetters(c, out)
		}
	}
}

func forEachRemoval(v any, probe func()) {
	switch v := v.(type) {
	case map[string]any:
		for k, c := range v {
			delete(v, k)
			probe()
			v[k] = c
			forEachRemoval(c, probe)
		}
	case []any:
		for _, c := range v {
			forEachRemoval(c, probe)
		}
	}
}

// FuzzQuickAgreesWithLibrary: on any input that parses, the quick check and the library
// never disagree.
func FuzzQuickAgreesWithLibrary(f *testing.F) {
	for _, path := range testdataFiles(f) {
		if data, err := os.ReadFile(path); err == nil && !strings.Contains(path, "fuzz") {
			f.Add(data)
		}
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		tr, _ := parse("fuzz.yaml", data, DefaultLimits, "")
		if tr == nil {
			return
		}
		viewsAgree(t, "fuzz.yaml", data, tr)
		agree(t, "fuzz.yaml", manifestDoc, tr.root)
		agree(t, "fuzz.yaml (as a config)", configDoc, tr.root)
	})
}

// A schema that refers to itself compiles and checks nested values; a keyword the quick
// check does not implement is refused at compile time rather than passed over.
func TestQuickCompileRecursionAndUnknownKeywords(t *testing.T) {
	doc := map[string]any{
		"$defs": map[string]any{"n": map[string]any{
			"type":       "object",
			"properties": map[string]any{"next": map[string]any{"$ref": "#/$defs/n"}},
		}},
		"$ref": "#/$defs/n",
	}
	q, err := compileQuick(doc)
	if err != nil {
		t.Fatal(err)
	}
	deep := map[string]any{"next": map[string]any{"next": map[string]any{}}}
	if got := q.check(deep); got != passes {
		t.Errorf("nested objects: %d, want passes", got)
	}
	if got := q.check(map[string]any{"next": map[string]any{"next": json.Number("1")}}); got != fails {
		t.Errorf("a number where an object belongs: %d, want fails", got)
	}
	for _, kw := range []string{"format", "maxItems", "uniqueItems", "multipleOf", "exclusiveMaximum", "oneOf"} {
		if _, err := compileQuick(map[string]any{kw: json.Number("1")}); err == nil || !strings.Contains(err.Error(), kw) {
			t.Errorf("keyword %s: err %v, want it refused by name", kw, err)
		}
	}
}
