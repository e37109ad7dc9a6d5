package schema

import (
	"bytes"
	_ "embed"
)

//go:embed diff.schema.json
var diffSchema []byte

// DiffSchema returns the JSON Schema of the JSON diff (scangate diff --format json).
func DiffSchema() []byte { return bytes.Clone(diffSchema) }
