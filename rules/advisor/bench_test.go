package advisor

import (
	"slices"
	"testing"

	"github.com/scangate/scangate/bench/gen"
	"github.com/scangate/scangate/schema"
)

// benchModels loads generated manifests of about 40 tables each, in name order.
func benchModels(b *testing.B) []*schema.Manifest {
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
