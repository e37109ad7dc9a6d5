// Package gen writes synthetic manifests for benchmarks, deterministically from a seed:
// the same arguments give the same bytes on every machine.
package gen

import (
	"fmt"
	"maps"
	"math/rand/v2"
	"slices"
	"strconv"
	"strings"
)

// Listed is one manifest whose main table lists n partitions, each with its own rows.
func Listed(n int, seed uint64) []byte {
	r := rand.New(rand.NewPCG(seed, 1))
	var b strings.Builder
	b.WriteString("format: 1\nmodel: listed\nengine: {segment_rows: 8Mi}\nbudgets: {scan_overhead_ms: 100000}\ntables:\n")
	b.WriteString("  - name: readings\n    partitions:\n      scheme: list\n      items:\n")
	for i := 0; i < n; i++ {
		fmt.Fprintf(&b, "        - {name: p%06d, rows: %d}\n", i, 1_000_000+r.IntN(20_000_000))
	}
	b.WriteString("  - {name: meters, rows: 400k, partitions: {scheme: none}}\n")
	return []byte(b.String())
}

// Days is one manifest with a table of n day partitions: a small file that expands to
// many partitions, to show how the cost grows with partitions.
func Days(n int) []byte {
	return []byte(fmt.Sprintf("format: 1\nmodel: days\nengine: {segment_rows: 8Mi}\ntables:\n  - name: readings\n    rows: %d\n    growth_per_year: 0.1\n    partitions:\n      scheme: time\n      tiers:\n        - {grain: day, keep: %d}\n", int64(n)*5_000_000, n))
}

// Monorepo is files manifests of about tables tables each. A share messy of the tables
// get a random partition policy (most of which waste segments); the rest are laid out
// the way a careful team would (one partition, or partitions of whole segments), as in a
// repository that already runs the gate. Names are models/mNNNN.yaml.
func Monorepo(files, tables int, messy float64, seed uint64) map[string][]byte {
	r := rand.New(rand.NewPCG(seed, 2))
	out := make(map[string][]byte, files)
	grains := []string{"day", "week", "month", "quarter", "year"}
	for f := 0; f < files; f++ {
		var b strings.Builder
		segMi := int64(1) << r.IntN(5)
		fmt.Fprintf(&b, "format: 1\nmodel: model-%04d\nengine:\n  segment_rows: %dMi\n  cores: %d\nbudgets:\n  scan_overhead_ms: %d\n  scan_ms: %d\ntables:\n",
			f, segMi, 4<<r.IntN(3), 2000+r.IntN(2000), 20000+r.IntN(20000))
		for t := 0; t < tables-2+r.IntN(5); t++ {
			fmt.Fprintf(&b, "  - name: t%03d\n", t)
			if r.Float64() >= messy {
				// Tidy: whole segments per partition, or one partition.
				seg := segMi << 20
				if r.IntN(2) == 0 {
					fmt.Fprintf(&b, "    rows: %d\n    partitions: {scheme: none}\n", int64(1+r.IntN(1000))*1000)
				} else {
					count := 1 + r.IntN(12)
					fmt.Fprintf(&b, "    rows: %d\n    partitions: {scheme: even, count: %d}\n", int64(count)*int64(1+r.IntN(8))*seg, count)
				}
			} else {
				rows := int64(1+r.IntN(999)) * []int64{1_000, 1_000_000, 10_000_000}[r.IntN(3)]
				switch r.IntN(4) {
				case 0:
					fmt.Fprintf(&b, "    rows: %d\n    partitions: {scheme: none}\n", rows)
				case 1:
					fmt.Fprintf(&b, "    rows: %d\n    partitions: {scheme: even, count: %d}\n", rows, 1+r.IntN(64))
				case 2:
					g := r.IntN(3)
					fmt.Fprintf(&b, "    rows: %d\n    growth_per_year: 0.%d\n    partitions:\n      scheme: time\n      tiers:\n        - {grain: %s, keep: %d}\n        - {grain: %s, keep: %d}\n",
						rows, r.IntN(5), grains[g], 2+r.IntN(60), grains[g+1+r.IntN(4-g)], 1+r.IntN(24))
				default:
					b.WriteString("    partitions:\n      scheme: list\n      items:\n")
					for i := 0; i < 2+r.IntN(10); i++ {
						fmt.Fprintf(&b, "        - {name: \"%d\", rows: %d}\n", 2015+i, rows/10+int64(r.IntN(1_000_000)))
					}
				}
			}
			if r.IntN(3) == 0 {
				fmt.Fprintf(&b, "    columns:\n      - {name: id, type: int64, order: sorted}\n      - {name: v, type: float64, distinct: %d}\n      - {name: s, type: string, avg_length: %d, distinct: %d}\n",
					1+r.IntN(1_000_000), 2+r.IntN(30), 1+r.IntN(10_000))
			}
		}
		out[fmt.Sprintf("models/m%04d.yaml", f)] = []byte(b.String())
	}
	return out
}

// ManyTables is one manifest of n small tables, to show how the cost grows with tables:
// a third of them grow, one in sixteen has column profiles, one in four is partitioned
// (most of those waste segments, so their hints sweep other layouts), and the model has
// every budget and engine memory, so every whole-model figure (refresh peak, forecast)
// is computed for every table. 100,000 tables are about 7 MiB, within the file limit.
func ManyTables(n int, seed uint64) []byte {
	r := rand.New(rand.NewPCG(seed, 3))
	var b strings.Builder
	fmt.Fprintf(&b, "format: 1\nmodel: many-tables\nengine: {segment_rows: 1Mi, memory: 4PiB}\nbudgets: {scan_overhead_ms: 600, scan_ms: 5000, refresh_memory: 2PiB}\ntables:\n")
	for t := 0; t < n; t++ {
		fmt.Fprintf(&b, "  - {name: t%06d, rows: %dM", t, 1+r.IntN(400))
		if r.IntN(3) == 0 {
			fmt.Fprintf(&b, ", growth_per_year: 0.%d", 1+r.IntN(9))
		}
		switch k := r.IntN(8); {
		case k == 0:
			fmt.Fprintf(&b, ", partitions: {scheme: even, count: %d}", 2+r.IntN(200))
		case k == 1:
			fmt.Fprintf(&b, ", partitions: {scheme: time, tiers: [{grain: month, keep: %d}]}", 2+r.IntN(36))
		default:
			b.WriteString(", partitions: {scheme: none}")
		}
		if r.IntN(16) == 0 {
			fmt.Fprintf(&b, ", columns: [{name: id, type: int64, order: sorted}, {name: v, type: float64, distinct: %d}]", 1+r.IntN(1_000_000))
		}
		b.WriteString("}\n")
	}
	return []byte(b.String())
}

// Dense is a monorepo where about half the tables have a finding: files manifests of
// about 40 tables, each messy with probability 0.7 (some messy layouts are fine). Its check costs what the hints
// cost, where Monorepo's costs what reading the files costs.
func Dense(files int, seed uint64) map[string][]byte {
	return Monorepo(files, 40, 0.7, seed)
}

// Changed is a copy of a monorepo with a share of its files edited as a pull request
// would: the first table's row count of every chosen file doubles (a file without a
// rows line gains a growth line instead). Files are chosen by a seeded shuffle of the
// sorted names, so the same files change on every machine.
func Changed(files map[string][]byte, share float64, seed uint64) map[string][]byte {
	names := make([]string, 0, len(files))
	for n := range files {
		names = append(names, n)
	}
	slices.Sort(names)
	r := rand.New(rand.NewPCG(seed, 4))
	r.Shuffle(len(names), func(i, j int) { names[i], names[j] = names[j], names[i] })
	out := maps.Clone(files)
	for _, n := range names[:int(float64(len(names))*share)] {
		out[n] = edit(files[n])
	}
	return out
}

// edit doubles the first "    rows: N" of a manifest, or adds growth to its first table.
func edit(data []byte) []byte {
	lines := strings.SplitAfter(string(data), "\n")
	for i, l := range lines {
		if v, ok := strings.CutPrefix(l, "    rows: "); ok {
			n, err := strconv.ParseInt(strings.TrimSpace(v), 10, 64)
			if err == nil {
				lines[i] = fmt.Sprintf("    rows: %d\n", 2*n)
				return []byte(strings.Join(lines, ""))
			}
		}
	}
	for i, l := range lines {
		if strings.HasPrefix(l, "  - name: ") {
			lines[i] = l + "    growth_per_year: 0.5\n"
			break
		}
	}
	return []byte(strings.Join(lines, ""))
}
