package advisor

import (
	"fmt"
	"slices"
	"time"

	"github.com/scangate/scangate/internal/layout"
	"github.com/scangate/scangate/internal/units"

	"github.com/scangate/scangate/schema"
)

// Projection is one month of a forecast: the table's figures with every table of the
// model grown by its own growth_per_year.
type Projection struct {
	Month int       // 0 is today
	Date  time.Time // today plus Month months
	Figures
	Peak float64 // the model's refresh peak
}

// Crossing is when one budget is first broken.
type Crossing struct {
	Budget string  // manifest key: scan_overhead_ms, scan_ms, refresh_memory, engine.memory
	Name   string  // in words: "scan-overhead budget"
	Unit   string  // "ms" or "bytes"
	Limit  float64 //
	Now    float64 // the figure today
	Month  int     // first month above the limit: 0 already today, -1 not within the horizon
	Date   time.Time
	Value  float64 // the figure that month (at the horizon's end when never crossed)
	Rows   int64   // the table's rows that month
	Model  bool    // a model-wide figure (refresh memory), not the table's own
}

// Forecast projects one layout of a table month by month.
type Forecast struct {
	Table     string
	Growth    float64
	Start     time.Time
	Horizon   int
	Months    []Projection // 0..Horizon
	Crossings []Crossing   // one per budget that applies, in a fixed order
}

// AddMonths is date plus n calendar months, the day kept or clamped to the month's
// last day (2026-01-31 plus one month is 2026-02-28).
func AddMonths(date time.Time, n int) time.Time {
	y, m, d := date.Date()
	first := time.Date(y, m+time.Month(n), 1, 0, 0, 0, 0, time.UTC)
	last := first.AddDate(0, 1, -1).Day()
	return time.Date(first.Year(), first.Month(), min(d, last), 0, 0, 0, 0, time.UTC)
}

// Forecast projects table i laid out as spec with segments of s rows for horizon
// months from start, and finds the first month each budget is crossed.
func (md *Model) Forecast(i int, spec schema.Table, s int64, start time.Time, horizon int) (*Forecast, error) {
	return md.forecast(i, spec, s, start, horizon, md.Peak)
}

// Crossings is Forecast as far as its crossings read it, for the budget-forecast rule:
// a month's refresh peak is computed only where a memory budget applies (0 otherwise),
// since each one lays out every profiled table of the model for that month.
func (md *Model) Crossings(i int, spec schema.Table, s int64, start time.Time, horizon int) (*Forecast, error) {
	return md.forecast(i, spec, s, start, horizon, md.missPeak)
}

func (md *Model) forecast(i int, spec schema.Table, s int64, start time.Time, horizon int, peak func(int, Figures, int64, int) float64) (*Forecast, error) {
	fc := &Forecast{Table: spec.Name, Growth: spec.GrowthPerYear, Start: start, Horizon: horizon}
	for t := 0; t <= horizon; t++ {
		f, err := md.Evaluate(spec, s, t)
		if err != nil {
			return nil, err
		}
		fc.Months = append(fc.Months, Projection{Month: t, Date: AddMonths(start, t), Figures: f, Peak: peak(i, f, s, t)})
	}
	b := md.Budgets(i)
	type figure struct {
		budget, name, unit string
		limit              float64
		value              func(Projection) float64
		model              bool
	}
	var figs []figure
	if b.ScanOverheadMs != nil {
		figs = append(figs, figure{"scan_overhead_ms", "scan-overhead budget", "ms", *b.ScanOverheadMs, func(p Projection) float64 { return p.Layout.FixedMs }, false})
	}
	if b.ScanMs != nil && len(spec.Columns) > 0 {
		figs = append(figs, figure{"scan_ms", "scan-time budget", "ms", *b.ScanMs, func(p Projection) float64 { return p.WallMs }, false})
	}
	if md.profiled {
		if md.refresh != nil {
			figs = append(figs, figure{"refresh_memory", "refresh-memory budget", "bytes", *md.refresh, func(p Projection) float64 { return p.Peak }, true})
		}
		if mem := md.M.Engine.Memory; mem > 0 {
			figs = append(figs, figure{"engine.memory", "engine memory", "bytes", float64(mem), func(p Projection) float64 { return p.Peak }, true})
		}
	}
	for _, g := range figs {
		c := Crossing{Budget: g.budget, Name: g.name, Unit: g.unit, Limit: g.limit, Now: g.value(fc.Months[0]), Month: -1, Model: g.model}
		for _, p := range fc.Months {
			if g.value(p) > g.limit {
				c.Month, c.Date, c.Value, c.Rows = p.Month, p.Date, g.value(p), p.Rows
				break
			}
		}
		if c.Month < 0 {
			last := fc.Months[len(fc.Months)-1]
			c.Date, c.Value, c.Rows = last.Date, g.value(last), last.Rows
		}
		fc.Crossings = append(fc.Crossings, c)
	}
	return fc, nil
}

// Breaks lists the budgets table i, laid out as spec with segments of s rows, breaks
// after month months of growth; a scan_ms miss's figure may be a floor of it.
func (md *Model) Breaks(i int, spec schema.Table, s int64, month int) ([]Miss, error) {
	spec = Grow(spec, month)
	var parts []layout.Partition
	var w *oneSegment
	if own := md.M.Tables[i]; month == 0 && spec.Rows == own.Rows && spec.GrowthPerYear == own.GrowthPerYear && spec.Partitions.SamePolicy(own.Partitions) && sameColumns(spec.Columns, own.Columns) {
		_, parts, w = md.grownEntry(i, 0) // the table as it is: expanded once
	}
	if parts == nil {
		var err error
		if parts, err = md.expand(spec); err != nil {
			return nil, err
		}
		w = nil
	}
	// Figured as far as whether it misses reads them (its callers read no miss's
	// figure): the scan is scheduled only when neither its ceiling is within scan_ms
	// nor its floor above, the columns estimated only when a memory budget reads their
	// bytes.
	f, _ := md.decidedFigures(spec, parts, s, w, md.budgets[i].ScanMs, 1, md.memoryBound(), true)
	return md.missed(i, f, s, month, md.missPeak(i, f, s, month), true), nil
}

// NewlyBroken reports whether growth over months months breaks a budget that table i,
// laid out as spec with segments of s rows, keeps today. The figures only grow with the
// rows, so a budget kept at both ends is kept throughout.
func (md *Model) NewlyBroken(i int, spec schema.Table, s int64, months int) bool {
	now, err := md.Breaks(i, spec, s, 0)
	if err != nil {
		return false
	}
	later, err := md.Breaks(i, spec, s, months)
	if err != nil {
		return false
	}
	for _, l := range later {
		if !slices.ContainsFunc(now, func(n Miss) bool { return n.Key == l.Key }) {
			return true
		}
	}
	return false
}

// CandidateHolds is HoldsFor for candidate c of table i's sweep: a layout that fits
// today and that the sweep found keeping every budget at the end of these months holds
// throughout (the figures only grow with the rows), so only others are searched.
func (md *Model) CandidateHolds(i int, c *Candidate, months int) int {
	if c.Fits && (!md.growth || c.held == months) {
		return months
	}
	return md.HoldsFor(i, *c.Spec, c.SegmentRows, months)
}

// HoldsFor is how many months from today table i, laid out as spec with segments of s
// rows, keeps every budget, up to months: months when it holds to the end, -1 when it
// breaks one today. The figures only grow with the rows, so the first month it breaks
// is found by halving, a handful of layouts whatever the horizon.
func (md *Model) HoldsFor(i int, spec schema.Table, s int64, months int) int {
	holds := func(t int) bool {
		miss, err := md.Breaks(i, spec, s, t)
		return err == nil && len(miss) == 0
	}
	if !holds(0) {
		return -1
	}
	if !md.growth || holds(months) {
		return months
	}
	lo, hi := 0, months // holds at lo, breaks at hi
	for hi-lo > 1 {
		if mid := (lo + hi) / 2; holds(mid) {
			lo = mid
		} else {
			hi = mid
		}
	}
	return lo
}

// BestAt is the candidate of the sweep ranked first (as the recommendation) among those
// that fit every budget with segments of s rows, nil when none does.
func (sw *Sweep) BestAt(s, today int64) *Candidate {
	var best *Candidate
	for k := range sw.Candidates {
		c := &sw.Candidates[k]
		if c.SegmentRows == s && c.Fits && (best == nil || better(c, best, today, sw.routineToday())) {
			best = c
		}
	}
	return best
}

// EndingExcess is the layout that fits every budget with segments of s rows and ends at
// least half of today's excess segments, keeping the most partitions (then the fewest
// segments, then the first generated): what the truncated-segments note points at when
// today's layout is kept. Nil when today's layout has no excess segments or none does.
func (sw *Sweep) EndingExcess(s int64) *Candidate {
	if sw.Today < 0 {
		return nil
	}
	now := &sw.Candidates[sw.Today].Layout
	if now.ClosedExcess <= 0 {
		return nil
	}
	target := now.Segments - (now.ClosedExcess+1)/2
	var best *Candidate
	for k := range sw.Candidates {
		c := &sw.Candidates[k]
		if c.SegmentRows != s || !c.Fits || c.Today() || c.Layout.Segments > target {
			continue
		}
		if best == nil || c.Layout.Partitions > best.Layout.Partitions ||
			(c.Layout.Partitions == best.Layout.Partitions && c.Layout.Segments < best.Layout.Segments) {
			best = c
		}
	}
	return best
}

// Format writes a crossing's figure with its unit.
func (c Crossing) Format(v float64) string {
	if c.Unit == "bytes" {
		return units.Size(v)
	}
	return units.Ms(v) + " ms"
}

// Holds returns the best candidate of the sweep (ranked as the recommendation) that
// fits every budget today and still fits after months months of growth, or nil. The
// figures only grow with the rows, so fitting at both ends is fitting throughout.
func (md *Model) Holds(sw *Sweep, months int) *Candidate {
	var best *Candidate
	today := md.M.Engine.SegmentRows
	for k := range sw.Candidates {
		c := &sw.Candidates[k]
		if c.Locked || !c.Fits {
			continue
		}
		if months > 0 {
			f, err := md.Evaluate(*c.Spec, c.SegmentRows, months)
			if err != nil || len(md.missed(sw.Index, f, c.SegmentRows, months, md.missPeak(sw.Index, f, c.SegmentRows, months), false)) > 0 {
				continue
			}
		}
		if best == nil || better(c, best, today, sw.routineToday()) {
			best = c
		}
	}
	return best
}

// Month writes a forecast date as a month: 2026-09.
func Month(t time.Time) string { return fmt.Sprintf("%04d-%02d", t.Year(), int(t.Month())) }
