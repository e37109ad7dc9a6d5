package run

import (
	"fmt"
	"os"
	"path/filepath"

	"github.com/scangate/scangate/schema"
)

// Editors that understand the yaml-language-server comment complete and validate
// fields from these schemas.
const schemaBase = "https://raw.githubusercontent.com/scangate/scangate/main/schema/"

// starterManifest is the commented manifest `scangate init` writes.
const starterManifest = `# yaml-language-server: $schema=` + schemaBase + `manifest.schema.json
# A scangate manifest: the tables of one model, their expected size and partitions.
# Check it with: scangate check model.yaml   Explain a finding: scangate explain RULE
format: 1
model: my-model
engine:
  profile: default          # from .scangate.yaml; fields set here override the profile
budgets:
  scan_overhead_ms: 500     # fixed CPU ms one full scan of one table may pay
tables:
  - name: events
    rows: 1Gi               # expected rows at deployment: k M G T or Ki Mi Gi Ti
    # growth_per_year: 0.2  # older periods then hold fewer rows
    partitions:
      scheme: time          # none | even | time | list
      tiers:                # newest first, finer to coarser; try day: 14 first and see
        - {grain: month, keep: 32}   # 32Mi rows a month: exactly 4 segments of 8Mi
    columns:                # optional; needed for scan_ms
      - {name: event_id, type: int64, order: sorted}
      - {name: kind, type: string, avg_length: 8, distinct: 40}
  - name: event_kinds
    rows: 40
    partitions: {scheme: none}
`

// starterConfig is the commented project config `scangate init` writes.
const starterConfig = `# yaml-language-server: $schema=` + schemaBase + `config.schema.json
# scangate project config, found by walking up from the checked path.
engines:
  default:                  # manifests say engine: {profile: default}
    segment_rows: 8Mi
    cores: 8
    segment_overhead_ms: 1.5
    scan_mb_per_s: 200
budgets:                    # defaults; a manifest's and a table's own budgets override
  scan_overhead_ms: 1000
rules:                      # severity: error | warning | note | off, plus thresholds
  partition-count: {limit: 5000}
exclude:
  - "**/drafts/**"
`

// WriteStarters writes the starter manifest (model.yaml) and project config into dir,
// each atomically, and returns the paths written. Without force it writes nothing when
// either file exists.
func WriteStarters(dir string, force bool) ([]string, error) {
	files := []struct{ name, body string }{{"model.yaml", starterManifest}, {schema.ConfigFile, starterConfig}}
	if !force {
		for _, f := range files {
			p := filepath.Join(dir, f.name)
			if _, err := os.Lstat(p); err == nil {
				return nil, fmt.Errorf("%s exists; init writes nothing over your files (use --force to replace it)", p)
			}
		}
	}
	var written []string
	for _, f := range files {
		p := filepath.Join(dir, f.name)
		if err := WriteFileAtomic(p, []byte(f.body)); err != nil {
			return written, err
		}
		written = append(written, p)
	}
	return written, nil
}
