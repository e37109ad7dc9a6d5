package layout

import (
	"testing"

	"github.com/scangate/scangate/schema"
)

// Checks of DESIGN.md §5b ("facts of the trade", common practice, no published source)
// on the format defaults: segment_overhead_ms 1.5, scan_mb_per_s 200, cores 8.

func defaultEngine(segmentRows int64) schema.Engine {
	return schema.Engine{SegmentRows: segmentRows, Cores: schema.DefaultCores,
		SegmentOverheadMs: schema.DefaultSegmentOverheadMs, ScanMBPerS: schema.DefaultScanMBPerS}
}

// scanBoth scans c in a one-partition table at 2^20 and at 2^23 rows per segment.
func scanBoth(t *testing.T, rows int64, c schema.Column) (small, large Scan) {
	t.Helper()
	parts, err := Expand(schema.Table{Rows: rows, Partitions: schema.Partitions{Scheme: schema.SchemeNone}})
	if err != nil {
		t.Fatal(err)
	}
	small = ScanColumn(c, rows, parts, defaultEngine(1<<20))
	large = ScanColumn(c, rows, parts, defaultEngine(1<<23))
	t.Logf("%d rows, %s distinct %d order %q run %d: CPU %.0f -> %.0f ms (x%.2f, %.1f%% less), wall %.1f -> %.1f ms, %.2f -> %.2f GB",
		rows, c.Type, c.Distinct, c.Order, c.RunLength, small.CPUMs, large.CPUMs, small.CPUMs/large.CPUMs,
		100*(1-large.CPUMs/small.CPUMs), small.WallMs, large.WallMs, small.Bytes/1e9, large.Bytes/1e9)
	return small, large
}

func TestPracticeHighlyCompressedColumn(t *testing.T) {
	// Common practice (§5b): 8x larger segments cut full-scan CPU of a highly
	// compressed column several times over; it cannot exceed 8x (the segment ratio).
	const rows = 4_000_000_000
	for _, c := range []schema.Column{
		{Type: "bool"}, // about 1 bit a row: measured 8,281 -> 3,274 ms, x2.53
		{Type: "int64", Distinct: 10, Order: schema.Sorted},    // run-length encoded to almost nothing: x8.0
		{Type: "int64", Distinct: 10, Order: schema.Clustered}, // same: x8.0
	} {
		small, large := scanBoth(t, rows, c)
		if r := small.CPUMs / large.CPUMs; r < 2.5 || r > 8 {
			t.Errorf("%+v: CPU cut x%.2f, want several times (2.5..8)", c, r)
		}
	}
	// About 3-4x for a column near a bit a row in runs (bool in runs of 32 rows: a
	// run-length run of 2 bytes and, 7 times in 8, a bit-packed group of 1 byte with its
	// 1-byte header, per 32 rows); measured 6,894 -> 1,887 ms, x3.65.
	small, large := scanBoth(t, rows, schema.Column{Type: "bool", Order: schema.Clustered, RunLength: 32})
	if r := small.CPUMs / large.CPUMs; r < 3 || r > 4 {
		t.Errorf("bool in runs of 32: CPU cut x%.2f, want 3..4", r)
	}
}

func TestPracticeLargePoorlyCompressedColumn(t *testing.T) {
	// Common practice (§5b): a large, poorly compressed column gains about a fifth to a
	// quarter (20-30%) of its full-scan CPU from 8x larger segments. float64 with 100k
	// distinct values in random order: 11.5 GB at 2^20 (2.9 of 8 bytes a row);
	// measured 63,482 -> 45,124 ms, 28.9% less.
	small, large := scanBoth(t, 4_000_000_000, schema.Column{Type: "float64", Distinct: 100_000})
	if small.Bytes < 4e9 {
		t.Fatalf("not a multi-GB column: %.2f GB", small.Bytes/1e9)
	}
	if cut := 1 - large.CPUMs/small.CPUMs; cut < 0.20 || cut > 0.30 {
		t.Errorf("CPU cut %.1f%%, want 20..30%%", 100*cut)
	}
}

func TestPracticeSmallTable(t *testing.T) {
	// Common practice (§5b): a table of only tens of segments gains a few ms at most
	// from larger segments. 30 segments of 2^20 rows, a bool column: on 8 cores the
	// scan takes 4 rounds of 1.5 ms + 0.66 ms against 1 round of 4 larger tasks;
	// measured wall 8.7 -> 6.9 ms. The CPU saved is the overhead of the segments dropped,
	// (30 - 4) * 1.5 = 39 ms, plus their 2-byte dictionaries (52 bytes, 0.0003 ms).
	small, large := scanBoth(t, 30<<20, schema.Column{Type: "bool"})
	if gain := small.WallMs - large.WallMs; gain > 5 {
		t.Errorf("wall gain %.1f ms, want a few ms at most", gain)
	}
	if gain := small.CPUMs - large.CPUMs; gain < 0 || gain > 26*1.5+0.001 {
		t.Errorf("CPU gain %.1f ms, want within the dropped overhead, 39 ms", gain)
	}
}
