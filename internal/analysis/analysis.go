// Package analysis lays out every table of one manifest once: its partitions, segments,
// the scan of its widest column, the candidate changes and the advisor's sweep. Rules,
// plan, diff and every report read the same analysis, so two screens never compute a
// table's figures two ways.
//
// It sits between the advisor and the rules: schema -> layout -> advisor -> analysis ->
// rules -> report. It never imports the rules: the thresholds the advisor ranks layouts
// by reach it as data (advisor.Levels). Lazy results (options, sweeps) are computed on
// first use behind methods; callers read a table, never change it.
package analysis

import (
	"github.com/scangate/scangate/internal/advisor"
	"github.com/scangate/scangate/internal/layout"
	"github.com/scangate/scangate/schema"
)

// Model is one analysed manifest.
type Model struct {
	Manifest *schema.Manifest
	Tables   []*Table // in manifest order; tables that cannot be expanded are left out
	// FirstGrowing is the manifest index of the first table with growth_per_year, -1
	// without one: the model's refresh peak moves with growth and is forecast once, there.
	FirstGrowing int

	advisor *advisor.Model
	levels  advisor.Levels
}

// Table is one table with the numbers every rule and report needs, computed once.
type Table struct {
	File    string
	Spec    schema.Table
	Engine  schema.Engine
	Budgets schema.Budgets // the model's budgets with the table's own on top
	Index   int            // the table's place in the manifest
	// Parts are the expanded partitions; nil once the model is settled.
	Parts  []layout.Partition
	Layout layout.Layout
	// Widest is the column with the largest encoded size, nil without column profiles;
	// Scan is the estimated full scan of it.
	Widest *schema.Column
	Scan   layout.Scan

	model   *Model
	encoded float64 // encoded bytes of the profiled columns, kept when Parts is dropped
	settled bool

	sweep   *advisor.Sweep // the advisor's sweep, computed when first asked for
	swept   bool
	kept    *Layouts // the sweep's layouts as reports compare them, kept by Settle
	rec     Recommendation
	recDone bool
	keep    string // why there is no recommendation, worded as a hint
}

// Analyze lays out every table of m. lv are the rules' warning levels, so the advisor
// recommends layouts the rules stay quiet about. A table whose partitions cannot be
// expanded is left out; the loader refuses such manifests before they get here.
func Analyze(m *schema.Manifest, lv advisor.Levels) *Model {
	md := &Model{Manifest: m, FirstGrowing: -1, advisor: advisor.NewModel(m), levels: lv}
	md.Tables = make([]*Table, 0, len(m.Tables))
	for i, spec := range m.Tables {
		if md.FirstGrowing < 0 && spec.GrowthPerYear != 0 {
			md.FirstGrowing = i
		}
		parts, err := layout.Expand(spec)
		if err != nil {
			continue
		}
		t := &Table{
			File:    m.File,
			Spec:    spec,
			Engine:  m.Engine,
			Budgets: m.Budgets.Override(spec.Budgets),
			Index:   i,
			Parts:   parts,
			Layout:  layout.Compute(parts, m.Engine.SegmentRows, m.Engine.SegmentOverheadMs),
			model:   md,
		}
		t.Widest, t.Scan = widest(spec, parts, m.Engine)
		md.Tables = append(md.Tables, t)
	}
	return md
}

// Model is the analysed manifest the table belongs to; nil for a table built outside
// Analyze or once the model is settled.
func (t *Table) Model() *Model { return t.model }

// Advisor is the advisor's view of the whole manifest, shared by its tables, for
// forecasts; nil for a table built outside Analyze.
func (t *Table) Advisor() *advisor.Model {
	if t.model == nil {
		return nil
	}
	return t.model.advisor
}

// Levels are the warning levels the model was analysed with.
func (t *Table) Levels() advisor.Levels {
	if t.model == nil {
		return advisor.DefaultLevels
	}
	return t.model.levels
}

// widest finds the column whose full scan costs most, and that scan.
func widest(spec schema.Table, parts []layout.Partition, e schema.Engine) (*schema.Column, layout.Scan) {
	// Sizes are cheap; only the widest column's scan is scheduled.
	var best *schema.Column
	bestBytes := -1.0
	for i := range spec.Columns {
		c := &spec.Columns[i]
		if b := layout.ColumnBytes(*c, parts, e.SegmentRows); b > bestBytes {
			best, bestBytes = c, b
		}
	}
	if best == nil {
		return nil, layout.Scan{}
	}
	return best, layout.ScanColumn(*best, spec.Rows, parts, e)
}

// EncodedBytes is the encoded size of the table's profiled columns.
func (t *Table) EncodedBytes() float64 {
	if !t.settled {
		return layout.TableBytes(t.Spec.Columns, t.Spec.Rows, t.Parts, t.Engine.SegmentRows)
	}
	return t.encoded
}

// Settle keeps what reports need once the rules have run and drops the rest: the
// expanded partitions and the advisor's sweeps can hold far more memory than the
// manifest, and a run over a whole repository holds every table until it reports.
// A table that was swept keeps its layouts in brief (Layouts).
func (md *Model) Settle() {
	for _, t := range md.Tables {
		t.Settle()
	}
	md.advisor = nil // its caches hold every table's partitions at several sizes and months
}

// Settle is Model.Settle for one table, once every rule has read it: the rules read one
// table at a time, so a model of many tables never holds every table's sweep at once.
func (t *Table) Settle() {
	if t.settled {
		return
	}
	t.encoded = t.EncodedBytes()
	if t.swept {
		t.kept = layoutsOf(t.sweep)
	}
	t.settled = true
	t.Parts, t.sweep, t.model = nil, nil, nil
}
