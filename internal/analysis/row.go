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
	File string
	Name string
	Pos  schema.Pos // the table's mapping's first key
	// Scheme is the table's partition policy; SegmentRows and Workers are its engine's
	// segment capacity and refresh workers (schema.Engine.RefreshWorkers).
	Scheme      schema.Scheme
	SegmentRows int64
	Workers     int
	Layout      RowLayout
	// ScanOverheadBudgetMs and ScanBudgetMs are the table's budgets, nil when unset.
	ScanOverheadBudgetMs, ScanBudgetMs *float64
	// Widest is the name of the column whose full scan costs most, Scanned false without
	// column profiles; ScanWallMs is that scan's wall time.
	Widest     string
	Scanned    bool
	ScanWallMs float64
	// Profiled is whether the table lists column profiles; Encoded is their encoded
	// size and RowBytes the widest uncompressed row, for the model's refresh peak.
	Profiled          bool
	Encoded, RowBytes float64
	Full, Routine     RowRebuild
	RoutineDeclared   bool
	Peaks             Peaks
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

// Row is the table in brief. Called on a settled table, it reads only what settling
// kept: the recommendation when one was computed, the sweep's layouts when it was swept.
// The recommendation's candidate is copied without its spec and warnings, which no
// report of a row reads.
func (t *Table) Row() Row {
	l := t.Layout
	r := Row{
		File: t.File, Name: t.Spec.Name, Pos: t.Spec.Pos, Scheme: t.Spec.Partitions.Scheme,
		SegmentRows: t.Engine.SegmentRows, Workers: t.Engine.RefreshWorkers(),
		Layout: RowLayout{Partitions: l.Partitions, Rows: l.Rows, Segments: l.Segments, Ideal: l.Ideal,
			Excess: l.Excess, Fill: l.Fill, FixedMs: l.FixedMs},
		ScanOverheadBudgetMs: t.Budgets.ScanOverheadMs, ScanBudgetMs: t.Budgets.ScanMs,
		Profiled: len(t.Spec.Columns) > 0, Encoded: t.EncodedBytes(), RowBytes: layout.RowBytes(t.Spec.Columns),
		Full: rebuildRow(t.Full), Routine: rebuildRow(t.Routine), RoutineDeclared: t.RoutineDeclared(),
		Peaks: t.Peaks(), Layouts: t.Layouts(),
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

// Rows are the tables in brief, in order.
func Rows(ts []*Table) []Row {
	out := make([]Row, len(ts))
	for i, t := range ts {
		out[i] = t.Row()
	}
	return out
}

// Brief is the row without the recommendation and the layouts: what diff compares.
func (r Row) Brief() Row {
	r.Recommendation, r.Layouts = nil, nil
	return r
}
