package analysis

import (
	"github.com/scangate/scangate/internal/layout"
	"github.com/scangate/scangate/schema"
)

// Row is a settled table in brief: the figures check's reports print beside it and diff
// compares, without the table's spec, partitions or sweep. A run over a whole repository
// keeps one row per table to the end instead of the analysis, which holds several times
// as much (the spec's column lists above all).
type Row struct {
	Name string
	Pos  schema.Pos // the table's mapping's first key
	// Scheme is the table's partition policy; SegmentRows and Workers are its engine's
	// segment capacity and refresh workers (schema.Engine.RefreshWorkers).
	Scheme      schema.Scheme
	SegmentRows int64
	Workers     int32
	// Scanned is whether the table has column profiles, and so a widest column;
	// RoutineDeclared whether it declares a routine refresh (Table.RoutineDeclared).
	Scanned, RoutineDeclared bool
	Layout                   RowLayout
	// ScanOverheadBudgetMs and ScanBudgetMs are the table's budgets, nil when unset.
	ScanOverheadBudgetMs, ScanBudgetMs *float64
	// Widest is the name of the column whose full scan costs most; ScanWallMs is that
	// scan's wall time.
	Widest     string
	ScanWallMs float64
	// Encoded is the encoded size of the profiled columns and RowBytes the widest
	// uncompressed row, for the model's refresh peak.
	Encoded, RowBytes float64
	Full, Routine     RowRebuild
	Peaks             *Peaks          // the model's, shared by its rows
	Recommendation    *Recommendation // nil when there is none, or when it was never computed
	Layouts           *Layouts        // Table.Layouts: nil when the table was never swept
}

// RowLayout is the part of layout.Layout reports print.
type RowLayout struct {
	Partitions int
	Rows       int64
	Segments   int64
	Ideal      int64
	Excess     int64
	Fill       float64
	FixedMs    float64
}

// RowRebuild is the part of layout.Rebuild reports print.
type RowRebuild struct {
	Partitions int
	Rows       int64
	Days       float64
	Seconds    float64
}

func rebuildRow(r layout.Rebuild) RowRebuild {
	return RowRebuild{Partitions: r.Partitions, Rows: r.Rows, Days: r.Days, Seconds: r.Seconds}
}

// Row is the table in brief, with the model's peaks p. Called on a settled table, it
// reads only what settling kept: the recommendation when one was computed, the sweep's
// layouts when it was swept. The recommendation's candidate is copied without its spec
// and warnings, which no report of a row reads.
func (t *Table) Row(p *Peaks) Row {
	l := t.Layout
	r := Row{
		Name: t.Spec.Name, Pos: t.Spec.Pos, Scheme: internScheme(t.Spec.Partitions.Scheme),
		SegmentRows: t.Engine.SegmentRows, Workers: int32(t.Engine.RefreshWorkers()),
		Layout: RowLayout{Partitions: l.Partitions, Rows: l.Rows, Segments: l.Segments, Ideal: l.Ideal,
			Excess: l.Excess, Fill: l.Fill, FixedMs: l.FixedMs},
		ScanOverheadBudgetMs: t.Budgets.ScanOverheadMs, ScanBudgetMs: t.Budgets.ScanMs,
		Encoded: t.EncodedBytes(), RowBytes: layout.RowBytes(t.Spec.Columns),
		Full: rebuildRow(t.Full), Routine: rebuildRow(t.Routine), RoutineDeclared: t.RoutineDeclared(),
		Peaks: p, Layouts: t.Layouts(),
	}
	if t.Widest != nil {
		r.Widest, r.Scanned, r.ScanWallMs = t.Widest.Name, true, t.Scan.WallMs
	}
	if rec, ok := t.Recommended(); ok {
		c := *rec.Candidate
		c.Spec, c.Warnings = schema.Table{}, nil
		rec.Candidate = &c
		r.Recommendation = &rec
	}
	return r
}

// internScheme is s as one of the schema's constants, so a row does not keep the
// manifest's copy of the word alive.
func internScheme(s schema.Scheme) schema.Scheme {
	for _, c := range []schema.Scheme{schema.SchemeNone, schema.SchemeEven, schema.SchemeTime, schema.SchemeList} {
		if s == c {
			return c
		}
	}
	return s
}

// Rows are the tables of one model in brief, in order; they share one copy of the
// model's peaks.
func Rows(ts []*Table) []Row {
	out := make([]Row, len(ts))
	if len(ts) == 0 {
		return out
	}
	p := ts[0].Peaks()
	for i, t := range ts {
		out[i] = t.Row(&p)
	}
	return out
}

// Brief is the row without the recommendation and the layouts: what diff compares.
func (r Row) Brief() Row {
	r.Recommendation, r.Layouts = nil, nil
	return r
}
