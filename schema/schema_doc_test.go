package schema_test

import (
	"encoding/json"
	"fmt"
	"slices"
	"sort"
	"strconv"
	"strings"
	"testing"

	"github.com/scangate/scangate/schema"
)

func schemaDoc(t *testing.T) map[string]any {
	t.Helper()
	var doc map[string]any
	if err := json.Unmarshal(schema.ManifestSchema(), &doc); err != nil {
		t.Fatalf("manifest.schema.json is not JSON: %v", err)
	}
	return doc
}

func TestSchemaDialect(t *testing.T) {
	if got := schemaDoc(t)["$schema"]; got != "https://json-schema.org/draft/2020-12/schema" {
		t.Errorf("$schema = %v", got)
	}
}

// resolve follows a local "$ref" ("#/$defs/name") to the schema object it names.
func resolve(t *testing.T, doc map[string]any, ref string) map[string]any {
	t.Helper()
	frag, ok := strings.CutPrefix(ref, "#/")
	if !ok {
		t.Fatalf("$ref %q is not local to the document", ref)
	}
	var v any = doc
	for _, tok := range strings.Split(frag, "/") {
		m, _ := v.(map[string]any)
		v = m[tok]
	}
	obj, ok := v.(map[string]any)
	if !ok {
		t.Fatalf("$ref %q does not resolve to a schema object", ref)
	}
	return obj
}

// conditional keywords only restate properties declared beside them, so their
// "properties" entries are checked for being declared, not for being documented.
var conditional = map[string]bool{"if": true, "then": true, "else": true, "not": true}

// propertyDocs walks every "properties" entry outside conditionals and returns the
// JSON pointers it checked and the complaints about missing titles or descriptions.
func propertyDocs(t *testing.T, doc map[string]any) (checked, missing []string) {
	text := func(obj map[string]any, key string) string {
		s, _ := obj[key].(string)
		if s == "" {
			if ref, ok := obj["$ref"].(string); ok {
				s, _ = resolve(t, doc, ref)[key].(string)
			}
		}
		return strings.TrimSpace(s)
	}
	var walk func(v any, path string, inConditional bool)
	walk = func(v any, path string, inConditional bool) {
		switch x := v.(type) {
		case []any:
			for i, e := range x {
				walk(e, path+"/"+strconv.Itoa(i), inConditional)
			}
		case map[string]any:
			if props, ok := x["properties"].(map[string]any); ok && !inConditional {
				for name, p := range props {
					at := path + "/properties/" + name
					checked = append(checked, at)
					obj, ok := p.(map[string]any)
					if !ok {
						missing = append(missing, at+" is not a schema object")
						continue
					}
					for _, key := range []string{"title", "description"} {
						if text(obj, key) == "" {
							missing = append(missing, at+" has no "+key)
						}
					}
				}
			}
			keys := make([]string, 0, len(x))
			for k := range x {
				keys = append(keys, k)
			}
			sort.Strings(keys)
			for _, k := range keys {
				walk(x[k], path+"/"+k, inConditional || conditional[k])
			}
		}
	}
	walk(doc, "#", false)
	sort.Strings(checked)
	sort.Strings(missing)
	return checked, missing
}

// The reference documentation is generated from the schema, so every property a user can
// write needs a title and a description, on itself or on the definition it refers to.
func TestSchemaPropertiesDocumented(t *testing.T) {
	checked, missing := propertyDocs(t, schemaDoc(t))
	for _, m := range missing {
		t.Error(m)
	}
	// The walk must reach every level of the format-1 manifest, $defs included.
	for _, want := range []string{
		"#/properties/format",
		"#/properties/tables",
		"#/$defs/engine/properties/segment_rows",
		"#/$defs/budgets/properties/refresh_memory",
		"#/$defs/table/properties/growth_per_year",
		"#/$defs/partitions/properties/tiers",
		"#/$defs/tier/properties/keep",
		"#/$defs/item/properties/rows",
		"#/$defs/column/properties/encoded_bytes",
	} {
		if !slices.Contains(checked, want) {
			t.Errorf("%s was not checked; checked: %v", want, checked)
		}
	}
}

// The check itself finds a missing title, a missing description and an empty one, and
// accepts text found through a $ref.
func TestPropertyDocsCatchesGaps(t *testing.T) {
	var doc map[string]any
	err := json.Unmarshal([]byte(`{
		"properties": {
			"ok": {"title": "Ok", "description": "Fine."},
			"viaRef": {"$ref": "#/$defs/thing"},
			"noTitle": {"description": "Only this."},
			"blank": {"title": " ", "description": "Blank title."},
			"nested": {"title": "N", "description": "D", "type": "object",
				"properties": {"inner": {"title": "Inner"}}}
		},
		"if": {"properties": {"ok": {"const": 1}}},
		"then": {"properties": {"noTitle": false}},
		"$defs": {"thing": {"title": "Thing", "description": "From the definition."}}
	}`), &doc)
	if err != nil {
		t.Fatal(err)
	}
	_, missing := propertyDocs(t, doc)
	want := []string{
		"#/properties/blank has no title",
		"#/properties/nested/properties/inner has no description",
		"#/properties/noTitle has no title",
	}
	if !slices.Equal(missing, want) {
		t.Errorf("missing = %q\nwant %q", missing, want)
	}
}

// undeclared lists the keys that an object schema's conditionals (if, then, else, not,
// allOf) or its required list name but its properties do not declare.
func undeclared(doc map[string]any) []string {
	applicators := []string{"if", "then", "else", "not", "allOf"}
	var names func(v any, out map[string]bool)
	names = func(v any, out map[string]bool) {
		switch x := v.(type) {
		case []any:
			for _, e := range x {
				names(e, out)
			}
		case map[string]any:
			if props, ok := x["properties"].(map[string]any); ok {
				for n := range props {
					out[n] = true
				}
			}
			if req, ok := x["required"].([]any); ok {
				for _, n := range req {
					out[fmt.Sprint(n)] = true
				}
			}
			for _, k := range applicators {
				if c, ok := x[k]; ok {
					names(c, out)
				}
			}
		}
	}
	var out []string
	var walk func(v any, path string)
	walk = func(v any, path string) {
		obj, ok := v.(map[string]any)
		if !ok {
			return
		}
		if props, ok := obj["properties"].(map[string]any); ok {
			used := map[string]bool{}
			names(map[string]any{"required": obj["required"]}, used)
			for _, k := range applicators {
				if c, ok := obj[k]; ok {
					names(c, used)
				}
			}
			for n := range used {
				if _, declared := props[n]; !declared {
					out = append(out, fmt.Sprintf("%s names %q, which it does not declare", path, n))
				}
			}
		}
		for _, k := range []string{"properties", "$defs"} {
			if m, ok := obj[k].(map[string]any); ok {
				for name, sub := range m {
					walk(sub, path+"/"+k+"/"+name)
				}
			}
		}
		walk(obj["items"], path+"/items")
	}
	walk(doc, "#")
	sort.Strings(out)
	return out
}

// A key named only in a conditional or in required never matches anything the schema
// allows: a typo there silently disables the rule it guards.
func TestSchemaConditionalsNameDeclaredProperties(t *testing.T) {
	for _, u := range undeclared(schemaDoc(t)) {
		t.Error(u)
	}
}

func TestUndeclaredCatchesTypos(t *testing.T) {
	var doc map[string]any
	err := json.Unmarshal([]byte(`{
		"properties": {
			"scheme": {}, "count": {},
			"list": {"items": {"properties": {"a": {}}, "required": ["b"]}}
		},
		"required": ["scheme"],
		"allOf": [{"if": {"properties": {"scheme": {"const": "even"}}}, "then": {"required": ["cuont"]}}],
		"else": {"properties": {"tires": false}}
	}`), &doc)
	if err != nil {
		t.Fatal(err)
	}
	want := []string{
		`# names "cuont", which it does not declare`,
		`# names "tires", which it does not declare`,
		`#/properties/list/items names "b", which it does not declare`,
	}
	if got := undeclared(doc); !slices.Equal(got, want) {
		t.Errorf("undeclared = %q\nwant %q", got, want)
	}
}
