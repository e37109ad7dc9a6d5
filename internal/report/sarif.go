package report

import (
	"bytes"
	"fmt"
	"io"
	"strings"

	"github.com/owenrumney/go-sarif/v3/pkg/report/v210/sarif"

	"github.com/scangate/scangate/internal/escape"
	"github.com/scangate/scangate/rules"
)

func init() {
	register(writers{traits: Traits{Name: "sarif", Kinds: CheckReport}, check: writeSARIF})
}

// InformationURI is where the SARIF report sends readers for the tool.
const InformationURI = "https://github.com/scangate/scangate"

// fingerprintKey names scangate's partial fingerprint; the suffix is the algorithm's version.
const fingerprintKey = "scangateFinding/v1"

// writeSARIF writes a SARIF 2.1.0 log (OASIS standard): one run, a rule descriptor for every
// rule, and a result per finding located relative to the repository root (%SRCROOT%).
func writeSARIF(w io.Writer, r *Result, _ bool) error {
	log := sarif.NewReport()
	run := sarif.NewRunWithInformationURI("scangate", InformationURI)
	run.Tool.Driver.WithVersion(r.Version)
	index := map[string]int{}
	for i, rule := range rules.All() {
		index[rule.ID] = i
		run.Tool.Driver.Rules = append(run.Tool.Driver.Rules, sarif.NewRule(rule.ID).
			WithName(ruleName(rule.ID)).
			WithShortDescription(sarif.NewMultiformatMessageString().WithText(rule.Title)).
			WithFullDescription(sarif.NewMultiformatMessageString().WithText(rule.Why)).
			WithHelp(sarif.NewMultiformatMessageString().
				WithText(rule.Why+"\n\nHow it is computed: "+rule.How+"\n\nFix: "+rule.Fix).
				WithMarkdown(helpMarkdown(rule))).
			WithHelpURI(InformationURI+"#rules").
			WithDefaultConfiguration(sarif.NewReportingConfiguration().WithLevel(level(rule.Default))))
	}
	for _, f := range r.Findings {
		text := f.Message
		for _, h := range f.Hints {
			text += "\nhint: " + h
		}
		loc := sarif.NewArtifactLocation().WithURI(r.URI(f.File)).WithURIBaseID("%SRCROOT%")
		phys := sarif.NewPhysicalLocation().WithArtifactLocation(loc)
		if f.Pos.Line > 0 {
			phys.WithRegion(sarif.NewRegion().WithStartLine(f.Pos.Line).WithStartColumn(f.Pos.Col))
		}
		res := sarif.NewRuleResult(f.Rule).
			WithRuleIndex(index[f.Rule]).
			WithLevel(level(f.Severity)).
			WithMessage(sarif.NewMessage().WithText(text)).
			AddLocation(sarif.NewLocation().WithPhysicalLocation(phys)).
			WithPartialFingerprints(map[string]string{fingerprintKey: r.Fingerprint(f)})
		switch {
		case f.Waiver != nil:
			res.WithSuppressions([]*sarif.Suppression{sarif.NewSuppression().WithKind("inSource").
				WithJustification(fmt.Sprintf("%s (waived until %s)", f.Waiver.Reason, f.Waiver.Expires.Format("2006-01-02")))})
		case f.Baselined:
			res.WithSuppressions([]*sarif.Suppression{sarif.NewSuppression().WithKind("external").
				WithJustification("recorded in the baseline " + r.Baseline.File)})
		}
		if r.Baseline != nil {
			state := "new"
			if f.Baselined {
				state = "unchanged"
			}
			res.WithBaselineState(state)
		}
		if len(f.Numbers) > 0 {
			props := sarif.NewPropertyBag()
			for _, k := range sortedKeys(f.Numbers) {
				props.Add(k, round(f.Numbers[k]))
			}
			res.WithProperties(props)
		}
		run.AddResult(res)
	}
	log.AddRun(run)
	var b bytes.Buffer
	if err := log.PrettyWrite(&b); err != nil {
		return err
	}
	b.WriteString("\n")
	_, err := w.Write(escape.JSON(b.Bytes())) // the same values, no hidden rune raw
	return err
}

// helpMarkdown is the rule's page as `scangate explain` and docs/rules.md give it.
func helpMarkdown(r rules.Rule) string {
	return "**" + r.Title + "**\n\n" + r.Why + "\n\n**How it is computed.** " + r.How +
		"\n\nRaises it:\n\n```yaml\n" + r.Bad + "\n```\n\nFixed:\n\n```yaml\n" + r.Good + "\n```\n\n**Fix.** " + r.Fix
}

func level(s rules.Severity) string {
	switch s {
	case rules.Error:
		return "error"
	case rules.Warning:
		return "warning"
	}
	return "note"
}

// ruleName turns a rule ID into the PascalCase name SARIF viewers show: scan-overhead ->
// ScanOverhead.
func ruleName(id string) string {
	var b strings.Builder
	for _, part := range strings.Split(id, "-") {
		if part != "" {
			b.WriteString(strings.ToUpper(part[:1]) + part[1:])
		}
	}
	return b.String()
}
