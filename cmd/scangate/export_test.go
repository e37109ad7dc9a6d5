package main

import "github.com/scangate/scangate/internal/report"

// The escaping functions live in the report package; these hooks let the CLI tests
// check them beside the end-to-end run.
var (
	escapeDataForTest     = report.EscapeData
	escapePropertyForTest = report.EscapeProperty
)
