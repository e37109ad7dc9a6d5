package layout

import (
	"math"
	"testing"

	"github.com/scangate/scangate/schema"
)

func TestRowBytes(t *testing.T) {
	// Value widths of ValueBytes (spec, DESIGN section 4): int64 8 + date 4 + bool 1 +
	// string of 12 bytes on average with a 4-byte length prefix 16 = 29.
	cols := []schema.Column{{Type: "int64"}, {Type: "date"}, {Type: "bool"}, {Type: "string", AvgLength: 12}}
	if got := RowBytes(cols); got != 29 {
		t.Errorf("RowBytes = %v, want 29", got)
	}
	if RowBytes(nil) != 0 {
		t.Error("no profiles, no width")
	}
}

func TestTableBytes(t *testing.T) {
	// Measured sizes spread over the rows: 4,000 rows in segments of 1,000, two columns
	// of 32,000 and 4,000 bytes: 36,000 bytes whatever the segments.
	parts := []Partition{{Rows: 2500}, {Rows: 1500}}
	cols := []schema.Column{{Type: "int64", EncodedBytes: 32000}, {Type: "bool", EncodedBytes: 4000}}
	if got := TableBytes(cols, 0, parts, 1000); math.Abs(got-36000) > 1e-9 {
		t.Errorf("TableBytes = %v, want 36000", got)
	}
	// The same bytes a full scan of each column reads.
	e := schema.Engine{SegmentRows: 1000, Cores: 8, ScanMBPerS: 200}
	cols = append(cols, schema.Column{Type: "string", AvgLength: 9, Distinct: 700}, schema.Column{Type: "date", Distinct: 30, Order: schema.Clustered})
	var scanned float64
	for _, c := range cols {
		scanned += ScanColumn(c, 4000, parts, e).Bytes
	}
	if got := TableBytes(cols, 4000, parts, 1000); got != scanned {
		t.Errorf("TableBytes = %v, the scans read %v", got, scanned)
	}
}

func TestRefreshPeak(t *testing.T) {
	// The formula of DESIGN section 4 (a rule of thumb, from memory: plan for about twice
	// the model during a full refresh), worked by hand:
	// 2 x 10 GiB + 4 x 8,388,608 rows x 30 bytes = 21,474,836,480 + 1,006,632,960
	// = 22,481,469,440 bytes.
	if got := RefreshPeak(10<<30, 4, 8<<20, 30); got != 22_481_469_440 {
		t.Errorf("RefreshPeak = %.0f, want 22,481,469,440", got)
	}
	// Parallelism below 1 counts as 1; bad inputs count as 0: 2 x 100 + 1 x 10 x 0.
	if got := RefreshPeak(100, 0, 10, math.NaN()); got != 200 {
		t.Errorf("RefreshPeak with bad inputs = %v, want 200", got)
	}
	if got := RefreshPeak(math.Inf(1), 2, 10, 3); got != 60 {
		t.Errorf("RefreshPeak(+Inf model) = %v, want 60", got)
	}
	// Larger segments need more memory while a partition is processed (DESIGN 5b,
	// common practice): the peak grows with the segment size.
	if RefreshPeak(1e9, 8, 1<<24, 30) <= RefreshPeak(1e9, 8, 1<<23, 30) {
		t.Error("a larger segment size should raise the peak")
	}
}
