package layout_test

import (
	"math"
	"testing"

	"github.com/scangate/scangate/internal/layout"
	"github.com/scangate/scangate/schema"
)

// FuzzExpand: whatever the policy, the partitions sum exactly to the table's rows (even
// and time), none is negative, the count is bounded, and the layout's figures are
// finite and consistent (ideal <= segments, fill in 0..1).
func FuzzExpand(f *testing.F) {
	f.Add(int64(7_200_000_000), uint8(2), 8, 14, uint8(0), 23, uint8(2), 0.15, int64(8<<20))
	f.Add(int64(0), uint8(1), 1, 1, uint8(4), 1, uint8(4), 0.0, int64(1))
	f.Add(int64(1_000_000_000_000_000), uint8(2), 3, 999, uint8(1), 12, uint8(3), 100.0, int64(1<<20))
	f.Fuzz(func(t *testing.T, rows int64, scheme uint8, count, keep1 int, grain1 uint8, keep2 int, grain2 uint8, growth float64, segRows int64) {
		if rows < 0 || rows > schema.MaxCount || segRows < 1 || segRows > schema.MaxCount ||
			math.IsNaN(growth) || growth < -0.99 || growth > 100 {
			return // the loader refuses these before Expand sees them
		}
		tb := schema.Table{Name: "t", Rows: rows, GrowthPerYear: growth}
		switch scheme % 3 {
		case 0:
			tb.Partitions = schema.Partitions{Scheme: schema.SchemeNone}
		case 1:
			if count < 1 || count > 10_000 {
				return
			}
			tb.Partitions = schema.Partitions{Scheme: schema.SchemeEven, Count: count}
		case 2:
			g1, g2 := schema.Grains[int(grain1)%5], schema.Grains[int(grain2)%5]
			if keep1 < 1 || keep2 < 1 || keep1+keep2 > 20_000 || g2.Rank() <= g1.Rank() {
				return
			}
			tb.Partitions = schema.Partitions{Scheme: schema.SchemeTime, Tiers: []schema.Tier{{Grain: g1, Keep: keep1}, {Grain: g2, Keep: keep2}}}
		}
		parts, err := layout.Expand(tb)
		if err != nil {
			t.Fatalf("Expand: %v", err)
		}
		var sum int64
		for _, p := range parts {
			if p.Rows < 0 {
				t.Fatalf("negative partition %+v", p)
			}
			sum += p.Rows
		}
		if sum != rows {
			t.Fatalf("partitions sum to %d, want %d", sum, rows)
		}
		l := layout.Compute(parts, segRows, 1.5)
		if l.Ideal > l.Segments || l.Fill < 0 || l.Fill > 1 || math.IsNaN(l.FixedMs) || math.IsInf(l.FixedMs, 0) {
			t.Fatalf("layout %+v", l)
		}
	})
}
