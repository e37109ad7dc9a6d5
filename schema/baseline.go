package schema

import (
	"bytes"
	_ "embed"
)

//go:embed baseline.schema.json
var baselineSchema []byte

// BaselineSchema returns the embedded JSON Schema of the baseline file.
func BaselineSchema() []byte { return bytes.Clone(baselineSchema) }

var baselineDoc = func() *document {
	d := newDocument("https://github.com/scangate/scangate/schema/baseline.schema.json", baselineSchema)
	d.json = true
	return d
}()

// Document is a validated JSON file as generic values (map[string]any, []any, string,
// bool, nil, json.Number), with the positions of its values kept for later errors.
type Document struct {
	Value any
	t     *tree
}

// Pos is where the value at a JSON pointer starts; the nearest enclosing value when the
// pointer names nothing.
func (d *Document) Pos(ptr string) Pos {
	l := d.t.locate(ptr)
	return Pos{Line: l.value.Line, Col: l.value.Column}
}

// LoadBaseline reads a baseline file: strict JSON, one object, no duplicate keys, within
// the limits, valid against baseline.schema.json. Invalid input returns an *Error
// listing every problem with its line and column.
func LoadBaseline(file string, data []byte, lim Limits) (*Document, error) {
	// A baseline is JSON whatever its name.
	t, ps := parseAs(true, data, lim, `a baseline starts with {"schema_version": 2`)
	if t != nil {
		more, _ := t.check(baselineDoc)
		ps = append(ps, more...)
	}
	if len(ps) > 0 {
		return nil, &Error{File: file, Problems: sortProblems(ps)}
	}
	return &Document{Value: t.root, t: t}, nil
}
