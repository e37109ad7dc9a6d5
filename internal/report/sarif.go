package report

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"io"
	"path/filepath"
	"regexp"
	"slices"
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

// RulesDocURI is docs/rules.md; each rule's helpUri is its heading's anchor there.
const RulesDocURI = InformationURI + "/blob/main/docs/rules.md"

// fingerprintKey names scangate's partial fingerprint; the suffix is the algorithm's version.
const fingerprintKey = "scangateFinding/v1"

// srcRoot is the URI base id of files inside the repository root (SARIF 2.1.0, 3.4.4).
const srcRoot = "%SRCROOT%"

// automationCategory is the stable part of the automation id;
// SARIF 2.1.0, run.automationDetails.id: what precedes the last slash names the kind of run.
const automationCategory = "scangate/check/"

// stdinName is File.Name of standard input.
const stdinName = "<stdin>"

// writeSARIF writes a SARIF 2.1.0 log (OASIS standard): one run, a rule descriptor for every
// rule, and a result per finding. Files inside the repository root are relative to
// %SRCROOT%, files outside it absolute file URIs, standard input a described location
// without a URI. Only what is set is written: no -1 "unset" sentinels, no empty arrays.
func writeSARIF(w io.Writer, r *Result, _ bool) error {
	log := sarif.NewReport()
	run := sarif.NewRunWithInformationURI("scangate", InformationURI)
	describeDriver(run.Tool.Driver, r.Version)
	run.WithAutomationDetails(sarif.NewRunAutomationDetails().WithID(automationID(r)).
		WithDescription(sarif.NewMessage().WithText("scangate check of the manifests the run read")))
	index := map[string]int{}
	for i, rule := range rules.All() {
		index[rule.ID] = i
		run.Tool.Driver.Rules = append(run.Tool.Driver.Rules, ruleDescriptor(rule))
	}
	usesRoot := false
	for _, f := range r.Findings {
		loc := artifactLocation(r, f.File)
		usesRoot = usesRoot || loc.URIBaseID != nil
		run.AddResult(resultOf(r, f, index[f.Rule], loc))
	}
	if usesRoot {
		run.OriginalUriBaseIds = map[string]sarif.ArtifactLocation{srcRoot: *sarif.NewArtifactLocation().
			WithDescription(sarif.NewMessage().WithText("The repository root: the nearest directory at or above the working directory that holds .git, else the working directory."))}
	}
	log.AddRun(run)
	var b bytes.Buffer
	if err := log.Write(&b); err != nil {
		return err
	}
	out, err := compactSARIF(b.Bytes())
	if err != nil {
		return err
	}
	_, err = w.Write(escape.JSON(out)) // the same values, no hidden rune raw
	return err
}

func describeDriver(d *sarif.ToolComponent, version string) {
	d.WithFullName("scangate " + version)
	v := numericVersion(version)
	d.WithVersion(v)
	if semver.MatchString(v) {
		d.WithSemanticVersion(v)
	}
}

// semver is the Semantic Versioning 2.0.0 grammar (semver.org, the suggested expression).
var semver = regexp.MustCompile(`^(0|[1-9]\d*)\.(0|[1-9]\d*)\.(0|[1-9]\d*)(?:-((?:0|[1-9]\d*|\d*[a-zA-Z-][0-9a-zA-Z-]*)(?:\.(?:0|[1-9]\d*|\d*[a-zA-Z-][0-9a-zA-Z-]*))*))?(?:\+([0-9a-zA-Z-]+(?:\.[0-9a-zA-Z-]+)*))?$`)

// numericVersion is the version as SARIF wants it, starting with a digit: a module
// version without its "v"; a build without one (Go's "(devel)") is 0.0.0-devel, as Go
// numbers an untagged build v0.0.0-….
func numericVersion(v string) string {
	v = strings.TrimPrefix(v, "v")
	if v == "" || v[0] < '0' || v[0] > '9' {
		return "0.0.0-devel"
	}
	return v
}

// automationID is "scangate/check/" and a hash of the checked files' paths: the same
// check gets the same id, and the category before the last slash never changes.
func automationID(r *Result) string {
	keys := make([]string, len(r.Files))
	for i, f := range r.Files {
		keys[i] = r.Key(f.Name)
	}
	slices.Sort(keys)
	sum := sha256.Sum256([]byte(strings.Join(keys, "\x00")))
	return automationCategory + hex.EncodeToString(sum[:8])
}

func ruleDescriptor(rule rules.Rule) *sarif.ReportingDescriptor {
	return sarif.NewRule(rule.ID).
		WithName(ruleName(rule.ID)).
		WithShortDescription(sarif.NewMultiformatMessageString().WithText(rule.Title)).
		WithFullDescription(sarif.NewMultiformatMessageString().WithText(rule.Why)).
		WithHelp(sarif.NewMultiformatMessageString().
			WithText(rule.Why + "\n\nHow it is computed: " + rule.How + "\n\nFix: " + rule.Fix).
			WithMarkdown(helpMarkdown(rule))).
		WithHelpURI(RulesDocURI + "#" + rule.ID).
		WithDefaultConfiguration(sarif.NewReportingConfiguration().WithLevel(level(rule.Default)))
}

// resultOf is the SARIF result of one finding.
func resultOf(r *Result, f rules.Finding, ruleIndex int, loc *sarif.ArtifactLocation) *sarif.Result {
	text := f.Message
	for _, h := range f.Hints {
		text += "\nhint: " + h
	}
	phys := sarif.NewPhysicalLocation().WithArtifactLocation(loc)
	if f.Pos.Line > 0 {
		phys.WithRegion(sarif.NewRegion().WithStartLine(f.Pos.Line).WithStartColumn(f.Pos.Col))
	}
	res := sarif.NewRuleResult(f.Rule).
		WithRuleIndex(ruleIndex).
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
	return res
}

// artifactLocation says where a finding's file is (SARIF 2.1.0, 3.4): inside the
// repository root a relative reference on %SRCROOT%, outside it an absolute file URI,
// standard input no URI (it has none) but a description saying so.
func artifactLocation(r *Result, file string) *sarif.ArtifactLocation {
	loc := sarif.NewArtifactLocation()
	if file == stdinName {
		return loc.WithDescription(sarif.NewMessage().WithText("standard input"))
	}
	if rel := r.URI(file); insideRoot(rel) {
		return loc.WithURI(escapePath(rel, true)).WithURIBaseID(srcRoot)
	}
	return loc.WithURI(fileURI(file))
}

// insideRoot reports whether a File.URI is relative to the repository root: the run
// keeps the path as given for a file outside it.
func insideRoot(uri string) bool {
	return uri != "" && !strings.HasPrefix(uri, "/") && !filepath.IsAbs(filepath.FromSlash(uri)) &&
		uri != ".." && !strings.HasPrefix(uri, "../")
}

// fileURI is the absolute file URI of a path (RFC 8089).
func fileURI(name string) string {
	abs, err := filepath.Abs(name)
	if err != nil {
		abs = name
	}
	p := filepath.ToSlash(abs)
	if !strings.HasPrefix(p, "/") {
		p = "/" + p // a drive letter: file:///C:/...
	}
	return "file://" + escapePath(p, false)
}

// escapePath percent-encodes every byte a URI path cannot hold as is (RFC 3986, 3.3:
// unreserved, sub-delims, ":", "@" and "/" stay). In a relative reference ":" is encoded
// too, so a first segment never reads as a scheme (RFC 3986, 4.2).
func escapePath(p string, relative bool) string {
	const hexDigits = "0123456789ABCDEF"
	var b strings.Builder
	for i := 0; i < len(p); i++ {
		c := p[i]
		if pathByte(c) && !(relative && c == ':') {
			b.WriteByte(c)
			continue
		}
		b.WriteByte('%')
		b.WriteByte(hexDigits[c>>4])
		b.WriteByte(hexDigits[c&15])
	}
	return b.String()
}

func pathByte(c byte) bool {
	return 'a' <= c && c <= 'z' || 'A' <= c && c <= 'Z' || '0' <= c && c <= '9' ||
		strings.IndexByte("-._~!$&'()*+,;=:@/", c) >= 0
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

// ruleNames overrides ruleName where it would equal the id but for case: SARIF wants a
// name that differs from the id (3.49.7), or none.
var ruleNames = map[string]string{"schema": "ManifestSchema"}

// ruleName turns a rule ID into the PascalCase name SARIF viewers show: scan-overhead ->
// ScanOverhead.
func ruleName(id string) string {
	if n, ok := ruleNames[id]; ok {
		return n
	}
	var b strings.Builder
	for _, part := range strings.Split(id, "-") {
		if part != "" {
			b.WriteString(strings.ToUpper(part[:1]) + part[1:])
		}
	}
	return b.String()
}
