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
	// Charted: a report charts each swept table's front (Layouts), so the sweeps mark
	// it. Without it they are lean (advisor.Settings.Lean): the same pick, closest
	// layout and alternative for a fraction of the work, and no front.
	Charted bool

	advisor *advisor.Model
	levels  advisor.Levels
	peaks   *Peaks              // RefreshPeaks, once computed
	sized   [2]layout.Estimated // widest's column estimates, their buffers reused table to table
}

// Peaks are the model's memory peaks during a full and a routine refresh with today's
// layouts; a nil field is not estimated (no column profiles, or no table declares a
// routine refresh, which is then the full one).
type Peaks struct {
	Full, Routine *float64
}

// RefreshPeaks is the model's refresh peaks, computed once; kept when the model settles.
func (md *Model) RefreshPeaks() Peaks {
	if md.peaks == nil && md.advisor != nil {
		md.peaks = md.refreshPeaks()
	}
	if md.peaks == nil {
		return Peaks{} // built outside Analyze
	}
	return *md.peaks
}

func (md *Model) refreshPeaks() *Peaks {
	var p Peaks
	var model, rowBytes float64
	profiled, declared := false, false
	for _, t := range md.Tables {
		model += t.EncodedBytes()
		rowBytes = max(rowBytes, layout.RowBytes(t.Spec.Columns))
		profiled = profiled || len(t.Spec.Columns) > 0
		declared = declared || t.RoutineDeclared()
	}
	if profiled {
		e := md.Manifest.Engine
		v := layout.RefreshPeak(model, e.RefreshWorkers(), e.SegmentRows, rowBytes)
		p.Full = &v
	}
	if v, ok := md.advisor.RoutinePeak(); declared && ok {
		p.Routine = &v
	}
	return &p
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
	// Routine and Full are what the table's routine refresh and a full refresh rebuild,
	// and how long each takes (layout.Rebuild); Routine is Full when no routine refresh
	// is declared.
	Routine, Full layout.Rebuild
	window        layout.Window // the routine refresh, read from today's policy

	model   *Model
	encoded float64 // encoded bytes of the profiled columns, kept when Parts is dropped
	settled bool

	encodedDone bool  // encoded is computed
	peaks       Peaks // the model's, kept when the table settles

	sweep   *advisor.Sweep // the advisor's sweep, computed when first asked for
	swept   bool
	pruned  bool     // sweep is pruned to what check reads (Sweep), not plan's (FullSweep)
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
		md.advisor.Expanded(i, parts) // one expansion, shared with the sweeps
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
		var bytes float64
		var exact bool
		t.Widest, t.Scan, bytes, exact = widest(spec, parts, m.Engine, &md.sized)
		if t.Widest != nil {
			// The sweeps and views lay the table out as it is too: they quote these.
			md.advisor.Scanned(i, t.Widest.Name, t.Scan.WallMs, bytes)
		}
		if exact {
			t.encoded, t.encodedDone = bytes, true
		}
		t.window = layout.WindowOf(spec, parts)
		par := m.Engine.RefreshWorkers()
		t.Full = layout.Window{Whole: true}.Rebuilt(spec, parts, par, m.Engine.RefreshRowsPerS)
		t.Routine = t.Full
		if !t.window.Whole {
			t.Routine = t.window.Rebuilt(spec, parts, par, m.Engine.RefreshRowsPerS)
		}
		md.Tables = append(md.Tables, t)
	}
	md.sized = [2]layout.Estimated{} // sized for the largest table; nothing reads them now
	return md
}

// Peaks are the refresh peaks of the model the table belongs to.
func (t *Table) Peaks() Peaks {
	if t.settled || t.model == nil {
		return t.peaks
	}
	return t.model.RefreshPeaks()
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

// RoutineDeclared reports whether the table declares a routine refresh that rebuilds less
// than the whole table.
func (t *Table) RoutineDeclared() bool { return !t.window.Whole }

// widest finds the column whose full scan costs most, and that scan, from the same
// estimates (layout.Estimated); with the columns' summed bytes (sized by the partitions'
// rows, as the advisor sizes them), which are the table's encoded bytes (EncodedBytes,
// sized by the table's rows) when exact: when the two are the same.
func widest(spec schema.Table, parts []layout.Partition, e schema.Engine, sized *[2]layout.Estimated) (_ *schema.Column, _ layout.Scan, bytes float64, exact bool) {
	// Sizes are cheap; only the widest column's scan is scheduled.
	var best *schema.Column
	bestBytes := -1.0
	next := 0 // sized[next] is free; the other holds the widest so far
	for i := range spec.Columns {
		c := &spec.Columns[i]
		b := sized[next].Estimate(*c, parts, e.SegmentRows, nil)
		bytes += b // in column order, as layout.TableBytes sums them
		if b > bestBytes {
			best, bestBytes = c, b
			next = 1 - next
		}
	}
	if best == nil {
		return nil, layout.Scan{}, 0, false
	}
	if es := &sized[1-next]; es.For(spec.Rows, e) {
		return best, es.Scan(e), bytes, true
	}
	return best, layout.ScanColumn(*best, spec.Rows, parts, e), bytes, false
}

// EncodedBytes is the encoded size of the table's profiled columns.
func (t *Table) EncodedBytes() float64 {
	if !t.encodedDone {
		t.encoded, t.encodedDone = layout.TableBytes(t.Spec.Columns, t.Spec.Rows, t.Parts, t.Engine.SegmentRows), true
	}
	return t.encoded
}

// Settle keeps what reports need once the rules have run and drops the rest: the
// expanded partitions and the advisor's sweeps can hold far more memory than the
// manifest, and a run over a whole repository holds every table until it reports.
// A table that was swept keeps its layouts in brief (Layouts).
func (md *Model) Settle() {
	md.RefreshPeaks()
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
	if t.model != nil {
		t.peaks = t.model.RefreshPeaks()
	}
	if t.swept {
		t.kept = layoutsOf(t.sweep)
	}
	t.settled = true
	t.Parts, t.sweep, t.model = nil, nil, nil
}
