package rules

// Schema is raised by the loader, not by a check: a manifest that breaks the JSON
// Schema or cannot be read is never analysed, and the run exits with code 2.
var Schema = Rule{
	ID:      "schema",
	Default: Error,
	Title:   "The manifest must be readable and match the manifest JSON Schema",
	Why: "Every number scangate computes comes from the manifest. A value it cannot read, " +
		"an unknown key or a missing setting would make the arithmetic silently wrong, so the " +
		"file is refused as a whole and every problem in it is listed with its line and column.",
	Fix: "Change the value at the reported line and column as the message says. The manifest " +
		"reference in the README lists every key, its type and its default.",
	How: "The file is parsed as YAML, or as strict JSON when its name ends in .json, validated against schema/manifest.schema.json and, in the same pass, checked for what a schema cannot say: whole-number quantities within limits, unique names, tiers from finer to coarser grains, list sums.",
	Bad: `engine:
  segment_rows: 8Xi   # not a count`,
	Good: `engine:
  segment_rows: 8Mi`,
}

func init() { register(Schema) }
