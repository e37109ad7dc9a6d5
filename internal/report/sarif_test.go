package report

import (
	"encoding/json"
	"strings"
	"testing"

	"github.com/owenrumney/go-sarif/v3/pkg/report/v210/sarif"

	"github.com/scangate/scangate/rules"
)

// sarifLog is the part of a SARIF 2.1.0 log (OASIS standard) the report promises:
// sarifLog.version, run.tool.driver.rules, and per result ruleId, ruleIndex, level,
// message, locations, partialFingerprints, suppressions and baselineState.
type sarifLog struct {
	Schema  string `json:"$schema"`
	Version string `json:"version"`
	Runs    []struct {
		Tool struct {
			Driver struct {
				Name, FullName, Version, SemanticVersion, InformationURI string
				Rules                                                    []struct {
					ID, Name             string
					HelpURI              string `json:"helpUri"`
					DefaultConfiguration struct{ Level string }
				}
			}
		}
		Results []sarifResult
	}
}

type sarifResult struct {
	RuleID    string `json:"ruleId"`
	RuleIndex *int   `json:"ruleIndex"`
	Level     string
	Message   struct{ Text string }
	Locations []struct {
		PhysicalLocation struct {
			ArtifactLocation struct {
				URI       string `json:"uri"`
				URIBaseID string `json:"uriBaseId"`
			}
			Region *struct{ StartLine, StartColumn int }
		}
	}
	PartialFingerprints map[string]string
	Suppressions        []struct{ Kind, Justification string }
	BaselineState       *string
	Properties          map[string]float64
}

func decodeSARIF(t *testing.T, out string) sarifLog {
	t.Helper()
	// The library reads the log back and checks what it read against the SARIF 2.1.0 JSON
	// schema it ships (it writes absent arrays back as null, so not strictly);
	// TestSARIFIndependentValidator checks the bytes themselves.
	lg, err := sarif.FromBytes([]byte(out))
	if err != nil {
		t.Fatalf("SARIF does not parse: %v\n%s", err, out)
	}
	if err := lg.Validate(); err != nil {
		t.Errorf("breaks the SARIF 2.1.0 schema: %v", err)
	}
	var doc sarifLog
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatal(err)
	}
	if doc.Version != "2.1.0" || len(doc.Runs) != 1 {
		t.Fatalf("version %q, %d runs: want 2.1.0 and one run", doc.Version, len(doc.Runs))
	}
	return doc
}

// The driver lists every rule once, in registry order, with its default level; each
// result's ruleIndex points at the descriptor of its ruleId.
func TestSARIFDriverRules(t *testing.T) {
	doc := decodeSARIF(t, render(t, "sarif", handResult(), false))
	d := doc.Runs[0].Tool.Driver
	if d.Name != "scangate" || d.InformationURI != InformationURI {
		t.Errorf("driver %q %q", d.Name, d.InformationURI)
	}
	// The validator wants a version that starts with a digit; semanticVersion is
	// Semantic Versioning 2.0.0, which has no leading "v".
	if d.FullName != "scangate v0.0.0-test" || d.Version != "0.0.0-test" || d.SemanticVersion != "0.0.0-test" {
		t.Errorf("driver fullName %q, version %q, semanticVersion %q", d.FullName, d.Version, d.SemanticVersion)
	}
	all := rules.All()
	if len(d.Rules) != len(all) {
		t.Fatalf("%d rule descriptors, want %d", len(d.Rules), len(all))
	}
	levels := map[rules.Severity]string{rules.Error: "error", rules.Warning: "warning", rules.Note: "note"}
	for i, r := range all {
		if got := d.Rules[i]; got.ID != r.ID || got.DefaultConfiguration.Level != levels[r.Default] {
			t.Errorf("rule %d: %+v, want %s at %s", i, got, r.ID, levels[r.Default])
		}
	}
	for _, r := range d.Rules {
		// SARIF 2.1.0, 3.49.7: a name identical to the id must be left out; the
		// validator compares them ignoring case.
		if strings.ContainsAny(r.Name, "- ") || r.Name == "" || strings.EqualFold(r.Name, r.ID) {
			t.Errorf("rule %s: name %q, want PascalCase and unlike the id", r.ID, r.Name)
		}
		if r.HelpURI != RulesDocURI+"#"+r.ID {
			t.Errorf("rule %s: helpUri %q, want its anchor in docs/rules.md", r.ID, r.HelpURI)
		}
	}
	for _, res := range doc.Runs[0].Results {
		if res.RuleIndex == nil || *res.RuleIndex >= len(d.Rules) || d.Rules[*res.RuleIndex].ID != res.RuleID {
			t.Errorf("%s: ruleIndex %v does not point at its rule", res.RuleID, res.RuleIndex)
		}
	}
	if ruleName("scan-overhead") != "ScanOverhead" || ruleName("schema") != "ManifestSchema" {
		t.Errorf("ruleName: %q %q", ruleName("scan-overhead"), ruleName("schema"))
	}
}

// Every finding is a result, accepted debt included, so a viewer can show it as
// suppressed: a waiver is an in-source suppression, a baseline entry an external one
// (SARIF 2.1.0, suppression.kind). Only the unaccepted results carry no suppression.
// With a baseline, baselineState says new or unchanged (SARIF 2.1.0, result.baselineState).
func TestSARIFResults(t *testing.T) {
	r := handResult()
	doc := decodeSARIF(t, render(t, "sarif", r, false))
	results := doc.Runs[0].Results
	if len(results) != len(r.Findings) {
		t.Fatalf("%d results for %d findings", len(results), len(r.Findings))
	}
	unsuppressed := 0
	for i, f := range r.Findings {
		res := results[i]
		want := map[rules.Severity]string{rules.Error: "error", rules.Warning: "warning", rules.Note: "note"}[f.Severity]
		if res.RuleID != f.Rule || res.Level != want || !strings.HasPrefix(res.Message.Text, f.Message) {
			t.Errorf("result %d: %s %s %q, want %s %s %q", i, res.RuleID, res.Level, res.Message.Text, f.Rule, want, f.Message)
		}
		for _, h := range f.Hints {
			if !strings.Contains(res.Message.Text, "\nhint: "+h) {
				t.Errorf("result %d: hint %q missing from %q", i, h, res.Message.Text)
			}
		}
		if len(res.Locations) != 1 {
			t.Fatalf("result %d: %d locations", i, len(res.Locations))
		}
		loc := res.Locations[0].PhysicalLocation
		if loc.ArtifactLocation.URI != r.URI(f.File) || loc.ArtifactLocation.URIBaseID != "%SRCROOT%" {
			t.Errorf("result %d: artifact %+v", i, loc.ArtifactLocation)
		}
		switch {
		case f.Pos.Line == 0 && loc.Region != nil:
			t.Errorf("result %d: a region for a finding without a line: %+v", i, loc.Region)
		case f.Pos.Line > 0 && (loc.Region == nil || loc.Region.StartLine != f.Pos.Line || loc.Region.StartColumn != f.Pos.Col):
			t.Errorf("result %d: region %+v, want %d:%d", i, loc.Region, f.Pos.Line, f.Pos.Col)
		}
		if fp := res.PartialFingerprints["scangateFinding/v1"]; fp != r.Fingerprint(f) || len(fp) != 32 {
			t.Errorf("result %d: fingerprint %v, want %s", i, res.PartialFingerprints, r.Fingerprint(f))
		}

		var kind, state string
		switch {
		case f.Waiver != nil:
			kind, state = "inSource", "new"
		case f.Baselined:
			kind, state = "external", "unchanged"
		default:
			state = "new"
			unsuppressed++
		}
		switch {
		case kind == "" && len(res.Suppressions) != 0:
			t.Errorf("result %d: an unaccepted finding is suppressed: %+v", i, res.Suppressions)
		case kind != "" && (len(res.Suppressions) != 1 || res.Suppressions[0].Kind != kind):
			t.Errorf("result %d: suppressions %+v, want one of kind %s", i, res.Suppressions, kind)
		}
		if res.BaselineState == nil || *res.BaselineState != state {
			t.Errorf("result %d: baselineState %v, want %s", i, res.BaselineState, state)
		}
	}
	if unsuppressed != 4 {
		t.Errorf("%d unsuppressed results, want the 4 unaccepted findings", unsuppressed)
	}
	if j := results[3].Suppressions; len(j) == 1 && (!strings.Contains(j[0].Justification, "bigger segments next quarter") || !strings.Contains(j[0].Justification, "2026-06-01")) {
		t.Errorf("waiver justification %q: want the reason and the expiry", j[0].Justification)
	}
	if j := results[4].Suppressions; len(j) == 1 && !strings.Contains(j[0].Justification, "scangate-baseline.json") {
		t.Errorf("baseline justification %q: want the baseline file", j[0].Justification)
	}
	if p := results[0].Properties; p["fixed_ms"] != 1500 || p["budget_ms"] != 1000 || p["segments"] != 1000 {
		t.Errorf("properties %v: want the finding's numbers", p)
	}
}

// Without --baseline no result claims a baseline state.
func TestSARIFWithoutBaseline(t *testing.T) {
	r := handResult()
	r.Baseline = nil
	r.Findings = append(r.Findings[:4:4], r.Findings[5]) // no baselined finding either
	doc := decodeSARIF(t, render(t, "sarif", r, false))
	for i, res := range doc.Runs[0].Results {
		if res.BaselineState != nil {
			t.Errorf("result %d: baselineState %q without a baseline", i, *res.BaselineState)
		}
	}
	if len(doc.Runs[0].Results) != 5 {
		t.Errorf("%d results, want 5", len(doc.Runs[0].Results))
	}
}

// A real run (findings from the rules) gives a valid log too, and a clean run one with
// an empty results list.
func TestSARIFAnalysedAndEmpty(t *testing.T) {
	r := analysedResult(t, "m.yaml", "conf/m.yaml", fixtureManifest, rules.Error)
	doc := decodeSARIF(t, render(t, "sarif", r, false))
	if len(doc.Runs[0].Results) != len(r.Findings) || len(r.Findings) != 3 {
		t.Errorf("%d results for %d findings (want 3)", len(doc.Runs[0].Results), len(r.Findings))
	}
	out := render(t, "sarif", &Result{Version: "v"}, false)
	doc = decodeSARIF(t, out)
	if len(doc.Runs[0].Results) != 0 || !strings.Contains(out, `"results": []`) {
		t.Errorf("clean run: want an empty results list\n%s", out)
	}
}
