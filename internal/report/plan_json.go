package report

import (
	"io"

	"github.com/scangate/scangate/internal/advisor"
	"github.com/scangate/scangate/internal/analysis"
)

// PlanJSONSchemaVersion is the version of plan's JSON shape (schema/plan.schema.json).
// It changes only when a field is removed or changes meaning.
const PlanJSONSchemaVersion = 1

type jsonPlan struct {
	SchemaVersion int            `json:"schema_version"`
	Tool          jsonTool       `json:"tool"`
	Today         string         `json:"today"`
	HorizonMonths int            `json:"horizon_months"`
	Files         []jsonPlanFile `json:"files"`
}

type jsonPlanFile struct {
	Path   string          `json:"path"`
	URI    string          `json:"uri"`
	Model  string          `json:"model,omitempty"`
	Tables []jsonPlanTable `json:"tables"`
}

type jsonPlanTable struct {
	Name   string `json:"name"`
	Line   int    `json:"line"`
	Column int    `json:"column"`
	// Problem says why the table could not be laid out; the figures are absent then.
	Problem         string   `json:"problem,omitempty"`
	Rows            int64    `json:"rows"`
	SegmentRows     int64    `json:"segment_rows"`
	Partitions      int      `json:"partitions"`
	Segments        int64    `json:"segments"`
	FixedOverheadMs float64  `json:"fixed_overhead_ms"`
	WidestColumn    string   `json:"widest_column,omitempty"`
	ScanWallMs      *float64 `json:"scan_wall_ms,omitempty"`
	RefreshPeak     *float64 `json:"refresh_peak_bytes,omitempty"`
	// Recommendation is byte for byte the object check's JSON gives the same table.
	Recommendation *jsonRecommendation `json:"recommendation"`
	// Kept says why today's layout is kept, when Recommendation is null.
	Kept     *string        `json:"kept"`
	Sweep    []jsonLayout   `json:"sweep"`
	Forecast []jsonCrossing `json:"forecast"`
}

type jsonLayout struct {
	Change      string   `json:"change"`
	Label       string   `json:"label"`
	SegmentRows int64    `json:"segment_rows"`
	Partitions  int      `json:"partitions"`
	Segments    int64    `json:"segments"`
	FixedMs     float64  `json:"fixed_ms"`
	WallMs      *float64 `json:"wall_ms"`
	RefreshPeak *float64 `json:"refresh_peak_bytes"`
	Today       bool     `json:"today"`
	Recommended bool     `json:"recommended"`
	Front       bool     `json:"front"`
	Fits        bool     `json:"fits"`
	Locked      bool     `json:"locked"`
	Misses      []string `json:"misses"`
	Warnings    []string `json:"warnings"`
}

type jsonCrossing struct {
	Budget string  `json:"budget"`
	Unit   string  `json:"unit"`
	Limit  float64 `json:"limit"`
	Today  float64 `json:"today"`
	// FirstMonth is the month the budget is first crossed ("2027-03"), null when not
	// within the horizon; Month counts months from today (0: already over today).
	FirstMonth *string `json:"first_month"`
	Month      *int    `json:"month"`
	Value      float64 `json:"value"`
}

// writePlanJSON writes plan's machine-readable report (schema/plan.schema.json).
func writePlanJSON(w io.Writer, doc *Plan, _ bool) error {
	out := jsonPlan{
		SchemaVersion: PlanJSONSchemaVersion, Tool: jsonTool{Name: "scangate", Version: doc.Version},
		Today: doc.Today.Format("2006-01-02"), HorizonMonths: doc.Horizon, Files: []jsonPlanFile{},
	}
	for _, f := range doc.Files {
		jf := jsonPlanFile{Path: f.Manifest.File, URI: f.URI, Model: f.Manifest.Model, Tables: []jsonPlanTable{}}
		for _, p := range f.Plans {
			jf.Tables = append(jf.Tables, planTableJSON(p))
		}
		out.Files = append(out.Files, jf)
	}
	return encodeJSON(w, out)
}

func planTableJSON(p analysis.TablePlan) jsonPlanTable {
	jt := jsonPlanTable{Name: p.Spec.Name, Line: p.Spec.Pos.Line, Column: p.Spec.Pos.Col, Sweep: []jsonLayout{}, Forecast: []jsonCrossing{}}
	if p.Problems != "" || p.Sweep == nil || p.Sweep.Today < 0 {
		jt.Problem = p.Problems
		return jt
	}
	sw := p.Sweep
	now := &sw.Candidates[sw.Today]
	jt.Rows, jt.SegmentRows, jt.Partitions = now.Rows, now.SegmentRows, now.Layout.Partitions
	jt.Segments, jt.FixedOverheadMs = now.Layout.Segments, round(now.Layout.FixedMs)
	if now.Widest != "" {
		jt.WidestColumn, jt.ScanWallMs = now.Widest, roundPtr(now.WallMs)
	}
	if sw.Profiled {
		jt.RefreshPeak = roundPtr(now.Peak)
	}
	jt.Recommendation = recommendationJSON(p.Rec)
	if p.Rec == nil {
		k := p.Keep
		jt.Kept = &k
	}
	for k := range sw.Candidates {
		c := &sw.Candidates[k]
		l := jsonLayout{Change: c.Change, Label: c.Label, SegmentRows: c.SegmentRows, Partitions: c.Layout.Partitions,
			Segments: c.Layout.Segments, FixedMs: round(c.Layout.FixedMs), Today: c.Today(),
			Recommended: p.Rec != nil && c.Change == p.Rec.Candidate.Change,
			Front:       c.Front, Fits: c.Fits, Locked: c.Locked, Misses: orEmpty(c.Misses), Warnings: orEmpty(c.Warnings)}
		if c.Widest != "" {
			l.WallMs = roundPtr(c.WallMs)
		}
		if sw.Profiled {
			l.RefreshPeak = roundPtr(c.Peak)
		}
		jt.Sweep = append(jt.Sweep, l)
	}
	if p.Now != nil {
		for _, c := range p.Now.Crossings {
			jt.Forecast = append(jt.Forecast, crossingJSON(c))
		}
	}
	return jt
}

func crossingJSON(c advisor.Crossing) jsonCrossing {
	out := jsonCrossing{Budget: c.Budget, Unit: c.Unit, Limit: round(c.Limit), Today: round(c.Now), Value: round(c.Value)}
	if c.Month >= 0 {
		m, when := c.Month, advisor.Month(c.Date)
		out.Month, out.FirstMonth = &m, &when
	}
	return out
}

func roundPtr(x float64) *float64 {
	v := round(x)
	return &v
}

// orEmpty is a list as JSON writes it: empty rather than null.
func orEmpty(s []string) []string {
	if s == nil {
		return []string{}
	}
	return s
}
