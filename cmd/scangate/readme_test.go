package main

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

// The README's manifest reference and rule table are generated from the embedded schema
// and the rule registry; this test fails when they drift (go generate ./... rebuilds them).
func TestGeneratedREADME(t *testing.T) {
	path := filepath.Join(root(t), "README.md")
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	text := string(data)
	for _, sec := range []struct{ name, body string }{
		{"manifest-reference", manifestReference(t)},
		{"rule-table", ruleTable()},
	} {
		start, end := "<!-- "+sec.name+":start -->\n", "<!-- "+sec.name+":end -->"
		i, j := strings.Index(text, start), strings.Index(text, end)
		if i < 0 || j < i {
			t.Fatalf("README.md lacks the %s markers", sec.name)
		}
		current := text[i+len(start) : j]
		if current != sec.body {
			if *update {
				text = text[:i+len(start)] + sec.body + text[j:]
				continue
			}
			t.Errorf("README.md section %s is out of date; run go generate ./...", sec.name)
		}
	}
	if *update {
		if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	// The two commands a newcomer needs must be in the README as written.
	for _, cmd := range []string{"go run ./cmd/scangate check testdata/demo", "go test ./..."} {
		if !strings.Contains(text, cmd) {
			t.Errorf("README.md lacks the command %q", cmd)
		}
	}
}

func ruleTable() string {
	var b strings.Builder
	b.WriteString("| rule | default | what it checks |\n|---|---|---|\n")
	for _, r := range rules.All() {
		fmt.Fprintf(&b, "| `%s` | %s | %s |\n", r.ID, r.Default, r.Title)
	}
	return b.String()
}

// manifestReference lists every key of the manifest with its type and description.
func manifestReference(t *testing.T) string {
	var doc map[string]any
	if err := json.Unmarshal(schema.ManifestSchema(), &doc); err != nil {
		t.Fatal(err)
	}
	defs := doc["$defs"].(map[string]any)
	var b strings.Builder
	b.WriteString("| key | type | required | description |\n|---|---|---|---|\n")
	var walk func(prefix string, node map[string]any, seen []string)
	walk = func(prefix string, node map[string]any, seen []string) {
		node = resolve(node, defs)
		props, _ := node["properties"].(map[string]any)
		required := map[string]bool{}
		for _, r := range asSlice(node["required"]) {
			required[r.(string)] = true
		}
		keys := make([]string, 0, len(props))
		for k := range props {
			keys = append(keys, k)
		}
		slices.Sort(keys)
		for _, k := range keys {
			raw := props[k].(map[string]any)
			p := resolve(raw, defs)
			desc, _ := raw["description"].(string)
			if desc == "" {
				desc, _ = p["description"].(string)
			}
			req := ""
			if required[k] {
				req = "yes"
			}
			fmt.Fprintf(&b, "| `%s%s` | %s | %s | %s |\n", prefix, k, typeOf(p), req, desc)
			ref, _ := raw["$ref"].(string)
			if ref == "" {
				if items, ok := p["items"].(map[string]any); ok {
					ref, _ = items["$ref"].(string)
					if ref != "" && !slices.Contains(seen, ref) {
						walk(prefix+k+"[].", items, append(seen, ref))
					}
				}
				continue
			}
			if !slices.Contains(seen, ref) {
				walk(prefix+k+".", raw, append(seen, ref))
			}
		}
	}
	walk("", doc, nil)
	return b.String()
}

func resolve(node map[string]any, defs map[string]any) map[string]any {
	if ref, ok := node["$ref"].(string); ok {
		return defs[strings.TrimPrefix(ref, "#/$defs/")].(map[string]any)
	}
	return node
}

func asSlice(v any) []any {
	s, _ := v.([]any)
	return s
}

func typeOf(p map[string]any) string {
	if e, ok := p["enum"].([]any); ok {
		parts := make([]string, len(e))
		for i, v := range e {
			parts[i] = fmt.Sprint(v)
		}
		return strings.Join(parts, " \\| ")
	}
	if c, ok := p["const"]; ok {
		return fmt.Sprint(c)
	}
	if title, _ := p["title"].(string); title == "Count" || title == "Byte size" {
		return strings.ToLower(title)
	}
	switch ty := p["type"].(type) {
	case string:
		if ty == "array" {
			return "list"
		}
		if ty == "object" {
			return "mapping"
		}
		return ty
	}
	return "any"
}
