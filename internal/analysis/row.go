package analysis

import (
	"github.com/scangate/scangate/internal/layout"
	"github.com/scangate/scangate/schema"
)

// Row is a settled table in brief: the figures diff compares and, in Report, what
// check's reports print beside it, without the table's spec, partitions or sweep. A run
// over a whole repository keeps one row per table to the end instead of the analysis,
// which holds several times as much (the spec's column lists above all).
type Row struct {
	Name string
	Pos  schema.Pos // the table's mapping's first key
	// SegmentRows and Workers are the engine's segment capacity and refresh workers
	// (schema.Engine.RefreshWorkers).
	SegmentRows int64
	Workers     int32
	// Scanned is whether the table has column profiles, and so a widest column whose
	// full scan takes ScanWallMs.
	Scanned    bool
	ScanWallMs float64
	Layout     RowLayout
	// Encoded is the encoded size of the profiled columns and RowBytes the widest
	// uncompressed row, for the model's refresh peak.
	Encoded, RowBytes float64
	Report            *RowReport // nil in a row made for comparing (Table.Row)
}

// RowReport is what check's reports print of a table beyond the figures diff compares.
type RowReport struct {
	Scheme schema.Scheme // the partition policy
	// Ideal is the fewest segments the rows fit in (layout.Layout.Ideal); the excess is
	// Layout.Segments - Ideal.
	Ideal int64
	// ScanOverheadBudgetMs and ScanBudgetMs are the table's budgets, nil when unset.
	ScanOverheadBudgetMs, ScanBudgetMs *float64
	Widest                             string // the widest column's name, when Scanned
	Full, Routine                      RowRebuild
	RoutineDeclared                    bool            // Table.RoutineDeclared
	Peaks                              *Peaks          // the model's, shared by its rows
	Recommendation                     *Recommendation // nil when there is none, or when it was never computed
	Layouts                            *Layouts        // Table.Layouts: nil when the table was never swept
}

// RowLayout is the part of layout.Layout diff compares and reports print.
type RowLayout struct {
	Partitions int
	Rows       int64
	Segments   int64
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

// Row is the table in brief, the figures diff compares. Called on a settled table.
func (t *Table) Row() Row {
	l := t.Layout
	r := Row{
		Name: t.Spec.Name, Pos: t.Spec.Pos,
		SegmentRows: t.Engine.SegmentRows, Workers: int32(t.Engine.RefreshWorkers()),
		Layout: RowLayout{Partitions: l.Partitions, Rows: l.Rows, Segments: l.Segments,
			Fill: l.Fill, FixedMs: l.FixedMs},
		Encoded: t.EncodedBytes(), RowBytes: layout.RowBytes(t.Spec.Columns),
	}
	if t.Widest != nil {
		r.Scanned, r.ScanWallMs = true, t.Scan.WallMs
	}
	return r
}

// ReportRow is Row with what reports print, with the model's peaks p. On a settled
// table it reads only what settling kept: the recommendation when one was computed, the
// sweep's layouts when it was swept. The recommendation's candidate is kept detached
// (advisor.Candidate.Detached), so a row holds nothing of the sweep.
func (t *Table) ReportRow(p *Peaks) Row {
	r := t.Row()
	rr := &RowReport{
		Scheme: internScheme(t.Spec.Partitions.Scheme), Ideal: t.Layout.Ideal,
		ScanOverheadBudgetMs: t.Budgets.ScanOverheadMs, ScanBudgetMs: t.Budgets.ScanMs,
		Full: rebuildRow(t.Full), Routine: rebuildRow(t.Routine), RoutineDeclared: t.RoutineDeclared(),
		Peaks: p, Layouts: t.Layouts(),
	}
	if t.Widest != nil {
		rr.Widest = t.Widest.Name
	}
	if rec, ok := t.Recommended(); ok {
		c := rec.Candidate.Detached()
		rec.Candidate = &c
		rr.Recommendation = &rec
	}
	r.Report = rr
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

// Rows are the tables of one model in brief (Row), in order.
func Rows(ts []*Table) []Row {
	out := make([]Row, len(ts))
	for i, t := range ts {
		out[i] = t.Row()
	}
	return out
}

// ReportRows are the tables of one model as reports print them (ReportRow), in order;
// they share one copy of the model's peaks.
func ReportRows(ts []*Table) []Row {
	out := make([]Row, len(ts))
	if len(ts) == 0 {
		return out
	}
	p := ts[0].Peaks()
	for i, t := range ts {
		out[i] = t.ReportRow(&p)
	}
	return out
}
