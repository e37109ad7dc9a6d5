package main

import (
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"text/tabwriter"

	"github.com/spf13/cobra"

	"github.com/scangate/scangate/internal/run"
	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

func newRules() *cobra.Command {
	return &cobra.Command{
		Use:   "rules",
		Short: "List every rule with its default severity and title",
		Args:  cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			w := tabwriter.NewWriter(cmd.OutOrStdout(), 0, 0, 2, ' ', 0)
			fmt.Fprintln(w, "RULE\tDEFAULT\tTITLE")
			for _, r := range rules.All() {
				fmt.Fprintf(w, "%s\t%s\t%s\n", r.ID, r.Default, r.Title)
			}
			return w.Flush()
		},
	}
}

func newExplain() *cobra.Command {
	return &cobra.Command{
		Use:   "explain RULE",
		Short: "Explain a rule: why it matters, how its number is computed, and the fix",
		Args:  cobra.ExactArgs(1),
		ValidArgsFunction: func(*cobra.Command, []string, string) ([]string, cobra.ShellCompDirective) {
			var ids []string
			for _, r := range rules.All() {
				ids = append(ids, r.ID)
			}
			return ids, cobra.ShellCompDirectiveNoFileComp
		},
		RunE: func(cmd *cobra.Command, args []string) error {
			r, ok := rules.Lookup(args[0])
			if !ok {
				return usageError(fmt.Errorf("unknown rule %q; `scangate rules` lists them", args[0]))
			}
			_, err := io.WriteString(cmd.OutOrStdout(), explainText(r))
			return err
		},
	}
}

// explainText is the plain-text page of a rule; docs/rules.md carries the same text.
func explainText(r rules.Rule) string {
	var b strings.Builder
	fmt.Fprintf(&b, "%s (default: %s)\n%s\n\n", r.ID, r.Default, r.Title)
	section := func(title, body string) {
		fmt.Fprintf(&b, "%s\n%s\n\n", title, indent(wrap(body, 76), "  "))
	}
	section("Why it matters", r.Why)
	section("How it is computed", r.How)
	if len(r.Params) > 0 {
		b.WriteString("Settings (.scangate.yaml, rules: " + r.ID + ": {...})\n")
		for _, p := range r.Params {
			fmt.Fprintf(&b, "  %s: %s\n", p.Name, p.Doc)
		}
		b.WriteString("\n")
	}
	fmt.Fprintf(&b, "Raises it\n%s\n\n", indent(r.Bad, "  "))
	fmt.Fprintf(&b, "Fixed\n%s\n\n", indent(r.Good, "  "))
	section("Fix", r.Fix)
	return b.String()
}

// rulesMarkdown is docs/rules.md, generated from the registry.
func rulesMarkdown() string {
	var b strings.Builder
	b.WriteString("# scangate rules\n\nGenerated from the rule registry by `go test ./cmd/scangate -run TestRulesDoc -update`; `scangate explain RULE` prints the same text.\n\n")
	b.WriteString("| rule | default | what it checks |\n|---|---|---|\n")
	for _, r := range rules.All() {
		fmt.Fprintf(&b, "| [`%s`](#%s) | %s | %s |\n", r.ID, r.ID, r.Default, r.Title)
	}
	for _, r := range rules.All() {
		fmt.Fprintf(&b, "\n## %s\n\n%s. Default severity: **%s**.\n\n", r.ID, r.Title, r.Default)
		fmt.Fprintf(&b, "**Why it matters.** %s\n\n**How it is computed.** %s\n\n", r.Why, r.How)
		if len(r.Params) > 0 {
			b.WriteString("**Settings** in `.scangate.yaml` under `rules: " + r.ID + ":`\n\n")
			for _, p := range r.Params {
				fmt.Fprintf(&b, "- `%s`: %s\n", p.Name, p.Doc)
			}
			b.WriteString("- `severity`: `error`, `warning`, `note` or `off`\n\n")
		}
		fmt.Fprintf(&b, "Raises it:\n\n```yaml\n%s\n```\n\nFixed:\n\n```yaml\n%s\n```\n\n**Fix.** %s\n", r.Bad, r.Good, r.Fix)
	}
	return b.String()
}

func wrap(s string, width int) string {
	var lines []string
	line := ""
	for _, w := range strings.Fields(s) {
		if line != "" && len(line)+1+len(w) > width {
			lines = append(lines, line)
			line = ""
		}
		if line != "" {
			line += " "
		}
		line += w
	}
	return strings.Join(append(lines, line), "\n")
}

func indent(s, pre string) string {
	return pre + strings.ReplaceAll(s, "\n", "\n"+pre)
}

func newSchemaCmd() *cobra.Command {
	schemas := map[string]func() []byte{
		"manifest": schema.ManifestSchema,
		"config":   schema.ConfigSchema,
		"output":   schema.OutputSchema,
		"diff":     schema.DiffSchema,
	}
	return &cobra.Command{
		Use:       "schema [manifest|config|output|diff]",
		Short:     "Print an embedded JSON Schema (default: manifest)",
		Args:      cobra.MaximumNArgs(1),
		ValidArgs: []string{"manifest", "config", "output", "diff"},
		RunE: func(cmd *cobra.Command, args []string) error {
			name := "manifest"
			if len(args) == 1 {
				name = args[0]
			}
			get, ok := schemas[name]
			if !ok {
				return usageError(fmt.Errorf("unknown schema %q; use manifest, config, output or diff", name))
			}
			_, err := cmd.OutOrStdout().Write(get())
			return err
		},
	}
}

// Editors that understand the yaml-language-server comment complete and validate
// fields from these schemas.
const schemaBase = "https://raw.githubusercontent.com/scangate/scangate/main/schema/"

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

func newInit() *cobra.Command {
	var dir string
	var force bool
	cmd := &cobra.Command{
		Use:   "init",
		Short: "Write a commented starter manifest (model.yaml) and project config (" + schema.ConfigFile + ")",
		Args:  cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			files := []struct{ name, body string }{{"model.yaml", starterManifest}, {schema.ConfigFile, starterConfig}}
			if !force {
				for _, f := range files {
					p := filepath.Join(dir, f.name)
					if _, err := os.Lstat(p); err == nil {
						return usageError(fmt.Errorf("%s exists; init writes nothing over your files (use --force to replace it)", p))
					}
				}
			}
			for _, f := range files {
				p := filepath.Join(dir, f.name)
				if err := run.WriteFileAtomic(p, []byte(f.body)); err != nil {
					return usageError(err)
				}
				fmt.Fprintf(cmd.OutOrStdout(), "wrote %s\n", p)
			}
			return nil
		},
	}
	cmd.Flags().StringVar(&dir, "dir", ".", "directory to write the two files into")
	cmd.Flags().BoolVar(&force, "force", false, "replace the files if they exist")
	return cmd
}
