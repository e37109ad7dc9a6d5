package advisor

import (
	"reflect"
	"slices"
	"strings"
	"testing"

	"github.com/scangate/scangate/bench/gen"
	"github.com/scangate/scangate/schema"
)

// benchModels loads generated manifests of about 40 tables each, in name order.
func benchModels(b testing.TB) []*schema.Manifest {
	files := gen.Monorepo(8, 40, 0.3, 1)
	var names []string
	for n := range files {
		names = append(names, n)
	}
	slices.Sort(names)
	var out []*schema.Manifest
	for _, n := range names {
		m, err := schema.Load(n, files[n], schema.DefaultLimits)
		if err != nil {
			b.Fatal(err)
		}
		out = append(out, m)
	}
	return out
}

// BenchmarkSweep sweeps tables of 40-table manifests. cold: each sweep on a fresh
// model, as check does for the one or two tables of a manifest that need a hint;
// warm: every table of a manifest on one model, as plan does.
func BenchmarkSweep(b *testing.B) {
	ms := benchModels(b)
	b.Run("cold", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			for _, m := range ms {
				NewModel(m).Sweep(0, Settings{})
			}
		}
	})
	b.Run("warm", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			for _, m := range ms {
				md := NewModel(m)
				for i := range m.Tables {
					md.Sweep(i, Settings{})
				}
			}
		}
	})
}

// A model caches the other tables' figures, leaving a sweep's own table out until
// another sweep needs it: sweeps in any order on one model must equal sweeps on fresh
// ones, misses for other tables pushed over their budgets included.
func TestSharedModelSweeps(t *testing.T) {
	set := Settings{Capacities: []int64{1 << 16, 1 << 18, 1 << 20, 1 << 24, 1 << 26}}
	others := 0
	for _, m := range benchModels(t)[:3] {
		fresh := make([]*Sweep, len(m.Tables))
		for i := range m.Tables {
			fresh[i] = NewModel(m).Sweep(i, set)
			for _, c := range fresh[i].Candidates {
				for _, miss := range c.Misses {
					if strings.HasPrefix(miss, "table ") {
						others++
					}
				}
			}
		}
		shared := NewModel(m)
		for k := range m.Tables {
			i := (k*7 + 3) % len(m.Tables) // not in table order
			if got := shared.Sweep(i, set); !reflect.DeepEqual(got, fresh[i]) {
				t.Fatalf("%s: sweep of table %d on a shared model differs from a fresh one", m.Model, i)
			}
		}
	}
	if others == 0 {
		t.Fatal("no candidate pushes another table over its budgets: the test misses that case")
	}
}
