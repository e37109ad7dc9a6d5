package report

import (
	"fmt"
	"strings"

	"github.com/scangate/scangate/rules"
)

// RuleText is the plain-text page of a rule; docs/rules.md carries the same text.
func RuleText(r rules.Rule) string {
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
			fmt.Fprintf(&b, "  %s: %s %s.\n", p.Name, p.Doc, upperFirst(p.Words()))
		}
		b.WriteString("\n")
	}
	fmt.Fprintf(&b, "Raises it\n%s\n\n", indent(r.Bad, "  "))
	fmt.Fprintf(&b, "Fixed\n%s\n\n", indent(r.Good, "  "))
	section("Fix", r.Fix)
	return b.String()
}

// RulesMarkdown is docs/rules.md, generated from the registry.
func RulesMarkdown() string {
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
				fmt.Fprintf(&b, "- `%s`: %s %s.\n", p.Name, p.Doc, upperFirst(p.Words()))
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
