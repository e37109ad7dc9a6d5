package rules

import (
	"github.com/scangate/scangate/internal/layout"
	"github.com/scangate/scangate/schema"
)

// Table is one table with the numbers every rule needs, computed once.
type Table struct {
	Config  Config
	File    string
	Spec    schema.Table
	Engine  schema.Engine
	Budgets schema.Budgets // the model's budgets with the table's own on top
	Parts   []layout.Partition
	Layout  layout.Layout
	// Widest is the column with the largest encoded size, nil without column profiles;
	// Scan is the estimated full scan of it.
	Widest *schema.Column
	Scan   layout.Scan

	// Bars compare fixed ms per scan of today's layout with the recommended one and the
	// faster layouts of the Pareto front, for tables with a segment finding; reports
	// chart them. Set by Check.
	Bars []Bar

	encoded float64 // encoded bytes of the profiled columns, kept when Parts is dropped
	settled bool

	options []Option // candidate changes, computed when a rule first asks
	optDone bool
	index   int     // the table's place in the manifest, for the advisor
	advice  *advice // the advisor's view of the manifest, shared by its tables
}

// Analyze computes the layout of every table of m. A table whose partitions cannot be
// expanded is left out; the loader refuses such manifests before they get here.
func Analyze(m *schema.Manifest, cfg Config) []*Table {
	out := make([]*Table, 0, len(m.Tables))
	adv := newAdvice(m)
	for i, spec := range m.Tables {
		parts, err := layout.Expand(spec)
		if err != nil {
			continue
		}
		t := &Table{
			Config:  cfg,
			File:    m.File,
			Spec:    spec,
			Engine:  m.Engine,
			Budgets: m.Budgets.Override(spec.Budgets),
			Parts:   parts,
			Layout:  layout.Compute(parts, m.Engine.SegmentRows, m.Engine.SegmentOverheadMs),
			index:   i,
			advice:  adv,
		}
		t.Widest, t.Scan = widest(spec, parts, m.Engine)
		out = append(out, t)
	}
	return out
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

// finding fills in what every finding of a table shares.
// Run sets the rule ID.
func (t *Table) finding(sev Severity, pos schema.Pos, subject, msg string, hints []string, nums map[string]float64) Finding {
	return Finding{
		Severity: sev,
		File:     t.File,
		Pos:      pos,
		Table:    t.Spec.Name,
		Subject:  subject,
		Message:  t.Spec.Name + ": " + msg,
		Hints:    hints,
		Numbers:  nums,
	}
}

// Bar is one layout in a report's chart.
type Bar struct {
	Label   string
	FixedMs float64
}

// EncodedBytes is the encoded size of the table's profiled columns.
func (t *Table) EncodedBytes() float64 {
	if !t.settled {
		return layout.TableBytes(t.Spec.Columns, t.Spec.Rows, t.Parts, t.Engine.SegmentRows)
	}
	return t.encoded
}

// settle keeps what reports need once the rules have run and drops the rest: the
// expanded partitions and the advisor's sweeps can hold far more memory than the
// manifest, and a run over a whole repository holds every table until it reports.
func (t *Table) settle(findings []Finding) {
	if t.settled {
		return
	}
	t.encoded = t.EncodedBytes()
	for _, f := range findings {
		if f.File == t.File && f.Table == t.Spec.Name && !f.Accepted() &&
			(f.Rule == scanOverheadID || f.Rule == truncatedSegmentsID) {
			t.Bars = chartBars(t.sweep())
			break
		}
	}
	t.settled = true
	t.Parts, t.options, t.advice = nil, nil, nil
}
