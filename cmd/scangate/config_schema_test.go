package main

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

// The project config's JSON Schema is generated from the manifest schema (engine and
// budget fields, quantities) and the rule registry (rule IDs, parameters), so the three
// never disagree; this test fails when it drifts (go generate ./... rebuilds it).
func TestGeneratedConfigSchema(t *testing.T) {
	got := configSchema(t)
	path := filepath.Join(root(t), "schema", "config.schema.json")
	if *update {
		if err := os.WriteFile(path, got, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	if want := schema.ConfigSchema(); !bytes.Equal(got, want) && !*update {
		t.Errorf("schema/config.schema.json is out of date; run go generate ./...")
	}
}

// The waiver rule enum of the manifest schema lists exactly the rules a waiver can name,
// the checking rules of the registry; go generate ./... rewrites it, never a hand.
func TestGeneratedWaiverRuleEnum(t *testing.T) {
	path := filepath.Join(root(t), "schema", "manifest.schema.json")
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	m := waiverEnum.FindSubmatchIndex(data)
	if m == nil {
		t.Fatal("schema/manifest.schema.json has no waiver rule enum after the waiver rule's description")
	}
	indent := "\n" + string(data[m[4]:m[5]])
	var items []string
	for _, r := range rules.All() {
		if r.Check != nil || r.CheckModel != nil {
			items = append(items, indent+"  "+strconv.Quote(r.ID))
		}
	}
	want := strings.Join(items, ",")
	got := string(data[m[2]:m[3]])
	if got == want {
		return
	}
	if !*update {
		t.Fatalf("the waiver rule enum of schema/manifest.schema.json differs from the registry's checking rules; run go generate ./...")
	}
	out := append(append(append([]byte{}, data[:m[2]]...), want...), data[m[3]:]...)
	if err := os.WriteFile(path, out, 0o644); err != nil {
		t.Fatal(err)
	}
}

// waiverEnum finds the enum's items (group 1) and the indentation of its closing
// bracket (group 2).
var waiverEnum = regexp.MustCompile(`"description": "ID of the rule whose findings on this table are accepted\.",\s*"enum": \[((?:\s*"[a-z-]+",?)*)\n([ ]*)\]`)

type obj = map[string]any

// settingSchema is a rule setting's schema: its type and range, so the schema refuses a
// value the rule would never use (rules.ConfigFrom checks the same range).
func settingSchema(p rules.Param) obj {
	o := obj{"title": p.Name, "description": p.Doc + " " + upperFirst(p.Words()) + ".", "type": "number", "default": p.Default, "maximum": p.Max}
	if p.Integer {
		o["type"] = "integer"
	}
	if p.MinExclusive {
		o["exclusiveMinimum"] = p.Min
	} else {
		o["minimum"] = p.Min
	}
	return o
}

func upperFirst(s string) string { return strings.ToUpper(s[:1]) + s[1:] }

func configSchema(t *testing.T) []byte {
	var manifest obj
	if err := json.Unmarshal(schema.ManifestSchema(), &manifest); err != nil {
		t.Fatal(err)
	}
	defs := manifest["$defs"].(obj)
	engine := obj{}
	for k, v := range defs["engine"].(obj) {
		switch k {
		case "if", "then":
		case "properties":
			props := obj{}
			for name, p := range v.(obj) {
				if name != "profile" {
					props[name] = p
				}
			}
			engine[k] = props
		default:
			engine[k] = v
		}
	}
	engine["title"] = "Engine profile"
	engine["description"] = "Engine settings a manifest can start from with engine: {profile: NAME}; the manifest's own engine fields override these."
	ruleProps := obj{}
	for _, r := range rules.All() {
		if r.Check == nil && r.ID == rules.Schema.ID {
			continue
		}
		props := obj{"severity": obj{
			"title":       "Severity",
			"description": "Grade every finding of the rule at this level, or turn the rule off.",
			"enum":        []any{"error", "warning", "note", "off"},
		}}
		for _, p := range r.Params {
			props[p.Name] = settingSchema(p)
		}
		ruleProps[r.ID] = obj{
			"title":                r.ID,
			"description":          r.Title + ". Default severity " + r.Default.String() + ".",
			"type":                 "object",
			"additionalProperties": false,
			"properties":           props,
		}
	}
	globs := func(title, desc string) obj {
		return obj{"title": title, "description": desc, "type": "array", "items": obj{"type": "string", "minLength": 1}}
	}
	doc := obj{
		"$schema":              "https://json-schema.org/draft/2020-12/schema",
		"$id":                  "https://github.com/scangate/scangate/schema/config.schema.json",
		"title":                "scangate project config (" + schema.ConfigFile + ")",
		"description":          "Engine profiles, default budgets, rule settings and the files a directory walk checks, for every manifest of a repository. Generated from the manifest schema and the rule registry.",
		"type":                 "object",
		"additionalProperties": false,
		"properties": obj{
			"engines": obj{
				"title":                "Engine profiles",
				"description":          "Named engine settings manifests refer to with engine: {profile: NAME}.",
				"type":                 "object",
				"propertyNames":        obj{"pattern": "^[A-Za-z0-9][A-Za-z0-9_.-]*$"},
				"additionalProperties": obj{"$ref": "#/$defs/engine"},
			},
			"budgets": obj{"$ref": "#/$defs/budgets"},
			"rules": obj{
				"title":                "Rule settings",
				"description":          "Per rule: a severity override (or off) and its thresholds.",
				"type":                 "object",
				"additionalProperties": false,
				"properties":           ruleProps,
			},
			"include": globs("Include", "Globs (** for any directories) a file found by walking a directory must match, relative to this file. Files named on the command line are always checked."),
			"exclude": globs("Exclude", "Globs a file found by walking a directory must not match, relative to this file."),
		},
		"$defs": obj{
			"count":   defs["count"],
			"bytes":   defs["bytes"],
			"engine":  engine,
			"budgets": defs["budgets"],
		},
	}
	var b bytes.Buffer
	enc := json.NewEncoder(&b)
	enc.SetIndent("", "  ")
	enc.SetEscapeHTML(false)
	if err := enc.Encode(doc); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}
