package report

import (
	"github.com/scangate/scangate/internal/analysis"
)

// jsonRecommendation is a table's one recommendation in the JSON reports: check's
// tables and plan's carry it from the same function, so the two are byte for byte alike
// for the same table (schema/output.schema.json and schema/plan.schema.json).
type jsonRecommendation struct {
	Change        string   `json:"change"`
	Hint          string   `json:"hint"`
	Fits          bool     `json:"fits"`
	EngineChange  bool     `json:"engine_change"`
	SegmentRows   int64    `json:"segment_rows"`
	Partitions    int      `json:"partitions"`
	Segments      int64    `json:"segments"`
	FixedMs       float64  `json:"fixed_ms"`
	Misses        []string `json:"misses"`
	HorizonMonths int      `json:"horizon_months"`
	HoldsThrough  *string  `json:"holds_through"`
}

// recommendationJSON is the recommendation of a table, nil when today's layout is kept.
func recommendationJSON(r *analysis.Recommendation) *jsonRecommendation {
	if r == nil || r.Candidate == nil {
		return nil
	}
	c := r.Candidate
	out := &jsonRecommendation{
		Change: c.Change, Hint: r.Hint(), Fits: r.Fits, EngineChange: c.Engine,
		SegmentRows: c.SegmentRows, Partitions: c.Layout.Partitions, Segments: c.Layout.Segments,
		FixedMs: round(c.Layout.FixedMs), Misses: c.Misses, HorizonMonths: r.Horizon,
	}
	if out.Misses == nil {
		out.Misses = []string{}
	}
	if r.HoldsThrough != "" {
		h := r.HoldsThrough
		out.HoldsThrough = &h
	}
	return out
}
