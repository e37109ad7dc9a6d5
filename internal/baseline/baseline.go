// Package baseline records the findings a repository already has, so a gate adopted on
// a noisy repository fails only on new ones. Entries are matched by the stable
// fingerprint (rule, repository path, table, subject), never by line.
package baseline

import (
	"bytes"
	"encoding/json"
	"fmt"
	"sort"
	"strconv"
	"strings"

	"github.com/scangate/scangate/internal/escape"
	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

// SchemaVersion is the version of the baseline file's shape.
const SchemaVersion = 1

// DefaultFile is where `scangate baseline write` puts the baseline unless told otherwise.
const DefaultFile = ".scangate-baseline.json"

// File is a baseline file.
type File struct {
	SchemaVersion int     `json:"schema_version"`
	Entries       []Entry `json:"entries"`
}

// Entry is one accepted finding. Only Fingerprint matches; the rest helps reviewers.
type Entry struct {
	Fingerprint string `json:"fingerprint"`
	Rule        string `json:"rule"`
	File        string `json:"file"`
	Table       string `json:"table,omitempty"`
	Message     string `json:"message"`
}

// Build records findings (schema findings excluded: a broken file is never accepted),
// one entry per fingerprint, sorted so the file diffs cleanly in review. Findings that
// share a fingerprint differ only in their message; the least one is kept, so the file
// does not depend on the order of the findings.
func Build(findings []rules.Finding, uri func(file string) string) File {
	at := map[string]int{}
	out := File{SchemaVersion: SchemaVersion, Entries: []Entry{}}
	for _, f := range findings {
		if f.Rule == rules.Schema.ID {
			continue
		}
		u := uri(f.File)
		fp := rules.Fingerprint(f, u)
		if i, seen := at[fp]; seen {
			out.Entries[i].Message = min(out.Entries[i].Message, f.Message)
			continue
		}
		at[fp] = len(out.Entries)
		out.Entries = append(out.Entries, Entry{Fingerprint: fp, Rule: f.Rule, File: u, Table: f.Table, Message: f.Message})
	}
	sort.Slice(out.Entries, func(i, j int) bool {
		a, b := out.Entries[i], out.Entries[j]
		if a.File != b.File {
			return a.File < b.File
		}
		if a.Table != b.Table {
			return a.Table < b.Table
		}
		if a.Rule != b.Rule {
			return a.Rule < b.Rule
		}
		return a.Fingerprint < b.Fingerprint
	})
	return out
}

// Marshal writes the baseline as indented JSON with a final newline.
func (b File) Marshal() []byte {
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetIndent("", "  ")
	enc.SetEscapeHTML(false)
	_ = enc.Encode(b)               // plain strings and ints cannot fail to encode
	return escape.JSON(buf.Bytes()) // the same values, no hidden rune raw
}

// Parse reads a baseline file: strict JSON valid against the baseline schema, each
// entry's rule a rule of the registry, each fingerprint recorded once. Invalid input
// returns a *schema.Error listing every problem at its line and column.
func Parse(file string, data []byte, lim schema.Limits) (File, error) {
	doc, err := schema.LoadBaseline(file, data, lim)
	if err != nil {
		return File{}, err
	}
	b := decode(doc.Value)
	if ps := b.problems(doc); len(ps) > 0 {
		return File{}, &schema.Error{File: file, Problems: ps}
	}
	return b, nil
}

// decode reads a document the schema has passed, so every field has its type.
func decode(v any) File {
	root, _ := v.(map[string]any)
	list, _ := root["entries"].([]any)
	b := File{SchemaVersion: SchemaVersion, Entries: make([]Entry, 0, len(list))}
	for _, raw := range list {
		e, _ := raw.(map[string]any)
		text := func(k string) string { s, _ := e[k].(string); return s }
		b.Entries = append(b.Entries, Entry{
			Fingerprint: text("fingerprint"), Rule: text("rule"), File: text("file"),
			Table: text("table"), Message: text("message"),
		})
	}
	return b
}

// problems are what the schema cannot say: rules of the registry, fingerprints once.
func (b File) problems(doc *schema.Document) []schema.Problem {
	var out []schema.Problem
	add := func(ptr, msg string) {
		out = append(out, schema.Problem{Pos: doc.Pos(ptr), Path: ptr, Message: msg})
	}
	first := make(map[string]int, len(b.Entries))
	for i, e := range b.Entries {
		at := "/entries/" + strconv.Itoa(i)
		switch _, known := rules.Lookup(e.Rule); {
		case e.Rule == rules.Schema.ID:
			add(at+"/rule", "schema findings are never baselined (a broken manifest always fails); remove the entry")
		case !known:
			add(at+"/rule", fmt.Sprintf("unknown rule %q; use one of %s", e.Rule, ruleList()))
		}
		if j, dup := first[e.Fingerprint]; dup {
			line := doc.Pos("/entries/" + strconv.Itoa(j) + "/fingerprint").Line
			add(at+"/fingerprint", fmt.Sprintf("fingerprint %s is already recorded at line %d; remove one of the entries", e.Fingerprint, line))
			continue
		}
		first[e.Fingerprint] = i
	}
	return out
}

// ruleList names the rules a baseline may record: every rule but schema.
func ruleList() string {
	var ids []string
	for _, r := range rules.All() {
		if r.ID != rules.Schema.ID {
			ids = append(ids, r.ID)
		}
	}
	return strings.Join(ids, ", ")
}

// Apply marks the findings the baseline holds and returns how many baseline entries
// matched none: findings fixed since the baseline was written. Every entry counts, so
// two entries of one fingerprint (Parse refuses them; a File built in code may hold
// them) are two fixed entries.
func (b File) Apply(findings []rules.Finding, uri func(file string) string) (fixed int) {
	want := make(map[string]bool, len(b.Entries))
	for _, e := range b.Entries {
		want[e.Fingerprint] = true
	}
	matched := map[string]bool{}
	for i := range findings {
		f := &findings[i]
		if f.Rule == rules.Schema.ID {
			continue
		}
		fp := rules.Fingerprint(*f, uri(f.File))
		if want[fp] {
			f.Baselined = true
			matched[fp] = true
		}
	}
	for _, e := range b.Entries {
		if !matched[e.Fingerprint] {
			fixed++
		}
	}
	return fixed
}
