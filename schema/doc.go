// Package schema is scangate's contract: the embedded JSON Schemas of the manifest, the
// project config, the baseline file and the json and diff reports, and the loaders that
// turn a manifest's YAML or JSON into a typed Manifest and a baseline's strict JSON into
// positioned values.
//
// Loading reads the bytes into YAML nodes, refuses what the manifest format forbids
// (duplicate keys, documents after the first), validates the nodes
// against manifest.schema.json (a quick check first, the JSON Schema library for
// anything it cannot pass and for every error's wording), and decodes them into typed
// values. Every value keeps its file, line and column, so a finding or an error points
// at the node it is about. Quantities ("8Mi", "7.2G", "64GiB") are parsed exactly.
//
// It is the first layer: it imports no other scangate package.
package schema

import (
	"fmt"
	"strings"
)

// embedded are the JSON Schemas scangate ships, by the name `scangate schema` takes.
var embedded = []struct {
	name string
	get  func() []byte
}{
	{"manifest", ManifestSchema}, {"config", ConfigSchema}, {"output", OutputSchema},
	{"diff", DiffSchema}, {"plan", PlanSchema}, {"baseline", BaselineSchema}, {"calibration", CalibrationSchema}, {"survey", SurveySchema},
}

// Names lists the embedded schemas, manifest first.
func Names() []string {
	out := make([]string, len(embedded))
	for i, e := range embedded {
		out[i] = e.name
	}
	return out
}

// Named is the embedded schema called name.
func Named(name string) ([]byte, error) {
	for _, e := range embedded {
		if e.name == name {
			return e.get(), nil
		}
	}
	return nil, fmt.Errorf("unknown schema %q; use %s", name, strings.Join(Names(), ", "))
}
