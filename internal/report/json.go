package report

import (
	"io"
	"math"
	"sort"

	"github.com/scangate/scangate/internal/analysis"
	"github.com/scangate/scangate/rules"
)

func init() {
	register(writers{
		traits: Traits{Name: "json", Kinds: CheckReport | DiffReport | PlanReport, NeedsTables: true},
		check:  writeJSON,
		diff:   writeDiffJSON,
		plan:   writePlanJSON,
	})
}

// JSONSchemaVersion is the version of the JSON report's shape (schema/output.schema.json).
// It changes only when a field is removed or changes meaning.
const JSONSchemaVersion = 1

type jsonReport struct {
	SchemaVersion int                  `json:"schema_version"`
	Tool          jsonTool             `json:"tool"`
	FailOn        string               `json:"fail_on"`
	Failed        bool                 `json:"failed"`
	Summary       jsonSummary          `json:"summary"`
	Files         jsonSeq[jsonFile]    `json:"files"`
	Findings      jsonSeq[jsonFinding] `json:"findings"`
}

type jsonTool struct {
	Name    string `json:"name"`
	Version string `json:"version"`
}

type jsonSummary struct {
	Files        int `json:"files"`
	InvalidFiles int `json:"invalid_files"`
	Tables       int `json:"tables"`
	Errors       int `json:"errors"`
	Warnings     int `json:"warnings"`
	Notes        int `json:"notes"`
	Waived       int `json:"waived"`
	Baselined    int `json:"baselined"`
	// BaselineFixed counts baseline entries no finding matched; present with --baseline.
	BaselineFixed *int `json:"baseline_fixed,omitempty"`
	// BaselineEscalated and BaselineExpired count the findings the baseline no longer
	// absorbs (more severe than recorded; entry expired); present with --baseline.
	BaselineEscalated *int `json:"baseline_escalated,omitempty"`
	BaselineExpired   *int `json:"baseline_expired,omitempty"`
}

type jsonFile struct {
	Path   string             `json:"path"`
	URI    string             `json:"uri"`
	Model  string             `json:"model,omitempty"`
	Valid  bool               `json:"valid"`
	Tables jsonSeq[jsonTable] `json:"tables"`
}

type jsonTable struct {
	Name                 string   `json:"name"`
	Line                 int      `json:"line"`
	Column               int      `json:"column"`
	Scheme               string   `json:"scheme"`
	Rows                 int64    `json:"rows"`
	SegmentRows          int64    `json:"segment_rows"`
	Partitions           int      `json:"partitions"`
	Segments             int64    `json:"segments"`
	IdealSegments        int64    `json:"ideal_segments"`
	ExcessSegments       int64    `json:"excess_segments"`
	Fill                 float64  `json:"fill"`
	FixedOverheadMs      float64  `json:"fixed_overhead_ms"`
	ScanOverheadBudgetMs *float64 `json:"scan_overhead_budget_ms,omitempty"`
	WidestColumn         string   `json:"widest_column,omitempty"`
	ScanWallMs           *float64 `json:"scan_wall_ms,omitempty"`
	ScanBudgetMs         *float64 `json:"scan_budget_ms,omitempty"`

	Refresh jsonRefresh `json:"refresh"`
	// Recommendation is the table's one recommendation, null when today's layout is kept.
	Recommendation *jsonRecommendation `json:"recommendation"`
}

// jsonRefresh is what a full and the routine refresh of a table rebuild; Routine is
// null when the table declares none (every refresh is then a full one).
type jsonRefresh struct {
	Full    jsonRebuild  `json:"full"`
	Routine *jsonRebuild `json:"routine"`
}

type jsonRebuild struct {
	Partitions int      `json:"partitions"`
	Rows       int64    `json:"rows"`
	Days       *float64 `json:"days,omitempty"`
	Seconds    float64  `json:"seconds"`
	PeakBytes  *float64 `json:"model_peak_bytes,omitempty"`
}

func rebuildJSON(r analysis.RowRebuild, peak *float64) jsonRebuild {
	j := jsonRebuild{Partitions: r.Partitions, Rows: r.Rows, Seconds: round(r.Seconds)}
	if r.Days > 0 {
		d := round(r.Days)
		j.Days = &d
	}
	if peak != nil {
		p := round(*peak)
		j.PeakBytes = &p
	}
	return j
}

type jsonFinding struct {
	Rule        string             `json:"rule"`
	Severity    string             `json:"severity"`
	Fails       bool               `json:"fails"`
	File        string             `json:"file"`
	URI         string             `json:"uri"`
	Line        int                `json:"line"`
	Column      int                `json:"column"`
	Table       string             `json:"table,omitempty"`
	Message     string             `json:"message"`
	Hints       []string           `json:"hints"`
	Fingerprint string             `json:"fingerprint"`
	Numbers     map[string]float64 `json:"numbers"`
	Waiver      *jsonWaiver        `json:"waiver,omitempty"`
	Baselined   bool               `json:"baselined"`
}

type jsonWaiver struct {
	Reason  string `json:"reason"`
	Expires string `json:"expires"`
	Line    int    `json:"line"`
}

// writeJSON writes the versioned machine-readable report (schema/output.schema.json).
func writeJSON(w io.Writer, r *Result, _ bool) error {
	n := r.Counts()
	waived, baselined := r.Accepted()
	doc := jsonReport{
		SchemaVersion: JSONSchemaVersion,
		Tool:          jsonTool{Name: "scangate", Version: r.Version},
		FailOn:        failOnName(r.FailOn),
		Failed:        r.Failed(),
		Summary: jsonSummary{
			Files: r.Summary.Files, InvalidFiles: r.Summary.Invalid, Tables: r.Summary.Tables,
			Errors: n[rules.Error], Warnings: n[rules.Warning], Notes: n[rules.Note],
			Waived: waived, Baselined: baselined,
		},
		// Files and findings are built one at a time as they are written.
		Files: seqOf(r.Files, func(f File) jsonFile {
			return jsonFile{Path: f.Name, URI: f.URI, Model: f.Model, Valid: !f.Invalid, Tables: seqOf(f.Tables, tableJSON)}
		}),
		Findings: seqOf(r.Findings, func(f rules.Finding) jsonFinding { return findingJSON(r, f) }),
	}
	if r.Baseline != nil {
		u := *r.Baseline
		doc.Summary.BaselineFixed, doc.Summary.BaselineEscalated, doc.Summary.BaselineExpired = &u.Fixed, &u.Escalated, &u.Expired
	}
	return encodeJSON(w, doc)
}

func findingJSON(r *Result, f rules.Finding) jsonFinding {
	jf := jsonFinding{
		Rule: f.Rule, Severity: f.Severity.String(), Fails: r.Fails(f),
		File: f.File, URI: r.URI(f.File), Line: f.Pos.Line, Column: f.Pos.Col,
		Table: f.Table, Message: f.Message, Hints: hintsJSON(f),
		Fingerprint: r.Fingerprint(f), Numbers: numbersJSON(f), Baselined: f.Baselined,
	}
	if w := f.Waiver; w != nil {
		jf.Waiver = &jsonWaiver{Reason: w.Reason, Expires: w.Expires.Format("2006-01-02"), Line: w.Pos.Line}
	}
	return jf
}

func tableJSON(t analysis.Row) jsonTable {
	l, rr := t.Layout, rowReport(t)
	jt := jsonTable{
		Name: t.Name, Line: t.Pos.Line, Column: t.Pos.Col,
		Scheme: string(rr.Scheme), Rows: l.Rows, SegmentRows: t.SegmentRows,
		Partitions: l.Partitions, Segments: l.Segments, IdealSegments: rr.Ideal, ExcessSegments: l.Segments - rr.Ideal,
		Fill: round(l.Fill), FixedOverheadMs: round(l.FixedMs),
		ScanOverheadBudgetMs: rr.ScanOverheadBudgetMs, ScanBudgetMs: rr.ScanBudgetMs,
		Recommendation: recommendationJSON(rr.Recommendation),
	}
	if t.Scanned {
		wall := round(t.ScanWallMs)
		jt.WidestColumn, jt.ScanWallMs = rr.Widest, &wall
	}
	var peaks analysis.Peaks
	if rr.Peaks != nil {
		peaks = *rr.Peaks
	}
	jt.Refresh.Full = rebuildJSON(rr.Full, peaks.Full)
	if rr.RoutineDeclared {
		r := rebuildJSON(rr.Routine, peaks.Routine)
		jt.Refresh.Routine = &r
	}
	return jt
}

// rowReport is what a row holds for reports; empty for a row made for comparing.
func rowReport(t analysis.Row) *analysis.RowReport {
	if t.Report == nil {
		return &analysis.RowReport{}
	}
	return t.Report
}

// numbersJSON rounds a finding's figures for the JSON reports.
func numbersJSON(f rules.Finding) map[string]float64 {
	nums := make(map[string]float64, len(f.Numbers))
	for k, v := range f.Numbers {
		nums[k] = round(v)
	}
	return nums
}

// hintsJSON is a finding's hints, an empty list rather than null when it has none.
func hintsJSON(f rules.Finding) []string {
	if f.Hints == nil {
		return []string{}
	}
	return f.Hints
}

// round keeps six decimals: enough for any figure a person reads, and it hides the
// last-bit differences floating point may show between machines.
func round(x float64) float64 {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return 0
	}
	if math.Abs(x) >= 1e15 {
		return math.Round(x)
	}
	return math.Round(x*1e6) / 1e6
}

func failOnName(s rules.Severity) string {
	if s == 0 {
		return "never"
	}
	return s.String()
}

// sortedKeys returns a map's keys in order, so no output depends on map order.
func sortedKeys[V any](m map[string]V) []string {
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	return keys
}
