package layout

import (
	"math"
	"math/rand/v2"
	"strconv"
	"testing"

	"github.com/scangate/scangate/schema"
)

// bruteSchedule is list scheduling written the obvious way: one task at a time to
// the least-loaded core, ties to the lowest index.
func bruteSchedule(groups []TaskGroup, cores int) float64 {
	load := make([]float64, cores)
	for _, g := range groups {
		for range g.Count {
			best := 0
			for i := range load {
				if load[i] < load[best] {
					best = i
				}
			}
			load[best] += g.Ms
		}
	}
	ms := 0.0
	for _, l := range load {
		ms = max(ms, l)
	}
	return ms
}

func randomGroups(r *rand.Rand, maxCount int64) []TaskGroup {
	ms := []float64{0, 0.5, 1, 1.5, 2.25, 3}
	g := make([]TaskGroup, 1+r.IntN(6))
	for i := range g {
		g[i].Count = r.Int64N(maxCount + 1)
		if r.IntN(2) == 0 {
			g[i].Ms = ms[r.IntN(len(ms))] // equal durations make ties
		} else {
			g[i].Ms = r.Float64() * 10
		}
	}
	return g
}

func TestScheduleMatchesBruteForce(t *testing.T) {
	// Source: brute-force one-task-at-a-time simulation of list scheduling.
	r := rand.New(rand.NewPCG(1966, 2))
	for i := range 3000 {
		cores := 1 + r.IntN(12)
		groups := randomGroups(r, 300) // counts above 4*cores take the bulk path
		got, _ := Schedule(groups, cores)
		want := bruteSchedule(groups, cores)
		if math.Abs(got-want) > 1e-9*max(1, want) {
			t.Fatalf("case %d: cores %d groups %v: makespan %v, brute force %v", i, cores, groups, got, want)
		}
	}
	// More cores, larger groups.
	for i := range 300 {
		cores := 1 + r.IntN(64)
		groups := randomGroups(r, 1000)
		got, _ := Schedule(groups, cores)
		if want := bruteSchedule(groups, cores); math.Abs(got-want) > 1e-9*max(1, want) {
			t.Fatalf("wide case %d: cores %d groups %v: makespan %v, brute force %v", i, cores, groups, got, want)
		}
	}
	// Bulk path after uneven loads, many tasks.
	groups := []TaskGroup{{7, 3.3}, {1, 11}, {3, 0.7}, {100_000, 1.1}, {2, 5}, {50_000, 0.37}}
	for _, cores := range []int{1, 2, 5, 7, 64} {
		got, _ := Schedule(groups, cores)
		if want := bruteSchedule(groups, cores); math.Abs(got-want) > 1e-9*want {
			t.Errorf("cores %d: makespan %v, brute force %v", cores, got, want)
		}
	}
}

func TestScheduleGrahamBound(t *testing.T) {
	// Source: Graham (1966): list scheduling on k machines is within (2 - 1/k) of the
	// optimum; bound <= OPT, so makespan <= (2 - 1/k) * bound, and never below bound.
	r := rand.New(rand.NewPCG(1966, 1))
	for range 3000 {
		k := 1 + r.IntN(64)
		groups := randomGroups(r, 1000)
		ms, bound := Schedule(groups, k)
		if ms > (2-1/float64(k))*bound*(1+1e-12) || ms < bound*(1-1e-12) {
			t.Fatalf("k=%d groups %v: makespan %v outside [bound, (2-1/k) bound], bound %v", k, groups, ms, bound)
		}
	}
}

func TestScheduleEdges(t *testing.T) {
	// Spec: zero counts and zero durations cost nothing.
	if ms, b := Schedule(nil, 8); ms != 0 || b != 0 {
		t.Errorf("empty: %v %v", ms, b)
	}
	if ms, b := Schedule([]TaskGroup{{0, 5}, {10, 0}, {3, -1}, {4, math.NaN()}}, 4); ms != 0 || b != 0 {
		t.Errorf("free tasks: %v %v", ms, b)
	}
	// 10^9 tasks of 1 ms on 8 cores: 1.25e8 ms each, exactly.
	if ms, b := Schedule([]TaskGroup{{1e9, 1}}, 8); ms != 1.25e8 || b != 1.25e8 {
		t.Errorf("1e9 tasks: %v %v, want 1.25e8", ms, b)
	}
	// One long task: the bound is the longest task. 9 tasks of 1 on 8 cores after it.
	if ms, b := Schedule([]TaskGroup{{1, 10}, {9, 1}}, 8); ms != 10 || b != 10 {
		t.Errorf("long task: %v %v, want 10 10", ms, b)
	}
	// 4096 cores, cores < 1 counts as 1.
	if ms, _ := Schedule([]TaskGroup{{4096 * 3, 2}}, 4096); ms != 6 {
		t.Errorf("4096 cores: %v, want 6", ms)
	}
	if ms, _ := Schedule([]TaskGroup{{3, 2}}, 0); ms != 6 {
		t.Errorf("0 cores: %v, want 6", ms)
	}
}

func BenchmarkSchedule(b *testing.B) {
	// 10^9 tasks in 3 groups must not be simulated task by task.
	groups := []TaskGroup{{400_000_000, 1.5 + 0.65}, {1, 1.9}, {600_000_000, 1.5 + 0.61}}
	for _, cores := range []int{8, 4096} {
		b.Run("cores="+strconv.Itoa(cores), func(b *testing.B) {
			for b.Loop() {
				Schedule(groups, cores)
			}
		})
	}
}

func BenchmarkScanColumn(b *testing.B) {
	// A million day partitions with growth: a million distinct part-empty segment sizes.
	parts, err := Expand(timeTable(1e15, 0.15, schema.Tier{Grain: schema.Day, Keep: MaxPartitions}))
	if err != nil {
		b.Fatal(err)
	}
	e := schema.Engine{SegmentRows: 1 << 23, Cores: 8, SegmentOverheadMs: 1.5, ScanMBPerS: 200}
	c := schema.Column{Type: "int64", Distinct: 400_000}
	for b.Loop() {
		ScanColumn(c, 1e15, parts, e)
	}
}
