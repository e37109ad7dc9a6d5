package advisor

import (
	"cmp"
	"fmt"
	"math"
	"slices"
	"time"

	"github.com/scangate/scangate/internal/units"

	"github.com/scangate/scangate/internal/layout"
	"github.com/scangate/scangate/schema"
)

// DefaultCapacities are the segment capacities a sweep tries without a list: 2^20 to
// 2^24 rows (today's capacity is always added). When no layout at these fits every
// budget without a warning, the sweep doubles the largest capacity until one does or
// the engine's max_segment_rows is reached (Sweep), so a table pays for larger
// capacities only when its budgets need them.
var DefaultCapacities = []int64{1 << 20, 1 << 21, 1 << 22, 1 << 23, 1 << 24}

// Levels are the thresholds the rules warn at (rules/scan_overhead.go, scan_time.go,
// truncated_segments.go, partition_count.go); the recommendation avoids layouts that
// would still warn. The rules pass a project's own values.
type Levels struct {
	OverheadWarnShare float64 // scan-overhead warns above this share of the budget
	ScanWarnShare     float64 // scan-time warns above this share of the budget
	TruncWarnMin      float64 // truncated-segments warns from max(TruncWarnMin, TruncWarnShare x N) excess
	TruncWarnShare    float64
	PartitionLimit    float64 // partition-count warns above this many partitions
	HorizonMonths     int     // budget-forecast warns of a crossing within this many months
	// Today is the date forecasts count from: a recommendation's "holds through" month
	// is counted from it. The caller passes it (the advisor reads no clock).
	Today time.Time
}

// DefaultLevels are the rules' defaults; a test in package rules keeps them equal.
var DefaultLevels = Levels{OverheadWarnShare: 0.8, ScanWarnShare: 0.8, TruncWarnMin: 8, TruncWarnShare: 0.1, PartitionLimit: 5000, HorizonMonths: ForecastMonths}

// ForecastMonths is how far ahead the budget-forecast rule warns of a crossing by default.
const ForecastMonths = 12

// MaxHorizonMonths bounds plan's --horizon: fifty years of months is already far past
// any plan. The budget-forecast rule's horizon_months has a tighter bound of its own.
const MaxHorizonMonths = 600

// Horizon is the forecast window of the levels, the default when unset.
func (l Levels) Horizon() int { return l.horizon() }

// horizon is the forecast window of the levels, the default when unset.
func (l Levels) horizon() int {
	if l.HorizonMonths > 0 {
		return l.HorizonMonths
	}
	return ForecastMonths
}

// Settings choose what a sweep tries.
type Settings struct {
	// Capacities are the segment capacities to try; nil: DefaultCapacities, extended up
	// to the engine's max_segment_rows when the budgets need it. Today's is always
	// added; a capacity above max_segment_rows is never tried.
	Capacities       []int64
	FixedSegmentRows bool   // the deployment cannot change the segment capacity
	Levels           Levels // the zero value means DefaultLevels
	// PickOnly sweeps only as far as the pick needs: when a layout at today's capacity
	// fits every budget with no warning, no needless partitions and no more rows for the
	// routine refresh than today's layout rebuilds, no layout at another capacity can
	// rank above it (better), so the other capacities are left out. The pick is the
	// full sweep's; the front and the list of candidates are not.
	PickOnly bool
	// Prune leaves out what no reader of check's sweep (the pick, the closest layout,
	// the alternative at today's capacity, the front) reads: the scheduled scan time
	// of a layout whose scan is certainly within the warning share of scan_ms, or that
	// answers to no scan_ms (its WallMs is then a ceiling, not the estimate), and, at
	// other capacities than today's, the horizon of a layout that cannot be picked
	// (see try in Sweep). The pick, closest layout, front, fits, misses and
	// warnings-count ranking are the full sweep's; the pick's figures are computed in
	// full. plan, which prints every candidate, sweeps without it.
	Prune bool
	// Lean, with Prune, is check's sweep when no report charts the front: the front is
	// not marked (every Front is false) and, once a layout fits, a layout that it
	// outranks even at the warnings its layout alone raises (a lower bound of its own)
	// is laid out but not figured (Unfigured): it can be neither the pick, nor the
	// closest layout (something fits), nor an alternative. At another capacity than
	// today's that is so because every alternative is at today's. At today's it is so
	// only while the best so far is not today's own layout: that best (at today's, as the
	// lean sweep tries today's capacity first) is then the best there (BestAt), and
	// today's layout is not the pick, so no hint quotes the layout ending its excess
	// segments (EndingExcess), which ranks otherwise. Refresh peaks are computed only
	// where a memory budget reads them, and a miss is worded only for the pick and the
	// closest layout. Like PickOnly, it stops at today's capacity when the pick is
	// there. The pick, closest layout and alternatives are the pruned sweep's; the list
	// of candidates is not.
	Lean bool
}

func (s Settings) levels() Levels {
	if s.Levels == (Levels{}) {
		return DefaultLevels
	}
	return s.Levels
}

// Figures are the numbers of one table laid out one way.
type Figures struct {
	Rows   int64
	Layout layout.Layout
	Widest string  // the column with the largest encoded size; "" without profiles
	WallMs float64 // estimated wall time of a full scan of it; 0 without profiles
	Bytes  float64 // encoded size of the table's profiled columns
}

// Candidate is one layout of the sweep: a partition policy and a segment capacity.
type Candidate struct {
	Change      string        // what to change, as a hint says it; "" for today's layout
	Label       string        // short name of the partition policy
	Spec        *schema.Table // the table with this policy, shared by the policy's candidates
	SegmentRows int64
	Engine      bool // another segment capacity than today's: an engine setting for the whole model
	Locked      bool // Engine, but the capacity is fixed (Settings.FixedSegmentRows)
	Window      bool // keeps a recent window fine and merges older periods
	Figures
	Peak     float64  // the model's refresh peak with this layout (layout.RefreshPeak), but see Settings.Lean
	Front    bool     // on the Pareto front of fixed ms against refresh memory; a lean sweep marks none
	Fits     bool     // within every budget and the engine's memory
	Misses   []string // the budgets it breaks, in words, but see Settings.Lean
	Warnings []string // what check would still warn about, crossings within ForecastMonths included
	missed   []Miss   // Misses with their figures, for Closest
	order    int
	rough    bool // WallMs is a ceiling (Settings.Prune): figured in full when picked
	// Unfigured: a lean sweep (Settings.Lean) laid it out only, knowing it outranked:
	// its Layout, Routine and Full are set; its column figures, Peak, Misses, Fits and
	// Warnings are not.
	Unfigured bool
	pol       *policy
	held      int  // the horizon a check found it keeping every budget at; 0 unchecked or broken
	over      bool // WallMs is a floor above scan_ms (a lean sweep): figured in full when nothing fits
	partial   bool // over, from one column's bytes: Widest is that column's, Bytes only so far

	Routine layout.Rebuild // what the routine refresh rebuilds in this layout (routine.go)
	Full    layout.Rebuild // what a full refresh rebuilds: every partition
}

// Detached is a copy of the candidate for a report to keep: without its spec, warnings
// and the sweep's own state (the policy's partitions among it), which no report of a
// row reads and which would keep the sweep alive.
func (c Candidate) Detached() Candidate {
	c.Spec, c.Warnings, c.missed, c.pol = nil, nil, nil, nil
	return c
}

// Needless reports whether the layout keeps several partitions of a table whose rows fit
// in one segment (what the needless-partitioning rule notes).
func (c *Candidate) Needless() bool {
	return c.Layout.Partitions >= 2 && c.Rows <= c.SegmentRows
}

// Today reports whether the candidate is the table's layout as it is.
func (c *Candidate) Today() bool { return c.Change == "" }

// Sweep is every candidate layout of one table, the front and the recommendation.
type Sweep struct {
	Table       string
	Index       int // of the table in the manifest
	Candidates  []Candidate
	Today       int // index of today's layout in Candidates
	Recommended int // index of the recommended layout; -1 when no candidate fits
	// Closest, when none fits, is the candidate nearest every budget at once (the least
	// summed excess, Excess) among those that break no budget today's layout keeps and
	// make no broken figure worse; -1 when none is nearer than today's.
	Closest        int
	MaxSegmentRows int64 // the largest capacity the sweep could try (engine.max_segment_rows)
	Largest        int64 // the largest capacity it tried
	Profiled       bool  // the model has column profiles: the front's memory axis is the refresh peak

	Window layout.Window // the table's routine refresh, read from today's policy (routine.go)
}

// Model is a manifest prepared for sweeps and forecasts; it caches the figures of the
// tables a what-if leaves alone.
type Model struct {
	M           *schema.Manifest
	rowBytes    float64 // the widest row of the model
	profiled    bool
	growth      bool // some table grows or shrinks
	parallelism int
	refresh     *float64             // the refresh-memory budget: the strictest any table answers to
	budgets     []schema.Budgets     // by table: Budgets(i)
	views       map[viewKey]*view    // by (segment capacity, month); a cache only, never ranged over
	grown       map[int]*grownTables // by month; a cache only, never ranged over
	work        int                  // tables expanded or laid out so far, for the tests that hold it linear
	expanded    [][]layout.Partition // by table: its partitions as the analysis expanded them (Expanded)

	routinePeak *float64 // RoutinePeak, once computed
	// sized holds the column estimates of the layout being figured (widest): the widest
	// column's so far, and the next column's.
	sized [2]layout.Estimated
}

type viewKey struct {
	s     int64
	month int
}

// view is the tables of the model as the manifest has them, laid out with one segment
// capacity after some months of growth: what a what-if of one table holds against.
// Every candidate of a sweep reads it, so it is computed once. The first what-if's own
// table is left out until another table's what-if needs it: a model of one large table
// never lays it out, or holds its partitions, twice.
type view struct {
	scan    []scanState // by table: whether it fits its scan budgets, judged when first asked for
	broken  []scanFigs  // by table: its scan figures, kept only when it breaks them
	bytes   []float64   // by table: the encoded size of its profiled columns, 0 when unknown; once filled
	total   exactSum    // of bytes, so a refresh peak costs the same however many tables
	filled  bool        // bytes and total hold every table but skip (filled)
	skip    int         // the table left out, -1 none
	over    []tableMiss // tables that fit their scan budgets at today's capacity but not at this one, by table
	judged  int         // tables below this one have been judged for over, but those in lacking
	lacking []int       // tables over could not judge yet: a view had left them out
}

// scanState is what a view keeps of a table's figures besides its bytes: a view holds
// every table of the model, so it holds no more of each than a what-if reads.
type scanState uint8

const (
	scanUnjudged scanState = iota
	scanFits
	scanBreaks
	scanNone // cannot be expanded
)

func scanStateOf(b schema.Budgets, f Figures) scanState {
	if fitsScan(b, f) {
		return scanFits
	}
	return scanBreaks
}

// scanFigs are the figures by which a table breaks its scan budgets: fixed ms and wall
// ms per scan, each 0 when within its budget (a pruned scan's ceiling is, and says no
// more than that).
type scanFigs struct{ fixed, wall float64 }

func brokenFigs(b schema.Budgets, f Figures) scanFigs {
	var out scanFigs
	if b.ScanOverheadMs != nil && f.Layout.FixedMs > *b.ScanOverheadMs {
		out.fixed = f.Layout.FixedMs
	}
	if b.ScanMs != nil && f.Widest != "" && f.WallMs > *b.ScanMs {
		out.wall = f.WallMs
	}
	return out
}

// worse reports whether a breaks the budgets by more than b does on either figure.
func (a scanFigs) worse(b scanFigs) bool {
	const slack = 1e-9 // the same sum in another order
	return a.fixed > b.fixed*(1+slack) || a.wall > b.wall*(1+slack)
}

type tableMiss struct {
	j int
	Miss
}

// grownTables is the tables grown for some months, with their partitions (the same at
// every segment capacity), each expanded when first needed. Most months need few of
// the model's tables (the profiled ones), so each is held by pointer.
type grownTables struct {
	tables []*grownTableEntry // by table; nil until first needed
}

type grownTableEntry struct {
	spec  schema.Table
	parts []layout.Partition // nil when it cannot be expanded
	whole *oneSegment        // its column figures above every partition, shared by the views
}

// NewModel prepares m for sweeps and forecasts.
func NewModel(m *schema.Manifest) *Model {
	md := &Model{M: m, views: map[viewKey]*view{}, grown: map[int]*grownTables{}}
	md.budgets = make([]schema.Budgets, len(m.Tables))
	for i, t := range m.Tables {
		md.budgets[i] = m.Budgets.Override(t.Budgets)
		// The refresh peak is the model's, so its budget is the strictest of the tables'
		// (as the refresh-memory rule reads it).
		if b := md.Budgets(i).RefreshMemory; b != nil && (md.refresh == nil || float64(*b) < *md.refresh) {
			v := float64(*b)
			md.refresh = &v
		}
		md.rowBytes = max(md.rowBytes, layout.RowBytes(t.Columns))
		md.profiled = md.profiled || len(t.Columns) > 0
		md.growth = md.growth || t.GrowthPerYear != 0
	}
	md.parallelism = m.Engine.RefreshParallelism
	if md.parallelism < 1 {
		md.parallelism = max(m.Engine.Cores, 1)
	}
	return md
}

// Grows reports whether some table of the model grows or shrinks.
func (md *Model) Grows() bool { return md.growth }

// RefreshBudget is the model's refresh-memory budget in bytes, nil when none is set.
func (md *Model) RefreshBudget() *float64 { return md.refresh }

// Profiled reports whether any table of the model has column profiles, without which
// scan time and refresh memory are not estimated.
func (md *Model) Profiled() bool { return md.profiled }

// engineAt is the engine with another segment capacity.
func (md *Model) engineAt(s int64) schema.Engine {
	e := md.M.Engine
	e.SegmentRows = s
	return e
}

// Evaluate lays spec out in segments of s rows, with its rows grown for month months.
func (md *Model) Evaluate(spec schema.Table, s int64, month int) (Figures, error) {
	spec = Grow(spec, month)
	parts, err := md.expand(spec)
	if err != nil {
		return Figures{}, err
	}
	return md.figures(spec, parts, s), nil
}

// expand is layout.Expand, counted.
func (md *Model) expand(spec schema.Table) ([]layout.Partition, error) {
	md.work++
	return layout.Expand(spec)
}

// figures lays out partitions already expanded from spec.
func (md *Model) figures(spec schema.Table, parts []layout.Partition, s int64) Figures {
	return md.figuresWith(spec, parts, s, nil)
}

// oneSegment is what figuresWith keeps of one list of partitions (one policy, grown or
// not, with its spec) across the capacities a sweep tries. At a capacity above a
// partition's rows the partition is one part-empty segment of its own rows whatever the
// capacity (k = 0 full segments, rest = its rows, in layout's columnBytes), so the same
// estimates come out to the bit: each column keeps them (layout.Smaller), and at a
// capacity above every partition the column figures (Widest, WallMs, Bytes) are the
// same, schedule included, so they are kept whole. Most sweeps try five or more
// capacities above a small table's partitions and pay for one.
type oneSegment struct {
	top     int64 // the most rows of any partition; -1 until measured
	rows    int64 // spec.Rows the figures are for
	cols    []schema.Column
	set     bool             // rows and cols are set
	smaller []layout.Smaller // by column
	done    bool
	cache   Figures // only Widest, WallMs and Bytes are set
	// today is the column figures at today's capacity (Widest, WallMs, Bytes), handed
	// over by the analysis (Scanned) for the table as the manifest has it; nil for none.
	today *Figures
}

func newOneSegment() *oneSegment { return &oneSegment{top: -1} }

// oneSegmentFor is a oneSegment for spec's partitions, nil without column profiles:
// there are no column figures to keep then.
func oneSegmentFor(spec schema.Table) *oneSegment {
	if len(spec.Columns) == 0 {
		return nil
	}
	return newOneSegment()
}

// fits reports whether capacity s is above every partition of parts.
func (w *oneSegment) fits(spec schema.Table, parts []layout.Partition, s int64) bool {
	if w.top < 0 {
		w.top = 0
		for _, p := range parts {
			w.top = max(w.top, p.Rows)
		}
	}
	return s > w.top
}

// memo is w's estimates by column when w is spec's (taken on first use), else nil.
func (w *oneSegment) memo(spec schema.Table) []layout.Smaller {
	if w == nil {
		return nil
	}
	if !w.set {
		w.set, w.rows, w.cols = true, spec.Rows, spec.Columns
		w.smaller = make([]layout.Smaller, len(spec.Columns))
	}
	if w.rows != spec.Rows || !sameColumns(w.cols, spec.Columns) {
		return nil
	}
	return w.smaller
}

// figuresWith is figures, with w's estimates and column figures of the same partitions
// (w nil: none).
func (md *Model) figuresWith(spec schema.Table, parts []layout.Partition, s int64, w *oneSegment) Figures {
	md.work++
	f := Figures{Rows: spec.Rows, Layout: layout.Compute(parts, s, md.M.Engine.SegmentOverheadMs)}
	memo := w.memo(spec)
	if g := md.atToday(w, memo, s); g != nil {
		f.Widest, f.WallMs, f.Bytes = g.Widest, g.WallMs, g.Bytes
		return f
	}
	whole := memo != nil && w.fits(spec, parts, s)
	if whole && w.done {
		f.Widest, f.WallMs, f.Bytes = w.cache.Widest, w.cache.WallMs, w.cache.Bytes
		return f
	}
	if k, es := md.widest(&f, spec, parts, s, memo); k >= 0 {
		if e := md.engineAt(s); es.For(spec.Rows, e) {
			f.WallMs = es.Scan(e).WallMs
		} else {
			f.WallMs = layout.ScanColumnWith(spec.Columns[k], spec.Rows, parts, e, at(memo, k)).WallMs
		}
	}
	if whole {
		w.done, w.cache = true, Figures{Widest: f.Widest, WallMs: f.WallMs, Bytes: f.Bytes}
	}
	return f
}

// atToday is the figures the analysis handed over for w (Scanned) when s is today's
// capacity and memo (w's, for the spec at hand) is set: w is the table's own entry for
// its spec, so the same partitions and rows. Nil otherwise.
func (md *Model) atToday(w *oneSegment, memo []layout.Smaller, s int64) *Figures {
	if w == nil || w.today == nil || memo == nil || s != md.M.Engine.SegmentRows {
		return nil
	}
	return w.today
}

// at is &memo[k], nil without a memo.
func at(memo []layout.Smaller, k int) *layout.Smaller {
	if memo == nil {
		return nil
	}
	return &memo[k]
}

// sameColumns reports whether a and b are the same profiles (a grown table's are a copy).
func sameColumns(a, b []schema.Column) bool {
	if len(a) != len(b) {
		return false
	}
	return len(a) == 0 || &a[0] == &b[0] || slices.Equal(a, b)
}

// widest sets f's Bytes and Widest and returns the index of the widest column, -1
// without profiles, with its estimates (valid until the next call), which its scan
// reads when they are the scan's own (layout.Estimated.For).
func (md *Model) widest(f *Figures, spec schema.Table, parts []layout.Partition, s int64, memo []layout.Smaller) (int, *layout.Estimated) {
	k, es, _ := md.widestOr(f, spec, parts, s, memo, nil)
	return k, es
}

// widestOr is widest that, with above set, stops at the first column whose bytes alone
// put the widest column's scan certainly above *above (layout.Estimated.Least, a
// millionth under as elsewhere): it returns that column, nil estimates and its bound,
// and f's Widest and Bytes are then only as far as that column.
func (md *Model) widestOr(f *Figures, spec schema.Table, parts []layout.Partition, s int64, memo []layout.Smaller, above *float64) (int, *layout.Estimated, float64) {
	best, widest := -1.0, -1
	next := 0 // md.sized[next] is free; the other holds the widest so far
	for i, c := range spec.Columns {
		// The scan reads every byte of the column, so its bytes are the column's encoded
		// size (layout.TableBytes sums the same figure); only the widest is scheduled.
		b := md.sized[next].Estimate(c, parts, s, at(memo, i))
		f.Bytes += b
		if above != nil {
			if least := md.sized[next].Least(md.engineAt(s)); !math.IsInf(least, 1) && least*(1-1e-6) > *above {
				f.Widest = c.Name
				return i, nil, least
			}
		}
		if b > best {
			best, widest = b, i
			next = 1 - next
		}
	}
	if widest < 0 {
		return -1, nil, 0
	}
	f.Widest = spec.Columns[widest].Name
	return widest, &md.sized[1-next], 0
}

// Expanded hands the model table i's partitions as the manifest has them, already
// expanded (the analysis lays every table out first): its sweep, the views of the
// other tables' sweeps and its forecasts share them instead of expanding it again.
func (md *Model) Expanded(i int, parts []layout.Partition) {
	if md.expanded == nil {
		md.expanded = make([][]layout.Partition, len(md.M.Tables))
	}
	md.expanded[i] = parts
}

// Scanned hands the model table i's column figures as the manifest lays it out (the
// analysis sizes and schedules them first): the widest column, its scan's WallMs and
// the columns' bytes. A sweep, a view or Breaks that lays the table out as it is, at
// today's capacity and today's rows, quotes them instead of figuring them again (a
// forecast grows the rows, so it figures its own). Call it after Expanded.
func (md *Model) Scanned(i int, widest string, wallMs, bytes float64) {
	if _, _, w := md.grownEntry(i, 0); w != nil {
		w.today = &Figures{Widest: widest, WallMs: wallMs, Bytes: bytes}
	}
}

// grownTable is table j grown for month months, and its partitions, expanded once.
func (md *Model) grownTable(j, month int) (schema.Table, []layout.Partition) {
	spec, parts, _ := md.grownEntry(j, month)
	return spec, parts
}

// grownEntry is grownTable with the partitions' column figures above every partition.
func (md *Model) grownEntry(j, month int) (schema.Table, []layout.Partition, *oneSegment) {
	t := md.M.Tables[j]
	if month != 0 && !grows(t) {
		return md.grownEntry(j, 0) // growth leaves it as it is
	}
	g, ok := md.grown[month]
	if !ok {
		n := len(md.M.Tables)
		g = &grownTables{tables: make([]*grownTableEntry, n)}
		md.grown[month] = g
	}
	e := g.tables[j]
	if e == nil {
		e = &grownTableEntry{spec: Grow(t, month), whole: oneSegmentFor(t)}
		if month == 0 && md.expanded != nil && md.expanded[j] != nil {
			e.parts = md.expanded[j] // as the analysis expanded it (Expanded)
		} else {
			e.parts, _ = md.expand(e.spec) // nil when it cannot be expanded
		}
		g.tables[j] = e
	}
	return e.spec, e.parts, e.whole
}

// view is the model laid out with segments of s rows after month months of growth,
// every table but (perhaps) table i laid out; i = -1 for every table.
func (md *Model) view(s int64, month, i int) *view {
	k := viewKey{s, month}
	v, ok := md.views[k]
	if !ok {
		n := len(md.M.Tables)
		v = &view{scan: make([]scanState, n), broken: make([]scanFigs, n), skip: -1}
		md.views[k] = v
		if i >= 0 && i < n {
			v.skip = i
		}
	} else if v.skip >= 0 && v.skip != i {
		if v.filled {
			md.layOut(v, s, month, v.skip, i)
		}
		v.skip = -1
	}
	return v
}

// filled is view, with the encoded bytes of every table it holds, which a refresh peak
// sums: laid out when a peak first asks, so a sweep that reads no peak (a model
// without a memory budget, checked without a chart) judges only the scan budgets it
// needs (scanOf).
func (md *Model) filled(s int64, month, i int) *view {
	v := md.view(s, month, i)
	if !v.filled {
		v.filled = true
		v.bytes = make([]float64, len(md.M.Tables))
		for j := range md.M.Tables {
			if j != v.skip {
				md.layOut(v, s, month, j, i)
			}
		}
	}
	return v
}

// layOut puts table j (not i) into v. Only a profiled table has bytes; whether a table
// fits its scan budgets is judged when a what-if at another capacity first asks
// (scanOf), so a view of a model of many tables without profiles costs little.
func (md *Model) layOut(v *view, s int64, month, j, i int) {
	if len(md.M.Tables[j].Columns) == 0 {
		return
	}
	if month != 0 && !grows(md.M.Tables[j]) {
		// Growth leaves it as it is: share today's figures (j != i, so they are there).
		base := md.filled(s, 0, i)
		v.scan[j], v.broken[j], v.bytes[j] = base.scan[j], base.broken[j], base.bytes[j]
		v.total.add(v.bytes[j])
		return
	}
	spec, parts, w := md.grownEntry(j, month)
	if parts == nil {
		v.scan[j] = scanNone
		return
	}
	f := md.judgedFigures(j, spec, parts, s, w, true)
	v.scan[j], v.bytes[j] = scanStateOf(md.budgets[j], f), f.Bytes
	if v.scan[j] == scanBreaks {
		v.broken[j] = brokenFigs(md.budgets[j], f)
	}
	v.total.add(v.bytes[j])
}

// scanOf is whether table j, laid out as view v (segments of s rows, month months of
// growth) has it, fits its scan budgets; judged once.
func (md *Model) scanOf(v *view, s int64, month, j int) scanState {
	if v.scan[j] != scanUnjudged {
		return v.scan[j]
	}
	b := md.budgets[j]
	switch spec, parts, w := md.grownEntry(j, month); {
	case parts == nil:
		v.scan[j] = scanNone
	case b.ScanOverheadMs == nil && (b.ScanMs == nil || len(spec.Columns) == 0):
		v.scan[j] = scanFits // no scan budget applies
	default:
		f := md.judgedFigures(j, spec, parts, s, w, false)
		if v.scan[j] = scanStateOf(b, f); v.scan[j] == scanBreaks {
			v.broken[j] = brokenFigs(b, f)
		}
	}
	return v.scan[j]
}

// outgrown lists the tables of the model that fit their scan budgets with today's
// segment capacity but not with s, after month months of growth, by table; table i
// may be among them (the caller leaves it out). Without all, the list may stop at the
// first such table other than i, in table order: whether a layout misses, and its first
// miss, read no more. The tables are judged in order, each once per view, as far as a
// caller has needed; a table a view had left out is judged when a what-if of another
// table first needs it.
func (md *Model) outgrown(i int, s int64, month int, all bool) []tableMiss {
	today := md.M.Engine.SegmentRows
	v, now := md.view(s, month, i), md.view(today, month, i)
	for k := 0; k < len(v.lacking); {
		if j := v.lacking[k]; j != i {
			// Both views now hold every table but i.
			v.lacking = slices.Delete(v.lacking, k, k+1)
			md.judgeOver(v, now, s, today, month, j)
			continue
		}
		k++
	}
	// Every table below v.judged but i is judged now, so the first entry of v.over
	// other than i is the first in table order.
	for v.judged < len(md.M.Tables) && (all || firstOther(v.over, i) < 0) {
		md.judgeOver(v, now, s, today, month, v.judged)
		v.judged++
	}
	if all {
		return v.over
	}
	if k := firstOther(v.over, i); k >= 0 {
		return v.over[k : k+1]
	}
	return nil
}

// firstOther is the index of the first entry of over (in table order) that is not
// table i, -1 for none: over holds each table once, so it is one of the first two.
func firstOther(over []tableMiss, i int) int {
	for k := range min(len(over), 2) {
		if over[k].j != i {
			return k
		}
	}
	return -1
}

// judgeOver adds table j to v.over, in table order, when it fits its scan budgets in
// now but not in v, or breaks them in both but by more in v: a segment size that one
// table's advice proposes moves every table, and must not push another one further
// over. When either view left j out, it waits in v.lacking.
func (md *Model) judgeOver(v, now *view, s, today int64, month, j int) {
	if s > today && len(md.M.Tables[j].Columns) == 0 {
		// Without profiles only fixed ms is judged, and larger segments never add one:
		// a table without them that fits today fits, and one over is no further over.
		return
	}
	if j == v.skip || j == now.skip {
		v.lacking = append(v.lacking, j)
		return
	}
	was, is := md.scanOf(now, today, month, j), md.scanOf(v, s, month, j)
	if is != scanBreaks || (was != scanFits && (was != scanBreaks || !v.broken[j].worse(now.broken[j]))) {
		return // fits in v, breaks as much or less than today, or cannot be expanded
	}
	name := md.M.Tables[j].Name
	text := fmt.Sprintf("table %s over its scan budgets", name)
	if was == scanBreaks {
		text = fmt.Sprintf("table %s further over its scan budgets", name)
	}
	at, _ := slices.BinarySearchFunc(v.over, j, func(o tableMiss, j int) int { return cmp.Compare(o.j, j) })
	v.over = slices.Insert(v.over, at, tableMiss{j, Miss{Key: "table " + name, Text: text}})
}

// Peak is the model's refresh peak when table i is laid out as f with segments of s rows
// and the other tables as the manifest has them, all grown for month months.
func (md *Model) Peak(i int, f Figures, s int64, month int) float64 {
	v := md.filled(s, month, i)
	// The other tables' bytes, summed exactly and rounded once: the same figure whichever
	// table asks, at the cost of one table, not of the model.
	return layout.RefreshPeak(v.total.swap(v.bytes[i], f.Bytes), md.parallelism, s, md.rowBytes)
}

// memoryBound reports whether a memory budget applies to the model's refresh peak:
// only then does a miss read it (missed).
func (md *Model) memoryBound() bool {
	return md.profiled && (md.M.Engine.Memory > 0 || md.refresh != nil)
}

// missPeak is the refresh peak as missed reads it: Peak where a memory budget applies,
// else 0, which it reads not at all.
func (md *Model) missPeak(i int, f Figures, s int64, month int) float64 {
	if !md.memoryBound() {
		return 0
	}
	return md.Peak(i, f, s, month)
}

// Budgets are the budgets table i answers to: the model's with the table's own on top.
func (md *Model) Budgets(i int) schema.Budgets {
	return md.budgets[i]
}

// Miss is one budget a layout breaks: the budget's key (scan_overhead_ms, scan_ms,
// engine.memory, refresh_memory, or "table NAME" for another table of the model a new
// segment size pushes over its scan budgets) and the words a plan prints, with the
// figure and its limit (both 0 for another table's budgets).
type Miss struct {
	Key, Text    string // Text is set for another table's budgets; Words makes the rest
	Value, Limit float64
}

// Words is the text of the miss, as a plan prints it: made when read, since a sweep
// tries many layouts that miss a budget and prints the misses of few.
func (m Miss) Words() string {
	switch m.Key {
	case "scan_overhead_ms":
		return fmt.Sprintf("scan overhead %s ms > %s ms", units.Ms(m.Value), units.Ms(m.Limit))
	case "scan_ms":
		return fmt.Sprintf("scan time %s ms > %s ms", units.Ms(m.Value), units.Ms(m.Limit))
	case "engine.memory":
		return fmt.Sprintf("refresh peak %s > engine memory %s", units.Size(m.Value), units.Size(m.Limit))
	case "refresh_memory":
		return fmt.Sprintf("refresh peak %s > budget %s", units.Size(m.Value), units.Size(m.Limit))
	}
	return m.Text
}

// Excess is how far a layout is from every budget at once: the sum, over the budgets
// it breaks, of the share by which it passes each (value / limit - 1). Budgets of other
// units add up as shares, so no one figure decides alone.
func Excess(ms []Miss) float64 {
	var sum float64
	for _, m := range ms {
		if m.Limit > 0 {
			sum += m.Value/m.Limit - 1
		}
	}
	return sum
}

// missed lists the budgets table i breaks. With another segment capacity than today's,
// a table of the model that fits its scan budgets today must still fit. Without all,
// the list names only the first other table it pushes over (outgrown): enough for
// whether the layout misses, its first miss and, since today's layout pushes no table
// over, whether it can be the closest layout (noWorse).
func (md *Model) missed(i int, f Figures, s int64, month int, peak float64, all bool) []Miss {
	var out []Miss
	b := md.Budgets(i)
	if b.ScanOverheadMs != nil && f.Layout.FixedMs > *b.ScanOverheadMs {
		out = append(out, Miss{Key: "scan_overhead_ms", Value: f.Layout.FixedMs, Limit: *b.ScanOverheadMs})
	}
	if b.ScanMs != nil && f.Widest != "" && f.WallMs > *b.ScanMs {
		out = append(out, Miss{Key: "scan_ms", Value: f.WallMs, Limit: *b.ScanMs})
	}
	if mem := md.M.Engine.Memory; mem > 0 && md.profiled && peak > float64(mem) {
		out = append(out, Miss{Key: "engine.memory", Value: peak, Limit: float64(mem)})
	}
	if md.refresh != nil && md.profiled && peak > *md.refresh {
		out = append(out, Miss{Key: "refresh_memory", Value: peak, Limit: *md.refresh})
	}
	if s != md.M.Engine.SegmentRows {
		for _, o := range md.outgrown(i, s, month, all) {
			if o.j != i {
				out = append(out, o.Miss)
			}
		}
	}
	return out
}

func fitsScan(b schema.Budgets, f Figures) bool {
	if b.ScanOverheadMs != nil && f.Layout.FixedMs > *b.ScanOverheadMs {
		return false
	}
	return b.ScanMs == nil || f.Widest == "" || f.WallMs <= *b.ScanMs
}

// warnings lists what the checks would still warn about for a layout that fits.
func (md *Model) warnings(i int, f Figures, lv Levels) []string {
	var out []string
	b := md.Budgets(i)
	if b.ScanOverheadMs != nil && f.Layout.FixedMs > lv.OverheadWarnShare**b.ScanOverheadMs {
		out = append(out, "scan overhead at "+units.Pct(f.Layout.FixedMs / *b.ScanOverheadMs)+" of the budget")
	}
	if b.ScanMs != nil && f.Widest != "" && f.WallMs > lv.ScanWarnShare**b.ScanMs {
		out = append(out, "scan time at "+units.Pct(f.WallMs / *b.ScanMs)+" of the budget")
	}
	l := f.Layout
	if l.ClosedExcess >= 1 && float64(l.ClosedExcess) >= max(lv.TruncWarnMin, lv.TruncWarnShare*float64(l.ClosedSegments)) {
		out = append(out, units.Num(l.ClosedExcess)+" excess segments")
	}
	if float64(l.Partitions) > lv.PartitionLimit {
		out = append(out, units.Num(int64(l.Partitions))+" partitions")
	}
	return out
}

// MaxSegmentRows is the largest capacity a sweep of the model may try: the engine's
// max_segment_rows, never below today's capacity.
func (md *Model) MaxSegmentRows() int64 {
	top := md.M.Engine.MaxSegmentRows
	if top <= 0 {
		top = schema.DefaultMaxSegmentRows
	}
	return max(top, md.M.Engine.SegmentRows)
}

// capacities is the sorted, de-duplicated list a sweep starts with, today's included,
// none above MaxSegmentRows.
func (md *Model) capacities(s Settings) []int64 {
	list := s.Capacities
	if list == nil {
		list = DefaultCapacities
	}
	top := md.MaxSegmentRows()
	out := []int64{md.M.Engine.SegmentRows}
	for _, c := range list {
		if c <= top {
			out = append(out, c)
		}
	}
	slices.Sort(out)
	return slices.Compact(out)
}

// Sweep evaluates every candidate layout of table i: today's policy and each variant,
// at every capacity; marks the front; and picks the recommendation. Without a list of
// capacities (Settings.Capacities) and with the capacity free to change, a table for
// which no layout fits every budget without a warning is tried at twice the largest
// capacity, again and again up to MaxSegmentRows: a table pays for a larger capacity
// only when its budgets need it, and every rule and plan sees the same list.
func (md *Model) Sweep(i int, set Settings) *Sweep {
	spec := md.M.Tables[i]
	today := md.M.Engine.SegmentRows
	lv := set.levels()
	horizon := lv.horizon()
	sw := &Sweep{Table: spec.Name, Index: i, Today: -1, Recommended: -1, Closest: -1, Profiled: md.profiled, MaxSegmentRows: md.MaxSegmentRows()}
	order := 0
	policies := map[string]*policy{} // by the variant's change; a cache only
	// A time policy's variants are the same at every capacity but one: worded once.
	isTime := spec.Partitions.Scheme == schema.SchemeTime
	var timed []Variant
	if isTime {
		timed = timeVariants(spec)
	}
	clean := false // some candidate fits every budget with no warning left
	windowRead := false
	lean := set.Lean && set.Prune
	// Today's capacity first: its layouts rank above the others' at as few warnings, so
	// a sweep that prunes by the best layout so far prunes most, and one that may stop
	// there (PickOnly, Lean) most often does.
	first := set.PickOnly || lean
	peakOf := md.Peak // the front reads every peak; a lean sweep only what a miss reads
	if lean {
		peakOf = md.missPeak
	}
	// Some reader of the layouts' bytes and widest columns: a peak, the front.
	bytes := !lean || md.memoryBound()
	best := -1 // the candidate ranked first so far among those that fit (Settings.Prune)
	try := func(s int64) {
		raise := ""
		if s != today {
			verb := "raise"
			if s < today {
				verb = "lower"
			}
			raise = verb + " engine.segment_rows from " + units.Count(today) + " to " + units.Count(s)
		}
		vs := []Variant{{Spec: spec}}
		if isTime {
			vs = withOne(append(vs, timed...), spec, s)
		} else {
			vs = append(vs, Variants(spec, s)...)
		}
		if cap(sw.Candidates) == 0 {
			// Room for every default capacity at once: a candidate is large, and
			// growing the list copies every one made so far. A sweep that tries today's
			// capacity first most often stops there.
			n := len(DefaultCapacities) + 1
			if first {
				n = 1
			}
			sw.Candidates = make([]Candidate, 0, len(vs)*n)
		}
		for _, v := range vs {
			p, ok := policies[v.Change]
			if !ok {
				p = &policy{spec: v.Spec}
				if v.Change == "" {
					// Today's policy: the partitions and estimates the views share.
					_, p.parts, p.whole = md.grownEntry(i, 0)
				} else {
					p.parts, _ = md.expand(v.Spec)
					p.whole = oneSegmentFor(v.Spec)
				}
				if p.parts != nil {
					p.label = Label(v.Spec.Partitions)
				}
				policies[v.Change] = p
			}
			if p.parts == nil {
				continue // more partitions than the format allows
			}
			if v.Change == "" && !windowRead {
				sw.Window = layout.WindowOf(spec, p.parts) // today's policy comes first
				windowRead = true
			}
			c := Candidate{Change: v.Change, Label: p.label, Spec: &p.spec, SegmentRows: s,
				Engine: s != today, Window: v.Window, order: order}
			order++
			if c.Engine {
				c.Locked = set.FixedSegmentRows
				if c.Change == "" {
					c.Change = raise
				} else {
					c.Change += " and " + raise
				}
			}
			if lean && best >= 0 && (s != today || !sw.Candidates[best].Today()) && md.outranked(sw, best, &c, i, v.Spec, p, lv) {
				sw.Candidates = append(sw.Candidates, c)
				continue
			}
			// A rough scan time moves no fit, miss or warning: any layout may have one.
			// The horizon is skipped only once today's layout is in (better weighs
			// routine refreshes against it), and at today's capacity only in a lean
			// sweep, which tries it first: the best so far is then the best at today's
			// capacity, which outranks the skipped layout for BestAt too.
			prune := set.Prune && sw.Today >= 0 && (s != today || lean)
			var f Figures
			if set.Prune {
				var how figured
				f, how = md.roughFigures(i, v.Spec, p.parts, s, lv, p.whole, bytes, lean)
				c.rough, c.over, c.partial = how == byCeiling, how == byFloor || how == byColumn, how == byColumn
			} else {
				f = md.figuresWith(v.Spec, p.parts, s, p.whole)
			}
			c.Figures, c.pol = f, p
			c.Routine, c.Full = md.rebuilds(sw.Window, v.Spec, p)
			c.Peak = peakOf(i, f, s, 0)
			c.missed = md.missed(i, f, s, 0, c.Peak, !lean)
			if !lean {
				c.Misses = words(c.missed)
			}
			c.Fits = len(c.missed) == 0
			if c.Fits {
				c.Warnings = md.warnings(i, f, lv)
				// The horizon only adds warnings, and better ranks fewer warnings
				// first: a layout already ranked below a fitting one tried before
				// (whose warnings are final) at the warnings it has without it stays
				// below whatever the horizon adds, so it is neither the pick (mark)
				// nor, at another capacity than today's, the alternative (BestAt at
				// today's). A locked layout is never picked. Its count is then only
				// short of the horizon's one, which no reader of a pruned sweep reads.
				beaten := prune && (c.Locked || (best >= 0 && better(&sw.Candidates[best], &c, today, sw.routineToday())))
				if md.growth && !beaten {
					// A layout that breaks a budget within the forecast's warning horizon
					// would be flagged by budget-forecast: count it as a warning.
					if g, ok := md.atHorizon(i, v, p, f, s, horizon, bytes); ok {
						if miss := md.missed(i, g, s, horizon, peakOf(i, g, s, horizon), false); len(miss) > 0 {
							c.Warnings = append(c.Warnings, fmt.Sprintf("within %d months: %s", horizon, miss[0].Words()))
						} else {
							c.held = horizon
						}
					}
				}
				clean = clean || (len(c.Warnings) == 0 && !c.Locked)
			}
			if !c.Engine && c.Change == "" {
				sw.Today = len(sw.Candidates)
			}
			sw.Candidates = append(sw.Candidates, c)
			if c.Fits && !c.Locked && sw.Today >= 0 && (best < 0 || better(&c, &sw.Candidates[best], today, sw.routineToday())) {
				best = len(sw.Candidates) - 1
			}
		}
	}
	caps := md.capacities(set)
	// The candidates are put back in capacity order before they are ranked (inOrder).
	if first {
		try(today)
	}
	if set.PickOnly || lean {
		// A layout at today's capacity that fits with no warning, no needless partitions
		// and no more rows for the routine refresh than today's outranks every layout at
		// another capacity (better): the pick is at today's, and so is the alternative.
		for k := range sw.Candidates {
			if c := &sw.Candidates[k]; c.Fits && len(c.Warnings) == 0 && !c.Needless() && c.RoutineExtra(sw.routineToday()) == 0 {
				md.settle(sw, lean)
				return sw
			}
		}
	}
	if first && len(caps) > 1 {
		// Room for the other capacities' layouts too, as many at each as at today's: a
		// candidate is large, and growing the list copies every one made so far.
		sw.Candidates = slices.Grow(sw.Candidates, len(sw.Candidates)*(len(caps)-1))
	}
	for _, s := range caps {
		if !first || s != today {
			try(s)
		}
	}
	sw.Largest = caps[len(caps)-1]
	if set.Capacities == nil && !set.FixedSegmentRows {
		// Once every layout tried at the largest size holds each partition in one
		// segment, a larger size changes nothing but the memory: stop there.
		for s := sw.Largest; !clean && !whole(sw.Candidates, s) && s < sw.MaxSegmentRows && s <= math.MaxInt64/2; {
			s = min(2*s, sw.MaxSegmentRows)
			try(s)
			sw.Largest = s
		}
	}
	md.settle(sw, lean)
	return sw
}

// settle ranks a sweep's candidates, in capacity order, and figures the pick and the
// closest layout in full.
func (md *Model) settle(sw *Sweep, lean bool) {
	inOrder(sw)
	if lean && !slices.ContainsFunc(sw.Candidates, func(c Candidate) bool { return c.Fits && !c.Locked }) {
		md.schedule(sw) // the closest layout weighs every miss by its figure
	}
	md.mark(sw, !lean)
	md.refine(sw)
}

// schedule schedules the scans a lean sweep left at a floor above scan_ms
// (Candidate.over), and words their misses again, where the closest layout needs them:
// it is chosen by how far each layout is from every budget (mark). Today's comes first.
// A floor only understates a scan, so a layout that cannot be the closest by its floor
// (nearer) cannot be by its scan, and one whose excess at its floor is above that of a
// layout that may be, figured in full, is not the closest either: those keep their
// floors. The rest are scheduled, the least excess first, until the next floor's excess
// is above the least found.
func (md *Model) schedule(sw *Sweep) {
	if sw.Today < 0 {
		return
	}
	now := &sw.Candidates[sw.Today]
	md.scheduleOne(sw.Index, now)
	nowExcess := Excess(now.missed)
	best := math.Inf(1) // the least excess of a layout that may be the closest, figured in full
	type floored struct {
		k     int
		least float64
	}
	var todo []floored
	for k := range sw.Candidates {
		c := &sw.Candidates[k]
		if c.Locked || c.Unfigured {
			continue // never the closest (mark)
		}
		e, ok := nearer(c, now, nowExcess)
		switch {
		case !ok:
		case c.over:
			todo = append(todo, floored{k, e})
		default:
			best = min(best, e)
		}
	}
	slices.SortStableFunc(todo, func(a, b floored) int { return cmp.Compare(a.least, b.least) })
	for _, f := range todo {
		if f.least > best {
			break
		}
		c := &sw.Candidates[f.k]
		md.scheduleOne(sw.Index, c)
		if e, ok := nearer(c, now, nowExcess); ok {
			best = min(best, e)
		}
	}
}

// scheduleOne gives candidate c of table i, if its scan was left at a floor, the
// schedule's WallMs and the misses that follow: its bytes and widest column are the
// ones the floor was found for.
func (md *Model) scheduleOne(i int, c *Candidate) {
	if !c.over {
		return
	}
	spec := *c.Spec
	// Column names are unique (the loader refuses a second one).
	if k := slices.IndexFunc(spec.Columns, func(col schema.Column) bool { return col.Name == c.Widest }); k >= 0 && !c.partial {
		c.WallMs = layout.ScanColumnWith(spec.Columns[k], spec.Rows, c.pol.parts, md.engineAt(c.SegmentRows), at(c.pol.whole.memo(spec), k)).WallMs
	} else {
		c.Figures = md.figuresWith(spec, c.pol.parts, c.SegmentRows, c.pol.whole)
	}
	c.over, c.partial = false, false
	c.missed = md.missed(i, c.Figures, c.SegmentRows, 0, c.Peak, false)
}

// inOrder puts the candidates in capacity order, each capacity's in the order it
// generated them: a sweep that tried today's capacity first lists them as one that did
// not, so ties resolve alike. Today's come first as one block and the rest ascend, so
// the block moves behind the smaller capacities: a rotation, not a sort. A list tried
// in capacity order is left as it is (no smaller capacity follows its first block).
func inOrder(sw *Sweep) {
	cs := sw.Candidates
	if len(cs) == 0 {
		return
	}
	s := cs[0].SegmentRows
	k := 0 // today's block
	for k < len(cs) && cs[k].SegmentRows == s {
		k++
	}
	n := k // through the smaller capacities behind it
	for n < len(cs) && cs[n].SegmentRows < s {
		n++
	}
	if n == k {
		return // nothing smaller: in order already
	}
	// B A from A B, by three reversals.
	slices.Reverse(cs[:k])
	slices.Reverse(cs[k:n])
	slices.Reverse(cs[:n])
	if sw.Today >= 0 && sw.Today < k {
		sw.Today += n - k
	}
}

// outranked reports whether candidate c (not yet figured) ranks below the best candidate
// so far even at the warnings its layout alone raises, a lower bound of its own; then it
// is laid out only (Unfigured). A locked candidate is never picked. Such a layout is
// neither the pick nor the best at its capacity (Settings.Lean says when it may be left
// so).
func (md *Model) outranked(sw *Sweep, best int, c *Candidate, i int, spec schema.Table, p *policy, lv Levels) bool {
	c.Figures = Figures{Rows: spec.Rows, Layout: layout.Compute(p.parts, c.SegmentRows, md.M.Engine.SegmentOverheadMs)}
	c.pol = p
	c.Routine, c.Full = md.rebuilds(sw.Window, spec, p)
	bound := *c
	bound.Warnings = md.warnings(i, c.Figures, lv) // without Widest: no scan-time warning
	if c.Locked || better(&sw.Candidates[best], &bound, md.M.Engine.SegmentRows, sw.routineToday()) {
		c.Unfigured = true
		return true
	}
	return false
}

// refine figures the pick and the closest layout of a pruned sweep in full: the hints
// and plan quote their figures. A rough WallMs was a ceiling within every level, so the
// full one is too: it moves no fit, miss or warning.
func (md *Model) refine(sw *Sweep) {
	for _, k := range []int{sw.Recommended, sw.Closest} {
		if k < 0 {
			continue
		}
		c := &sw.Candidates[k]
		if c.Misses == nil {
			c.Misses = words(c.missed) // a lean sweep words only these
		}
		if !c.rough {
			continue
		}
		f := md.figuresWith(*c.Spec, c.pol.parts, c.SegmentRows, c.pol.whole)
		c.Figures, c.rough = f, false
	}
}

// judgedFigures is figures of table j for a view, which keeps only its bytes and
// whether it fits its scan budgets (scanStateOf, which reads WallMs only against
// scan_ms): the scan is scheduled only when its ceiling is not within scan_ms.
func (md *Model) judgedFigures(j int, spec schema.Table, parts []layout.Partition, s int64, w *oneSegment, bytes bool) Figures {
	f, _ := md.boundedFigures(spec, parts, s, w, md.budgets[j].ScanMs, 1, bytes)
	return f
}

// roughFigures is figures of table i for a pruned sweep: the scan is scheduled only when
// its ceiling is not within the warning share of scan_ms (then no miss or warning reads
// more of it than the schedule gives); rough reports that WallMs is the ceiling.
func (md *Model) roughFigures(i int, spec schema.Table, parts []layout.Partition, s int64, lv Levels, w *oneSegment, bytes, over bool) (Figures, figured) {
	return md.decidedFigures(spec, parts, s, w, md.Budgets(i).ScanMs, min(lv.ScanWarnShare, 1), bytes, over)
}

// boundedFigures is figuresWith with the scan scheduled only when its list-scheduling
// ceiling (layout.ScanCeiling) is not below share x scanMs; nil scanMs: never (WallMs
// is then the ceiling, and rough is true). Without bytes (no reader of Bytes, Widest
// or a peak), the columns are not estimated at all when even their plain ceiling
// (layout.PlainCeiling) is below, or nothing reads the scan: Widest is then "" and
// WallMs that ceiling or 0, which no miss or warning reads past.
func (md *Model) boundedFigures(spec schema.Table, parts []layout.Partition, s int64, w *oneSegment, scanMs *float64, share float64, bytes bool) (Figures, bool) {
	f, how := md.decidedFigures(spec, parts, s, w, scanMs, share, bytes, false)
	return f, how == byCeiling
}

// How a layout's WallMs was found (decidedFigures).
type figured uint8

const (
	scheduled figured = iota // the schedule's own estimate
	byCeiling                // a ceiling within share x scanMs
	byFloor                  // a floor above scanMs: the scan certainly breaks it
	// byColumn is byFloor from the bytes of one column, not necessarily the widest:
	// Widest names that column and Bytes stops there (Candidate.partial).
	byColumn
)

// decidedFigures is boundedFigures that, with over set, also leaves the schedule out for
// a scan certainly above scanMs, whose floor (layout.ScanBounds) is: WallMs is then that
// floor, which decides the scan_ms miss and the warning as the schedule would, but is
// not the miss's figure (byFloor).
func (md *Model) decidedFigures(spec schema.Table, parts []layout.Partition, s int64, w *oneSegment, scanMs *float64, share float64, bytes, over bool) (f Figures, how figured) {
	memo := w.memo(spec)
	if memo != nil && (w.fits(spec, parts, s) && w.done || md.atToday(w, memo, s) != nil) {
		return md.figuresWith(spec, parts, s, w), scheduled // figured already
	}
	md.work++
	f = Figures{Rows: spec.Rows, Layout: layout.Compute(parts, s, md.M.Engine.SegmentOverheadMs)}
	if !bytes && len(spec.Columns) > 0 {
		if scanMs == nil {
			return f, byCeiling
		}
		// A millionth over, as below.
		if c := md.plainCeiling(spec, parts, f.Layout, s); c*(1+1e-6) < share**scanMs {
			f.WallMs = c
			return f, byCeiling
		}
	}
	var above *float64 // a lean sweep's floored scan may stop at the first column that decides it
	if over && !bytes {
		above = scanMs
	}
	k, es, least := md.widestOr(&f, spec, parts, s, memo, above)
	if k < 0 {
		return f, scheduled
	}
	if es == nil {
		f.WallMs = least
		return f, byColumn
	}
	c, e := spec.Columns[k], md.engineAt(s)
	own := es.For(spec.Rows, e) // the scan's own estimates, made once
	var floor, ceiling float64
	if own {
		floor, ceiling = es.Bounds(e)
	} else {
		floor, ceiling = layout.ScanBounds(c, spec.Rows, parts, e, at(memo, k))
	}
	// A millionth over (under): the bounds and the schedule sum the same task times in
	// other orders, so their last bits may differ.
	if scanMs == nil || ceiling*(1+1e-6) < share**scanMs {
		f.WallMs = ceiling
		return f, byCeiling
	}
	if over && floor*(1-1e-6) > *scanMs {
		f.WallMs = floor
		return f, byFloor
	}
	if own {
		f.WallMs = es.Scan(e).WallMs
	} else {
		f.WallMs = layout.ScanColumnWith(c, spec.Rows, parts, e, at(memo, k)).WallMs
	}
	return f, scheduled
}

// plainCeiling is the largest plain ceiling of spec's columns laid out as l in segments
// of s rows: above the widest column's scan ceiling, whichever column that is.
func (md *Model) plainCeiling(spec schema.Table, parts []layout.Partition, l layout.Layout, s int64) float64 {
	var largest int64
	for _, p := range parts {
		largest = max(largest, p.Rows)
	}
	e := md.engineAt(s)
	top := 0.0
	for _, c := range spec.Columns {
		top = max(top, layout.PlainCeiling(c, spec.Rows, l, min(largest, s), e))
	}
	return top
}

// whole reports whether every candidate at capacity s holds each partition in one segment.
func whole(cs []Candidate, s int64) bool {
	for k := range cs {
		if c := &cs[k]; c.SegmentRows == s && c.Layout.Segments > int64(c.Layout.Partitions) {
			return false
		}
	}
	return true
}

// words is the text of each miss.
func words(ms []Miss) []string {
	var out []string
	for _, m := range ms {
		out = append(out, m.Words())
	}
	return out
}

// policy is one partition policy of a sweep: it expands to the same partitions at every
// capacity, so it is expanded once, and once grown to the horizon.
type policy struct {
	spec     schema.Table // the table with this policy
	label    string
	parts    []layout.Partition
	rebuilt  *[2]layout.Rebuild // the routine and the full refresh, the same at every capacity (rebuilds)
	grown    schema.Table       // grown to the horizon, once hasLater
	later    []layout.Partition // its partitions; nil when it cannot be expanded
	hasLater bool
	// whole and laterWhole are the column figures of parts and later above every
	// partition (figuresWith); laterWhole is made with later.
	whole, laterWhole *oneSegment
}

// atHorizon is the table laid out as v (policy p, figures f today) with segments of s
// rows after horizon months of growth; false when it cannot be expanded.
func (md *Model) atHorizon(i int, v Variant, p *policy, f Figures, s int64, horizon int, bytes bool) (Figures, bool) {
	if !grows(v.Spec) {
		return f, true // growth leaves it as it is
	}
	if !p.hasLater {
		p.grown = Grow(v.Spec, horizon)
		p.later, _ = md.expand(p.grown)
		p.laterWhole = oneSegmentFor(p.grown)
		p.hasLater = true
	}
	if p.later == nil {
		return Figures{}, false
	}
	if !bytes {
		// Only its misses are read: a scan within scan_ms by its ceiling misses nothing.
		g, _ := md.boundedFigures(p.grown, p.later, s, p.laterWhole, md.Budgets(i).ScanMs, 1, false)
		return g, true
	}
	return md.figuresWith(p.grown, p.later, s, p.laterWhole), true
}

// memAxis is the front's memory figure: the refresh peak, or, without column profiles,
// the segment capacity (larger segments need more memory while a partition is built).
func (sw *Sweep) memAxis(c *Candidate) float64 {
	if sw.Profiled {
		return c.Peak
	}
	return float64(c.SegmentRows)
}

// mark sets the front (when front is set) over the candidates that can be chosen, the
// recommendation and, when nothing fits, the closest candidate.
func (md *Model) mark(sw *Sweep, front bool) {
	var idx []int
	var pts []Point
	for k := range sw.Candidates {
		c := &sw.Candidates[k]
		if c.Locked || c.Unfigured {
			continue
		}
		idx = append(idx, k)
		if front {
			pts = append(pts, Point{X: c.Layout.FixedMs, Y: sw.memAxis(c)})
		}
	}
	for n, on := range Front(pts) {
		sw.Candidates[idx[n]].Front = on
	}
	today := md.M.Engine.SegmentRows
	for _, k := range idx {
		c := &sw.Candidates[k]
		if c.Fits && (sw.Recommended < 0 || better(c, &sw.Candidates[sw.Recommended], today, sw.routineToday())) {
			sw.Recommended = k
		}
	}
	if sw.Recommended >= 0 || sw.Today < 0 {
		return
	}
	now := &sw.Candidates[sw.Today]
	nowExcess := Excess(now.missed)
	bestExcess := 0.0
	for _, k := range idx {
		c := &sw.Candidates[k]
		// Ties keep the fewer fixed ms, then the first generated: the order is part of
		// the output.
		if e, ok := nearer(c, now, nowExcess); ok && (sw.Closest < 0 || e < bestExcess || (e == bestExcess && c.Layout.FixedMs < sw.Candidates[sw.Closest].Layout.FixedMs)) {
			sw.Closest, bestExcess = k, e
		}
	}
}

// nearer is candidate c's excess over every budget at once (Excess) and whether it may
// be the closest layout for it: it is no worse than today's layout now (of excess
// nowExcess) on any budget and nearer every budget at once. A share within a billionth
// of today's is today's computed another way (floating point), not a step nearer. As
// near as today's, a layout still qualifies when it cuts fixed ms per scan at today's
// segment size: a budget no layout can reach (the model's two copies alone past the
// engine memory, say) leaves a table's own waste to mend, but it moves no engine setting
// for nothing. The excess and every test only grow with a miss's figure, so a layout
// that does not qualify by a floor of its scan does not by the scan itself.
func nearer(c, now *Candidate, nowExcess float64) (float64, bool) {
	if !noWorse(c.missed, now.missed) {
		return 0, false
	}
	e := Excess(c.missed)
	tie := math.Abs(e-nowExcess) <= 1e-9*math.Abs(nowExcess)
	return e, e < nowExcess-1e-9*math.Abs(nowExcess) || (tie && !c.Engine && c.Layout.FixedMs < now.Layout.FixedMs)
}

// noWorse reports whether a layout that breaks the budgets ms keeps every budget that
// today's layout (breaking now) keeps, and is no further over any budget both break.
func noWorse(ms, now []Miss) bool {
	for _, m := range ms {
		k := slices.IndexFunc(now, func(n Miss) bool { return n.Key == m.Key })
		if k < 0 || m.Limit == 0 || m.Value > now[k].Value {
			return false
		}
	}
	return true
}

// better ranks candidates that fit: fewer warnings left; then one that leaves the
// partitions the routine refresh rewrites as they are (RoutineExtra against routine,
// today's layout; nil when unknown); no needless partitions (what needless-partitioning
// notes); today's segment capacity (an engine change moves every table); then the
// smaller capacity (less refresh memory); then the most partitions kept (the least
// disruptive change, finer refreshes); then the fewest fixed ms; then the order generated.
func better(a, b *Candidate, today int64, routine *Candidate) bool {
	if len(a.Warnings) != len(b.Warnings) {
		return len(a.Warnings) < len(b.Warnings)
	}
	if routine != nil && (a.RoutineExtra(routine) > 0) != (b.RoutineExtra(routine) > 0) {
		return a.RoutineExtra(routine) == 0
	}
	if a.Needless() != b.Needless() {
		return !a.Needless()
	}
	if (a.SegmentRows == today) != (b.SegmentRows == today) {
		return a.SegmentRows == today
	}
	if a.SegmentRows != b.SegmentRows {
		return a.SegmentRows < b.SegmentRows
	}
	if a.Layout.Partitions != b.Layout.Partitions {
		return a.Layout.Partitions > b.Layout.Partitions
	}
	if a.Layout.FixedMs != b.Layout.FixedMs {
		return a.Layout.FixedMs < b.Layout.FixedMs
	}
	return a.order < b.order
}

// Effect words a candidate's result against today's layout, as the hints do:
// "730 -> 302 segments, -642 ms per scan".
func Effect(today, c *Candidate) string {
	e := fmt.Sprintf("%s -> %s segments, %s ms per scan", units.Num(today.Layout.Segments), units.Num(c.Layout.Segments), units.Signed(c.Layout.FixedMs-today.Layout.FixedMs))
	if r := RoutineWords(today.Routine, c.Routine); r != "" {
		e += "; " + r
	}
	return e
}

// Pick returns the recommendation, or when nothing fits the closest candidate (fits
// false); ok is false when there is neither.
func (sw *Sweep) Pick() (c *Candidate, fits, ok bool) {
	switch {
	case sw.Recommended >= 0:
		return &sw.Candidates[sw.Recommended], true, true
	case sw.Closest >= 0:
		return &sw.Candidates[sw.Closest], false, true
	}
	return nil, false, false
}

// grows reports whether Grow changes spec: its growth rate is set and above -100%.
func grows(spec schema.Table) bool {
	g := spec.GrowthPerYear
	return g != 0 && g > -1
}

// Grow returns spec with its rows grown by growth_per_year for months months:
// rows x (1+g)^(months/12), rounded, listed items and measured encoded sizes scaled
// alike, capped at the format's limits.
func Grow(spec schema.Table, months int) schema.Table {
	g := spec.GrowthPerYear
	if months == 0 || !grows(spec) {
		return spec
	}
	k := math.Pow(1+g, float64(months)/12)
	scale := func(n int64) int64 {
		v := math.Round(float64(n) * k)
		if !(v < float64(schema.MaxCount)) {
			return schema.MaxCount
		}
		return int64(max(v, 0))
	}
	out := spec
	out.Rows = scale(spec.Rows)
	// A measured encoded size is today's; it grows with the rows. Distinct counts stay:
	// growth adds rows, not necessarily values.
	if len(spec.Columns) > 0 {
		cols := slices.Clone(spec.Columns)
		for n := range cols {
			if cols[n].EncodedBytes > 0 {
				v := math.Round(float64(cols[n].EncodedBytes) * k)
				cols[n].EncodedBytes = units.Int64(min(max(v, 1), float64(schema.MaxBytes)))
			}
		}
		out.Columns = cols
	}
	if len(spec.Partitions.Items) > 0 {
		items := make([]schema.Item, len(spec.Partitions.Items))
		var sum int64
		for n, it := range spec.Partitions.Items {
			it.Rows = scale(it.Rows)
			sum = min(sum+it.Rows, schema.MaxCount)
			items[n] = it
		}
		out.Partitions.Items = items
		if !spec.RowsDeclared {
			out.Rows = sum
		}
	}
	return out
}
