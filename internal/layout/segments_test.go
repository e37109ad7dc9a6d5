package layout

import (
	"math"
	"testing"

	"github.com/scangate/scangate/schema"
)

func TestSegments(t *testing.T) {
	// Spec: ceil(rows / S), 0 rows → 0, no overflow near MaxInt64.
	for _, c := range []struct{ rows, s, want int64 }{
		{0, 100, 0}, {1, 100, 1}, {100, 100, 1}, {101, 100, 2}, {-5, 100, 0},
		{math.MaxInt64, 1, math.MaxInt64}, {math.MaxInt64, 1 << 23, 1 << 40}, {1e15, 1 << 23, 119_209_290},
	} {
		if got := Segments(c.rows, c.s); got != c.want {
			t.Errorf("Segments(%d, %d) = %d, want %d", c.rows, c.s, got, c.want)
		}
	}
}

func TestComputeWorked(t *testing.T) {
	// Worked by hand, S = 100, overhead 1.5 ms:
	//   partitions 250 (open), 130, 70 → ceil 3 + 2 + 1 = 6 segments, R = 450 rows;
	//   ideal ceil(450/100) = 5, excess 6 - 5 = 1, fill 450/(6*100) = 0.75;
	//   closed: 2 + 1 = 3 segments, 200 rows → ideal 2, excess 1;
	//   fixed overhead 6 * 1.5 = 9 ms.
	parts := []Partition{{Rows: 250, Open: true}, {Rows: 130}, {Rows: 70}}
	got := Compute(parts, 100, 1.5)
	want := Layout{Partitions: 3, Rows: 450, Segments: 6, Ideal: 5, Excess: 1, Fill: 0.75,
		ClosedSegments: 3, ClosedIdeal: 2, ClosedExcess: 1, FixedMs: 9}
	if got != want {
		t.Errorf("Compute = %+v\nwant      %+v", got, want)
	}
	// No rows: no segments, fill 0, everything finite.
	if got := Compute([]Partition{{Rows: 0}}, 100, 1.5); got != (Layout{Partitions: 1}) {
		t.Errorf("empty: %+v", got)
	}
	if got := Compute(parts, 100, math.Inf(1)); got.FixedMs != 0 {
		t.Errorf("infinite overhead: %v", got.FixedMs)
	}
}

func TestComputeDesignExample(t *testing.T) {
	// DESIGN.md §3: 7.2G rows, 14 days + 23 months, 15% growth, 8Mi-row segments.
	// Every closed partition fills its segments but the last: the excess is at most one
	// segment per closed partition (36) and the open one is not counted.
	p, err := Expand(timeTable(7_200_000_000, 0.15, schema.Tier{Grain: schema.Day, Keep: 14}, schema.Tier{Grain: schema.Month, Keep: 23}))
	if err != nil {
		t.Fatal(err)
	}
	l := Compute(p, 8<<20, 1.5)
	if l.Partitions != 37 || l.Rows != 7_200_000_000 || l.Excess < 1 || l.ClosedExcess > 36 || l.Segments != l.ClosedSegments+Segments(p[0].Rows, 8<<20) {
		t.Errorf("%+v", l)
	}
	if l.FixedMs != float64(l.Segments)*1.5 || l.Fill <= 0 || l.Fill > 1 {
		t.Errorf("fixed %v fill %v", l.FixedMs, l.Fill)
	}
}

func TestScanColumnWorked(t *testing.T) {
	// Worked by hand: 3 partitions of 1000 rows, S = 1000, a random bool column.
	// Each segment: 125 groups of 8 one-bit indexes (the hybrid encoding, see
	// TestSegmentBytesWorked); a group is one value with probability (1/2)^7 = 1/128:
	// 0.9765625 run-length groups in 1/128 + 124/128 x 255/256 = 0.97278 runs of 2 bytes,
	// 124.0234375 bit-packed groups of 1 byte in 127/128 + 124 x 127/128 x 1/128 = 1.95337
	// runs with a 2-byte header; plus a 2-byte dictionary: 131.8757 bytes. Plain, the
	// 1,000 values bit-packed are 125 bytes, fewer: the segment is written plain.
	// theta = 200 MB/s = 200,000 bytes/ms; a task is 1.5 + b/theta ms. CPU 3 tasks;
	// 2 cores: makespan 2 tasks on core 0; bound max(CPU/2, one task) (Graham 1966).
	dict := 124.0234375 + 2*(127.0/128+124*127.0/128/128) + 2*(1.0/128+124.0/128*255/256) + 2
	if got := DictionarySize(schema.Column{Type: "bool"}, 3000, 1000).Bytes(); math.Abs(got-dict) > 1e-9 {
		t.Errorf("dictionary encoded: %v, want %v", got, dict)
	}
	seg := 125.0
	task := 1.5 + seg/200000
	e := schema.Engine{SegmentRows: 1000, Cores: 2, SegmentOverheadMs: 1.5, ScanMBPerS: 200}
	parts := []Partition{{Rows: 1000}, {Rows: 1000}, {Rows: 1000}}
	s := ScanColumn(schema.Column{Type: "bool"}, 3000, parts, e)
	for _, c := range []struct {
		name      string
		got, want float64
	}{{"bytes", s.Bytes, 3 * seg}, {"cpu", s.CPUMs, 3 * task}, {"wall", s.WallMs, 2 * task}, {"bound", s.BoundMs, 3 * task / 2}} {
		if math.Abs(c.got-c.want) > 1e-9 {
			t.Errorf("%s = %v, want %v", c.name, c.got, c.want)
		}
	}
	// CPU is N*f + B/theta, and B is ColumnBytes, on an uneven layout.
	parts = []Partition{{Rows: 2500, Open: true}, {Rows: 300}, {Rows: 3000}, {Rows: 999}}
	c := schema.Column{Type: "int64", Distinct: 400}
	s = ScanColumn(c, 0, parts, e)
	b := ColumnBytes(c, parts, 1000)
	n := Compute(parts, 1000, 1.5).Segments
	if s.Bytes != b || math.Abs(s.CPUMs-(float64(n)*1.5+b/200000)) > 1e-9 || s.WallMs < s.BoundMs {
		t.Errorf("%+v, bytes %v, segments %d", s, b, n)
	}
}
