package advisor

import (
	"fmt"
	"math/rand/v2"
	"testing"

	"github.com/scangate/scangate/schema"
)

// A lean sweep asks only for the first table a capacity pushes over, other than its own
// (outgrown without all): that is the full list's first entry but its own, whichever
// tables' sweeps asked first and in whatever order, and the full list is the same after
// such questions as when asked cold. Random models of up to eight profiled tables with
// tight scan budgets of their own, so that other capacities push some over.
func TestFirstOutgrownIsTheListsFirst(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 14))
	asked, found := 0, 0
	for trial := range 200 {
		var tables []schema.Table
		for n := range 2 + r.IntN(7) {
			scan := 1 + r.Float64()*400
			spec := schema.Table{Name: fmt.Sprint("t", n), Rows: 1 + r.Int64N(3e9), RowsDeclared: true,
				GrowthPerYear: []float64{0, 0.5}[r.IntN(2)], Budgets: schema.Budgets{ScanMs: &scan},
				Partitions: schema.Partitions{Scheme: schema.SchemeEven, Count: 1 + r.IntN(40)}}
			for k := range 1 + r.IntN(3) {
				spec.Columns = append(spec.Columns, schema.Column{Name: fmt.Sprint("c", k), Type: "int64", Distinct: 1 + r.Int64N(1e9)})
			}
			tables = append(tables, spec)
		}
		m := &schema.Manifest{File: "f", Engine: schema.Engine{SegmentRows: 1 << uint(19+r.IntN(4)), Cores: 1 + r.IntN(16), SegmentOverheadMs: 1.5, ScanMBPerS: 200}, Tables: tables}
		caps := []int64{m.Engine.SegmentRows / 2, m.Engine.SegmentRows * 2, m.Engine.SegmentRows * 8}
		for _, month := range []int{0, 12} {
			for _, s := range caps {
				cold := NewModel(m).outgrown(-1, s, month, true) // every table, none left out
				md := NewModel(m)                                // shared by every question below, in a random order of tables
				for _, i := range r.Perm(len(tables)) {
					want := -1
					for k, o := range cold {
						if o.j != i {
							want = k
							break
						}
					}
					got := md.outgrown(i, s, month, false)
					asked++
					switch {
					case want < 0 && len(got) != 0:
						t.Fatalf("trial %d: table %d at %d rows, month %d: %v, the full list has none but itself: %v", trial, i, s, month, got, cold)
					case want >= 0 && (len(got) != 1 || got[0] != cold[want]):
						t.Fatalf("trial %d: table %d at %d rows, month %d: %v, the full list's first is %v", trial, i, s, month, got, cold[want])
					case want >= 0:
						found++
					}
				}
				if all := md.outgrown(-1, s, month, true); fmt.Sprint(all) != fmt.Sprint(cold) {
					t.Fatalf("trial %d: the list after the questions %v, cold %v", trial, all, cold)
				}
			}
		}
	}
	if found == 0 || found == asked {
		t.Fatalf("%d of %d questions found a table pushed over: the test shows too little", found, asked)
	}
}
