package schema

import "time"

// Pos is a 1-based line and column in a manifest file.
type Pos struct {
	Line int
	Col  int
}

// Scheme names a partition policy.
type Scheme string

// The partition schemes of format 1.
const (
	SchemeNone Scheme = "none"
	SchemeEven Scheme = "even"
	SchemeTime Scheme = "time"
	SchemeList Scheme = "list"
)

// Grain is the length of one period of a time tier.
type Grain string

// The grains of format 1, finest first.
const (
	Day     Grain = "day"
	Week    Grain = "week"
	Month   Grain = "month"
	Quarter Grain = "quarter"
	Year    Grain = "year"
)

// Grains lists every grain from finest to coarsest.
var Grains = []Grain{Day, Week, Month, Quarter, Year}

// Days is the mean length of one period in days (a year of 365.25 days).
func (g Grain) Days() float64 {
	switch g {
	case Day:
		return 1
	case Week:
		return 7
	case Month:
		return 365.25 / 12
	case Quarter:
		return 365.25 / 4
	case Year:
		return 365.25
	}
	return 0
}

// Rank orders grains from finest (0) to coarsest; -1 for an unknown grain.
func (g Grain) Rank() int {
	for i, x := range Grains {
		if x == g {
			return i
		}
	}
	return -1
}

// Manifest is one validated manifest file.
type Manifest struct {
	File    string // path as given by the user, "-" for standard input
	Format  int
	Model   string
	Engine  Engine
	Budgets Budgets
	Tables  []Table
	Pos     Pos
}

// Engine holds the engine settings with the profile and defaults applied.
type Engine struct {
	Profile            string // the project profile the settings start from, "" for none
	SegmentRows        int64
	Cores              int
	SegmentOverheadMs  float64
	ScanMBPerS         float64
	Memory             int64 // bytes; 0 when not declared
	RefreshParallelism int
	// MaxSegmentRows is the largest segment capacity the engine accepts: the advisor
	// never proposes a larger one. DefaultMaxSegmentRows when not declared.
	MaxSegmentRows  int64
	RefreshRowsPerS float64 // rows one partition's refresh loads per second
	Pos             Pos     // the engine key
	SegmentRowsPos  Pos
	MemoryPos       Pos
}

// RefreshWorkers is how many partitions a refresh processes at once: refresh_parallelism,
// which the loader sets to the cores when it is not declared (at least 1).
func (e Engine) RefreshWorkers() int {
	if e.RefreshParallelism >= 1 {
		return e.RefreshParallelism
	}
	return max(e.Cores, 1)
}

// Engine defaults of format 1.
const (
	DefaultCores             = 8
	DefaultSegmentOverheadMs = 1.5
	DefaultScanMBPerS        = 200
	// DefaultRefreshRowsPerS is from memory: about a million rows a second per refresh
	// thread for a fact table of a dozen columns.
	DefaultRefreshRowsPerS = 1_000_000
	// DefaultMaxSegmentRows (128Mi rows) is scangate's own default for the largest
	// segment capacity a recommendation may propose, not a fact about any engine: set
	// engine.max_segment_rows to the maximum the target engine documents.
	DefaultMaxSegmentRows int64 = 1 << 27
)

// Budgets are optional limits; a nil field is not budgeted.
type Budgets struct {
	ScanOverheadMs *float64
	ScanMs         *float64
	RefreshMemory  *int64 // bytes
	Pos            Pos
}

// Override returns b with every field that own sets replaced by own's value.
func (b Budgets) Override(own Budgets) Budgets {
	out := b
	if own.ScanOverheadMs != nil {
		out.ScanOverheadMs = own.ScanOverheadMs
	}
	if own.ScanMs != nil {
		out.ScanMs = own.ScanMs
	}
	if own.RefreshMemory != nil {
		out.RefreshMemory = own.RefreshMemory
	}
	if own.Pos != (Pos{}) {
		out.Pos = own.Pos // where the overriding budgets are written
	}
	return out
}

// Table is one table of the manifest.
type Table struct {
	Name          string
	Rows          int64
	RowsDeclared  bool // false when a list table leaves rows to its items
	GrowthPerYear float64
	Partitions    Partitions
	Columns       []Column
	Budgets       Budgets // the table's own, not merged with the model's
	Waivers       []Waiver
	Pos           Pos // the table's mapping (its first key)
	RowsPos       Pos // the rows value, or the table when rows is omitted

	Routine   Routine // what the routine refresh rebuilds; zero: the whole table
	GrowthPos Pos     // the growth_per_year value, or the table when it is omitted
}

// Routine is what a table's routine (scheduled) refresh rebuilds: the partitions holding
// the newest RecentDays days (scheme time) or the last RecentPartitions partitions
// (even, list). Both 0 when undeclared: every refresh rebuilds the whole table.
type Routine struct {
	RecentDays       int
	RecentPartitions int
	Pos              Pos // the routine key
}

// Declared reports whether the table declares a routine refresh.
func (r Routine) Declared() bool { return r.RecentDays > 0 || r.RecentPartitions > 0 }

// Partitions is a table's partition policy.
type Partitions struct {
	Scheme Scheme
	Count  int    // even
	Tiers  []Tier // time, newest first
	Items  []Item // list
	Pos    Pos    // the partitions key
}

// SamePolicy reports whether p and q describe the same partitions, positions aside.
func (p Partitions) SamePolicy(q Partitions) bool {
	if p.Scheme != q.Scheme || p.Count != q.Count || len(p.Tiers) != len(q.Tiers) || len(p.Items) != len(q.Items) {
		return false
	}
	for i := range p.Tiers {
		if p.Tiers[i].Grain != q.Tiers[i].Grain || p.Tiers[i].Keep != q.Tiers[i].Keep {
			return false
		}
	}
	for i := range p.Items {
		if p.Items[i].Name != q.Items[i].Name || p.Items[i].Rows != q.Items[i].Rows {
			return false
		}
	}
	return true
}

// Tier is a run of Keep periods of one Grain.
type Tier struct {
	Grain Grain
	Keep  int
	Pos   Pos
}

// Item is one listed partition.
type Item struct {
	Name string
	Rows int64
	Pos  Pos
}

// Order is how rows are ordered by a column.
type Order string

// Column orders.
const (
	Random    Order = "random"
	Sorted    Order = "sorted"
	Clustered Order = "clustered"
)

// Column is an optional column profile.
type Column struct {
	Name         string
	Type         string
	Distinct     int64 // 0 when not declared
	AvgLength    float64
	Order        Order
	RunLength    int64 // 0 when not declared
	EncodedBytes int64 // 0 when not declared
	Pos          Pos
}

// Waiver accepts the findings of one rule on a table up to and including Expires.
type Waiver struct {
	Rule    string
	Reason  string
	Expires time.Time // a date, midnight UTC
	Pos     Pos
}

// Partitions is how many partitions the manifest's tables expand to: what analysing it
// costs, counted before any is expanded.
func (m *Manifest) Partitions() int64 {
	var n int64
	for _, t := range m.Tables {
		switch t.Partitions.Scheme {
		case SchemeEven:
			n += int64(t.Partitions.Count)
		case SchemeList:
			n += int64(len(t.Partitions.Items))
		case SchemeTime:
			for _, tier := range t.Partitions.Tiers {
				n += int64(tier.Keep)
			}
		default:
			n++
		}
	}
	return n
}
