package report

import (
	"io"

	"github.com/scangate/scangate/internal/change"
)

// DiffJSONSchemaVersion is the version of the JSON diff's shape (schema/diff.schema.json).
// It changes only when a field is removed or changes meaning. Version 2 split the
// findings on both sides into worsened, improved and unchanged (version 1 had them all
// under unchanged).
const DiffJSONSchemaVersion = 2

type jsonDiff struct {
	SchemaVersion int                      `json:"schema_version"`
	Tool          jsonTool                 `json:"tool"`
	Base          string                   `json:"base"`
	Head          string                   `json:"head"`
	Valid         bool                     `json:"valid"`
	Failed        bool                     `json:"failed"`
	Verdict       string                   `json:"verdict"`
	Gate          jsonGate                 `json:"gate"`
	Summary       jsonDiffSummary          `json:"summary"`
	Invalid       []jsonInvalid            `json:"invalid"`
	Files         jsonSeq[jsonFileChange]  `json:"files"`
	Models        jsonSeq[jsonModelChange] `json:"models"`
	Findings      jsonFindingChanges       `json:"findings"`
}

type jsonGate struct {
	MaxAddedMs       *float64     `json:"max_added_ms"`
	MaxAddedSegments *int64       `json:"max_added_segments"`
	FailOnNew        string       `json:"fail_on_new"`
	Breaches         []jsonBreach `json:"breaches"`
}

type jsonBreach struct {
	Kind        string  `json:"kind"`
	Model       string  `json:"model,omitempty"`
	Table       string  `json:"table,omitempty"`
	Value       float64 `json:"value"`
	Limit       float64 `json:"limit"`
	Fingerprint string  `json:"fingerprint,omitempty"`
	Message     string  `json:"message"`
}

type jsonDiffSummary struct {
	Models        int     `json:"models"`
	Tables        int     `json:"tables"`
	ChangedTables int     `json:"changed_tables"`
	AddedSegments int64   `json:"added_segments"`
	AddedMs       float64 `json:"added_fixed_overhead_ms"`
	Introduced    int     `json:"introduced"`
	Resolved      int     `json:"resolved"`
	Worsened      int     `json:"worsened"`
	Improved      int     `json:"improved"`
	Unchanged     int     `json:"unchanged"`
}

type jsonInvalid struct {
	Side     string        `json:"side"`
	Path     string        `json:"path"`
	URI      string        `json:"uri"`
	Problems []jsonProblem `json:"problems"`
}

type jsonProblem struct {
	Line    int    `json:"line"`
	Column  int    `json:"column"`
	Message string `json:"message"`
}

type jsonFileChange struct {
	Status   string  `json:"status"`
	Model    string  `json:"model"`
	BasePath *string `json:"base_path"`
	HeadPath *string `json:"head_path"`
	URI      string  `json:"uri"`
}

type jsonModelChange struct {
	Name   string                   `json:"name"`
	Status string                   `json:"status"`
	Before *jsonTotals              `json:"before"`
	After  *jsonTotals              `json:"after"`
	Delta  jsonTotalsDelta          `json:"delta"`
	Tables jsonSeq[jsonTableChange] `json:"tables"`
}

type jsonTotals struct {
	Tables           int      `json:"tables"`
	Partitions       int      `json:"partitions"`
	Segments         int64    `json:"segments"`
	FixedOverheadMs  float64  `json:"fixed_overhead_ms"`
	RefreshPeakBytes *float64 `json:"refresh_peak_bytes,omitempty"`
}

type jsonTotalsDelta struct {
	Tables           int      `json:"tables"`
	Partitions       int      `json:"partitions"`
	Segments         int64    `json:"segments"`
	FixedOverheadMs  float64  `json:"fixed_overhead_ms"`
	RefreshPeakBytes *float64 `json:"refresh_peak_bytes,omitempty"`
}

type jsonTableChange struct {
	Name     string       `json:"name"`
	Status   string       `json:"status"`
	BasePath *string      `json:"base_path"`
	HeadPath *string      `json:"head_path"`
	Before   *jsonFigures `json:"before"`
	After    *jsonFigures `json:"after"`
	Delta    jsonDelta    `json:"delta"`
}

type jsonFigures struct {
	Rows            int64    `json:"rows"`
	Partitions      int      `json:"partitions"`
	Segments        int64    `json:"segments"`
	Fill            float64  `json:"fill"`
	FixedOverheadMs float64  `json:"fixed_overhead_ms"`
	ScanWallMs      *float64 `json:"scan_wall_ms,omitempty"`
}

type jsonDelta struct {
	Rows            int64    `json:"rows"`
	Partitions      int      `json:"partitions"`
	Segments        int64    `json:"segments"`
	Fill            float64  `json:"fill"`
	FixedOverheadMs float64  `json:"fixed_overhead_ms"`
	ScanWallMs      *float64 `json:"scan_wall_ms,omitempty"`
}

type jsonFindingChanges struct {
	Introduced jsonSeq[jsonDiffFinding] `json:"introduced"`
	Resolved   jsonSeq[jsonDiffFinding] `json:"resolved"`
	Worsened   jsonSeq[jsonDiffFinding] `json:"worsened"`
	Improved   jsonSeq[jsonDiffFinding] `json:"improved"`
	Unchanged  jsonSeq[jsonDiffFinding] `json:"unchanged"`
}

// jsonFigure is a finding's graded figure on both sides.
type jsonFigure struct {
	Name   string  `json:"name"`
	Before float64 `json:"before"`
	After  float64 `json:"after"`
}

type jsonDiffFinding struct {
	Rule         string             `json:"rule"`
	Severity     string             `json:"severity"`
	BaseSeverity string             `json:"base_severity,omitempty"`
	Fails        bool               `json:"fails"`
	File         string             `json:"file"`
	Line         int                `json:"line"`
	Column       int                `json:"column"`
	Table        string             `json:"table,omitempty"`
	Message      string             `json:"message"`
	Hints        []string           `json:"hints"`
	Fingerprint  string             `json:"fingerprint"`
	Numbers      map[string]float64 `json:"numbers"`
	Figure       *jsonFigure        `json:"figure,omitempty"`
}

// writeDiffJSON writes the versioned machine-readable diff (schema/diff.schema.json). The
// files, models, tables and findings are streamed (jsonSeq): a change over a repository
// lists every table, and its report would otherwise be held whole, values and bytes.
func writeDiffJSON(w io.Writer, r *DiffResult, _ bool) error {
	d := r.Diff
	tables, changed := r.counts()
	breaking := r.breaking()
	doc := jsonDiff{
		SchemaVersion: DiffJSONSchemaVersion,
		Tool:          jsonTool{Name: "scangate", Version: r.Version},
		Base:          d.Base, Head: d.Head,
		Valid:   len(d.Invalid) == 0,
		Failed:  r.Failed(),
		Verdict: d.Verdict(),
		Gate: jsonGate{
			MaxAddedMs: r.Gate.MaxAddedMs, MaxAddedSegments: r.Gate.MaxAddedSegments,
			FailOnNew: failOnName(r.Gate.FailOnNew), Breaches: []jsonBreach{},
		},
		Summary: jsonDiffSummary{
			Models: len(d.Models), Tables: tables, ChangedTables: changed,
			Introduced: len(d.Introduced), Resolved: len(d.Resolved), Worsened: len(d.Worsened),
			Improved: len(d.Improved), Unchanged: len(d.Unchanged),
		},
		Invalid: []jsonInvalid{},
		Findings: jsonFindingChanges{
			Introduced: findingsJSON(d.Introduced, breaking), Resolved: findingsJSON(d.Resolved, breaking),
			Worsened: findingsJSON(d.Worsened, breaking), Improved: findingsJSON(d.Improved, breaking),
			Unchanged: findingsJSON(d.Unchanged, breaking),
		},
	}
	for _, b := range r.Breaches {
		jb := jsonBreach{Kind: b.Kind, Model: b.Model, Table: b.Table, Value: round(b.Value), Limit: b.Limit, Message: b.Message}
		if b.Finding != nil {
			jb.Fingerprint = b.Finding.Fingerprint
		}
		doc.Gate.Breaches = append(doc.Gate.Breaches, jb)
	}
	for _, inv := range d.Invalid {
		ji := jsonInvalid{Side: inv.Side, Path: inv.File.Name, URI: inv.File.Key, Problems: []jsonProblem{}}
		for _, f := range inv.Findings {
			ji.Problems = append(ji.Problems, jsonProblem{Line: f.Pos.Line, Column: f.Pos.Col, Message: f.Message})
		}
		doc.Invalid = append(doc.Invalid, ji)
	}
	doc.Files = seqOf(d.Files, func(f change.FileChange) jsonFileChange {
		jf := jsonFileChange{Status: string(f.Status), Model: f.Model}
		if f.Base != nil {
			jf.BasePath, jf.URI = &f.Base.Name, f.Base.Key
		}
		if f.Head != nil {
			jf.HeadPath, jf.URI = &f.Head.Name, f.Head.Key
		}
		return jf
	})
	// The summary comes before the models: its sums walk the tables first, in the same
	// order as the models list them, so they add up to the same bits.
	for _, t := range d.Tables() {
		doc.Summary.AddedSegments += t.AddedSegments()
		doc.Summary.AddedMs += t.AddedMs()
	}
	doc.Summary.AddedMs = round(doc.Summary.AddedMs)
	doc.Models = func(yield func(jsonModelChange) bool) {
		for i := range d.Models {
			if !yield(modelChangeJSON(&d.Models[i])) {
				return
			}
		}
	}
	return encodeJSON(w, doc)
}

// modelChangeJSON is one model of the diff, its tables streamed.
func modelChangeJSON(m *change.ModelChange) jsonModelChange {
	jm := jsonModelChange{Name: m.Name, Status: string(m.Status), Before: totalsJSON(m.Before), After: totalsJSON(m.After)}
	b, a := zeroTotals(m.Before), zeroTotals(m.After)
	jm.Delta = jsonTotalsDelta{
		Tables: a.Tables - b.Tables, Partitions: a.Partitions - b.Partitions,
		Segments: a.Segments - b.Segments, FixedOverheadMs: round(a.FixedMs - b.FixedMs),
	}
	// A refresh delta needs the peak on every side that has the model.
	if (m.Before == nil || m.Before.RefreshBytes != nil) && (m.After == nil || m.After.RefreshBytes != nil) && (m.Before != nil || m.After != nil) {
		var pb, pa float64
		if m.Before != nil {
			pb = *m.Before.RefreshBytes
		}
		if m.After != nil {
			pa = *m.After.RefreshBytes
		}
		d := round(pa - pb)
		jm.Delta.RefreshPeakBytes = &d
	}
	jm.Tables = func(yield func(jsonTableChange) bool) {
		for t := range m.TableChanges() {
			if !yield(tableChangeJSON(t)) {
				return
			}
		}
	}
	return jm
}

func zeroTotals(t *change.Totals) change.Totals {
	if t == nil {
		return change.Totals{}
	}
	return *t
}

func totalsJSON(t *change.Totals) *jsonTotals {
	if t == nil {
		return nil
	}
	jt := &jsonTotals{Tables: t.Tables, Partitions: t.Partitions, Segments: t.Segments, FixedOverheadMs: round(t.FixedMs)}
	if t.RefreshBytes != nil {
		v := round(*t.RefreshBytes)
		jt.RefreshPeakBytes = &v
	}
	return jt
}

func figuresJSON(f *change.Figures) *jsonFigures {
	if f == nil {
		return nil
	}
	jf := &jsonFigures{Rows: f.Rows, Partitions: f.Partitions, Segments: f.Segments, Fill: round(f.Fill), FixedOverheadMs: round(f.FixedMs)}
	if f.ScanWallMs != nil {
		w := round(*f.ScanWallMs)
		jf.ScanWallMs = &w
	}
	return jf
}

func tableChangeJSON(t change.TableChange) jsonTableChange {
	jt := jsonTableChange{Name: t.Name, Status: string(t.Status), Before: figuresJSON(t.Before), After: figuresJSON(t.After)}
	if t.BaseFile != "" {
		jt.BasePath = &t.BaseFile
	}
	if t.HeadFile != "" {
		jt.HeadPath = &t.HeadFile
	}
	var b, a change.Figures
	if t.Before != nil {
		b = *t.Before
	}
	if t.After != nil {
		a = *t.After
	}
	jt.Delta = jsonDelta{
		Rows: a.Rows - b.Rows, Partitions: a.Partitions - b.Partitions, Segments: a.Segments - b.Segments,
		Fill: round(a.Fill - b.Fill), FixedOverheadMs: round(a.FixedMs - b.FixedMs),
	}
	// A wall-time delta needs the scan on both sides, or on the one side that exists.
	if wb, wa, ok := wallPair(t); ok {
		d := round(wa - wb)
		jt.Delta.ScanWallMs = &d
	}
	return jt
}

// wallPair returns the scan wall ms before and after, 0 on a side without the table;
// ok is false when a side that has the table has no column profiles.
func wallPair(t change.TableChange) (before, after float64, ok bool) {
	if t.Before != nil {
		if t.Before.ScanWallMs == nil {
			return 0, 0, false
		}
		before = *t.Before.ScanWallMs
	}
	if t.After != nil {
		if t.After.ScanWallMs == nil {
			return 0, 0, false
		}
		after = *t.After.ScanWallMs
	}
	return before, after, true
}

func findingsJSON(fs []change.FindingChange, breaking map[*change.FindingChange]bool) jsonSeq[jsonDiffFinding] {
	return func(yield func(jsonDiffFinding) bool) {
		for i := range fs {
			if !yield(diffFindingJSON(&fs[i], breaking)) {
				return
			}
		}
	}
}

func diffFindingJSON(fc *change.FindingChange, breaking map[*change.FindingChange]bool) jsonDiffFinding {
	f := fc.Finding
	nums, hints := numbersJSON(f), hintsJSON(f)
	jf := jsonDiffFinding{
		Rule: f.Rule, Severity: f.Severity.String(), Fails: breaking[fc],
		File: f.File, Line: f.Pos.Line, Column: f.Pos.Col, Table: f.Table,
		Message: f.Message, Hints: hints, Fingerprint: fc.Fingerprint, Numbers: nums,
	}
	if fc.Was != 0 {
		jf.BaseSeverity = fc.Was.String()
	}
	if fc.Figure != "" {
		jf.Figure = &jsonFigure{Name: fc.Figure, Before: round(fc.Before), After: round(fc.After)}
	}
	return jf
}
