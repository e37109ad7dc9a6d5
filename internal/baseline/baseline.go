// Package baseline records the findings a repository already has, so a gate adopted on
// a noisy repository fails only on new ones. Entries are matched by the stable
// fingerprint (rule, repository path, table, subject), never by line.
package baseline

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"sort"

	"github.com/scangate/scangate/internal/escape"
	"github.com/scangate/scangate/rules"
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
// one entry per fingerprint, sorted so the file diffs cleanly in review.
func Build(findings []rules.Finding, uri func(file string) string) File {
	seen := map[string]bool{}
	out := File{SchemaVersion: SchemaVersion, Entries: []Entry{}}
	for _, f := range findings {
		if f.Rule == rules.Schema.ID {
			continue
		}
		u := uri(f.File)
		fp := rules.Fingerprint(f, u)
		if seen[fp] {
			continue
		}
		seen[fp] = true
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

// Parse reads a baseline file; a syntax error names the line and column.
func Parse(data []byte) (File, error) {
	var b File
	dec := json.NewDecoder(bytes.NewReader(data))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&b); err != nil {
		var se *json.SyntaxError
		var te *json.UnmarshalTypeError
		switch {
		case errors.As(err, &se):
			line, col := position(data, se.Offset-1) // Offset counts the bytes read, the bad one included
			return b, fmt.Errorf("%d:%d: not valid JSON: %v; write the file with `scangate baseline write`", line, col, se)
		case errors.As(err, &te):
			line, col := position(data, te.Offset)
			return b, fmt.Errorf("%d:%d: %s must be %s; write the file with `scangate baseline write`", line, col, te.Field, te.Type)
		}
		return b, fmt.Errorf("1:1: %v; write the file with `scangate baseline write`", err)
	}
	if b.SchemaVersion != SchemaVersion {
		return b, fmt.Errorf("1:1: schema_version %d is not %d; write the file again with `scangate baseline write`", b.SchemaVersion, SchemaVersion)
	}
	return b, nil
}

func position(data []byte, offset int64) (line, col int) {
	line, col = 1, 1
	for i := int64(0); i < offset && i < int64(len(data)); i++ {
		if data[i] == '\n' {
			line, col = line+1, 1
		} else {
			col++
		}
	}
	return line, col
}

// Apply marks the findings the baseline holds and returns how many baseline entries
// matched none: findings fixed since the baseline was written.
func (b File) Apply(findings []rules.Finding, uri func(file string) string) (fixed int) {
	want := map[string]bool{}
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
	return len(want) - len(matched)
}
