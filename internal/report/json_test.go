package report

import (
	"bytes"
	"encoding/json"
	"math"
	"reflect"
	"slices"
	"strings"
	"testing"

	"github.com/santhosh-tekuri/jsonschema/v6"

	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

// validateOutputSchema checks a JSON report against schema/output.schema.json
// (JSON Schema draft 2020-12).
func validateOutputSchema(t *testing.T, data string) {
	t.Helper()
	doc, err := jsonschema.UnmarshalJSON(bytes.NewReader(schema.OutputSchema()))
	if err != nil {
		t.Fatal(err)
	}
	c := jsonschema.NewCompiler()
	if err := c.AddResource("output.schema.json", doc); err != nil {
		t.Fatal(err)
	}
	sch, err := c.Compile("output.schema.json")
	if err != nil {
		t.Fatal(err)
	}
	inst, err := jsonschema.UnmarshalJSON(strings.NewReader(data))
	if err != nil {
		t.Fatalf("not JSON: %v\n%s", err, data)
	}
	if err := sch.Validate(inst); err != nil {
		t.Errorf("breaks schema/output.schema.json: %v\n%s", err, data)
	}
}

// jsonDoc is the report as a consumer reads it, declared here rather than borrowed
// from json.go so a renamed field shows up as a failure.
type jsonDoc struct {
	SchemaVersion int `json:"schema_version"`
	Tool          struct{ Name, Version string }
	FailOn        string `json:"fail_on"`
	Failed        bool
	Summary       map[string]int
	Files         []struct {
		Path, URI, Model string
		Valid            bool
		Tables           []map[string]any
	}
	Findings []struct {
		Rule, Severity, File, URI, Table, Message, Fingerprint string
		Fails, Baselined                                       bool
		Line, Column                                           int
		Hints                                                  []string
		Numbers                                                map[string]float64
		Waiver                                                 *struct {
			Reason, Expires string
			Line            int
		}
	}
}

func decodeJSON(t *testing.T, out string) (jsonDoc, map[string]json.RawMessage) {
	t.Helper()
	var doc jsonDoc
	var top map[string]json.RawMessage
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatalf("not JSON: %v\n%s", err, out)
	}
	if err := json.Unmarshal([]byte(out), &top); err != nil {
		t.Fatal(err)
	}
	return doc, top
}

func TestJSONFindingsAndSummary(t *testing.T) {
	r := handResult()
	out := render(t, "json", r, false)
	validateOutputSchema(t, out)
	doc, _ := decodeJSON(t, out)

	if doc.SchemaVersion != 1 || doc.Tool.Name != "scangate" || doc.Tool.Version != "v0.0.0-test" || doc.FailOn != "error" || !doc.Failed {
		t.Errorf("header: %+v", doc)
	}
	// Unaccepted: 2 errors (events, the schema finding), 1 warning, 1 note; one waived,
	// one baselined; the broken file is invalid.
	want := map[string]int{"files": 2, "invalid_files": 1, "tables": 4, "errors": 2, "warnings": 1, "notes": 1,
		"waived": 1, "baselined": 1, "baseline_fixed": 2, "baseline_escalated": 0, "baseline_expired": 0}
	if !reflect.DeepEqual(doc.Summary, want) {
		t.Errorf("summary %v, want %v", doc.Summary, want)
	}
	if len(doc.Files) != 2 || doc.Files[0].Path != "m.yaml" || doc.Files[0].URI != "conf/m.yaml" || doc.Files[0].Model != "cases" ||
		!doc.Files[0].Valid || doc.Files[1].Valid || doc.Files[1].Tables == nil {
		t.Errorf("files: %+v", doc.Files)
	}

	if len(doc.Findings) != len(r.Findings) {
		t.Fatalf("%d findings, want %d", len(doc.Findings), len(r.Findings))
	}
	for i, f := range r.Findings {
		g := doc.Findings[i]
		if g.Rule != f.Rule || g.Severity != f.Severity.String() || g.File != f.File || g.URI != r.URI(f.File) ||
			g.Line != f.Pos.Line || g.Column != f.Pos.Col || g.Table != f.Table || g.Message != f.Message ||
			g.Baselined != f.Baselined || g.Fails != r.Fails(f) || g.Fingerprint != r.Fingerprint(f) {
			t.Errorf("finding %d: got %+v, want %+v", i, g, f)
		}
		if g.Hints == nil || len(g.Hints) != len(f.Hints) || g.Numbers == nil || len(g.Numbers) != len(f.Numbers) {
			t.Errorf("finding %d: hints %v numbers %v: want lists and objects, never null", i, g.Hints, g.Numbers)
		}
		if (g.Waiver != nil) != (f.Waiver != nil) {
			t.Errorf("finding %d: waiver %+v", i, g.Waiver)
		}
	}
	if w := doc.Findings[3].Waiver; w == nil || w.Reason != "bigger segments next quarter" || w.Expires != "2026-06-01" || w.Line != 19 {
		t.Errorf("waiver: %+v", w)
	}
	if n := doc.Findings[0].Numbers; n["fixed_ms"] != 1500 || n["budget_ms"] != 1000 || n["segments"] != 1000 {
		t.Errorf("numbers: %v", n)
	}
	fails := 0
	for _, g := range doc.Findings {
		if g.Fails {
			fails++
		}
	}
	if fails != 2 { // events' error and the schema finding; accepted debt never fails
		t.Errorf("%d failing findings, want 2", fails)
	}

	// Without --baseline the count of fixed entries is left out, not written as 0.
	r.Baseline = nil
	for i := range r.Findings {
		r.Findings[i].Baselined = false
	}
	if _, top := decodeJSON(t, render(t, "json", r, false)); strings.Contains(string(top["summary"]), "baseline_") {
		t.Errorf("baseline counts without a baseline: %s", top["summary"])
	}
}

// The top-level keys are exactly the ones the published schema requires.
func TestJSONTopLevelKeysMatchSchema(t *testing.T) {
	var sch struct {
		Required   []string
		Properties map[string]json.RawMessage
	}
	if err := json.Unmarshal(schema.OutputSchema(), &sch); err != nil {
		t.Fatal(err)
	}
	for _, r := range []*Result{handResult(), {}} {
		_, top := decodeJSON(t, render(t, "json", r, false))
		var keys []string
		for k := range top {
			keys = append(keys, k)
			if _, ok := sch.Properties[k]; !ok {
				t.Errorf("key %q is not in the schema", k)
			}
		}
		slices.Sort(keys)
		req := slices.Sorted(slices.Values(sch.Required))
		if !slices.Equal(keys, req) {
			t.Errorf("top-level keys %v, schema requires %v", keys, req)
		}
		// An empty run still writes lists, which the schema types as arrays.
		if string(top["files"]) == "null" || string(top["findings"]) == "null" {
			t.Errorf("null lists: files %s findings %s", top["files"], top["findings"])
		}
	}
}

// Per-table figures are those of the analysis, and the whole report validates.
func TestJSONTables(t *testing.T) {
	r := analysedResult(t, "m.yaml", "conf/m.yaml", fixtureManifest, rules.Error)
	out := render(t, "json", r, false)
	validateOutputSchema(t, out)
	doc, _ := decodeJSON(t, out)
	tables := doc.Files[0].Tables
	if len(tables) != 4 {
		t.Fatalf("%d tables, want 4", len(tables))
	}
	for i, tb := range r.Files[0].Tables {
		g := tables[i]
		l := tb.Layout
		if g["name"] != tb.Name || g["segments"] != float64(l.Segments) || g["ideal_segments"] != float64(tb.Report.Ideal) ||
			g["excess_segments"] != float64(l.Segments-tb.Report.Ideal) || g["partitions"] != float64(l.Partitions) || g["fixed_overhead_ms"] != l.FixedMs ||
			g["segment_rows"] != float64(1000) || g["scan_overhead_budget_ms"] != float64(1000) {
			t.Errorf("table %d: %v, layout %+v", i, g, l)
		}
	}
	// readings: 40 partitions of 250 rows, one segment each: 10 would do, fill 25%.
	if g := tables[1]; g["partitions"] != float64(40) || g["segments"] != float64(40) || g["ideal_segments"] != float64(10) || g["fill"] != 0.25 {
		t.Errorf("readings: %v", g)
	}
}

// The same input gives the same bytes: map-valued figures must not follow map order.
func TestJSONDeterministic(t *testing.T) {
	first := render(t, "json", analysedResult(t, "m.yaml", "conf/m.yaml", fixtureManifest, rules.Error), false)
	for range 20 {
		if again := render(t, "json", analysedResult(t, "m.yaml", "conf/m.yaml", fixtureManifest, rules.Error), false); again != first {
			t.Fatalf("two renderings differ:\n%s\n%s", first, again)
		}
	}
	h := handResult()
	if render(t, "json", h, false) != render(t, "json", h, false) {
		t.Error("the hand-built result renders differently twice")
	}
}

// JSON has no NaN or infinity: such a figure is written as 0 rather than failing the
// report (RFC 8259, section 6).
func TestJSONNonFiniteNumbers(t *testing.T) {
	r := &Result{Findings: []rules.Finding{{Rule: "scan-time", Severity: rules.Warning, File: "m.yaml",
		Message: "odd", Numbers: map[string]float64{"nan": math.NaN(), "inf": math.Inf(1), "small": 1.23456789}}}}
	out := render(t, "json", r, false)
	validateOutputSchema(t, out)
	doc, _ := decodeJSON(t, out)
	if n := doc.Findings[0].Numbers; n["nan"] != 0 || n["inf"] != 0 || n["small"] != 1.234568 {
		t.Errorf("numbers %v, want 0, 0 and six decimals", n)
	}
}
