package schema

import (
	"bytes"
	_ "embed"
)

//go:embed diff.schema.json
var diffSchema []byte

// DiffSchema returns the JSON Schema of the JSON diff (scangate diff --format json).
func DiffSchema() []byte { return bytes.Clone(diffSchema) }

//go:embed plan.schema.json
var planSchema []byte

// PlanSchema returns the JSON Schema of plan's JSON report (scangate plan --format json).
func PlanSchema() []byte { return bytes.Clone(planSchema) }
