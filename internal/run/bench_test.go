package run

import (
	"bytes"
	"fmt"
	"io"
	"maps"
	"os"
	"path/filepath"
	"slices"
	"sort"
	"testing"

	"go.yaml.in/yaml/v3"

	"github.com/scangate/scangate/bench/gen"
	"github.com/scangate/scangate/internal/change"
	"github.com/scangate/scangate/internal/report"
	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

// The benchmarks run scangate's whole check (load, validate, analyse, rules with their
// hints) in process, next to a baseline that only decodes the same bytes with the same
// YAML library: compare the two in one run (go test -bench . -benchmem ./internal/run),
// not across machines. bench/run.sh measures the built binaries the same way.

func benchInputs(files map[string][]byte) []Input {
	names := make([]string, 0, len(files))
	for n := range files {
		names = append(names, n)
	}
	sort.Strings(names)
	out := make([]Input, len(names))
	for i, n := range names {
		out[i] = Input{name: n, data: files[n]}
	}
	return out
}

// inputBytes is the inputs' size, for the benchmarks' MB/s.
func inputBytes(inputs []Input) int64 {
	var size int64
	for _, in := range inputs {
		size += int64(len(in.data))
	}
	return size
}

func benchCheck(b *testing.B, inputs []Input) {
	cfg, _ := PlainConfig("2026-01-01")
	b.SetBytes(inputBytes(inputs))
	b.ReportAllocs()
	for b.Loop() {
		files, findings := Check(slices.Clone(inputs), cfg, nil, schema.DefaultLimits, false) // as a text report runs; Check consumes its inputs' bytes
		if len(files) != len(inputs) {
			b.Fatal("files lost")
		}
		// A refused file is cheap: a benchmark that refused its inputs would measure
		// nothing of the analysis.
		for _, f := range findings {
			if f.Rule == rules.Schema.ID {
				b.Fatalf("%s refused: %s", f.File, f.Message)
			}
		}
	}
}

func benchDecode(b *testing.B, inputs []Input) {
	b.SetBytes(inputBytes(inputs))
	b.ReportAllocs()
	for b.Loop() {
		for _, in := range inputs {
			var v any
			if err := yaml.Unmarshal(in.data, &v); err != nil {
				b.Fatal(err)
			}
		}
	}
}

var (
	listed       = benchInputs(map[string][]byte{"listed.yaml": gen.Listed(100_000, 1)})
	monorepoData = gen.Monorepo(2000, 40, 0.05, 1)
	monorepo     = benchInputs(monorepoData)
	dense        = benchInputs(gen.Dense(800, 1))
)

// (a) one manifest with 100,000 listed partitions.
func BenchmarkCheckListed100k(b *testing.B)  { benchCheck(b, listed) }
func BenchmarkDecodeListed100k(b *testing.B) { benchDecode(b, listed) }

// (b) a monorepo of 2,000 manifests of about 40 tables, 5% of them messy.
func BenchmarkCheckMonorepo(b *testing.B)  { benchCheck(b, monorepo) }
func BenchmarkDecodeMonorepo(b *testing.B) { benchDecode(b, monorepo) }

// The monorepo's loading alone (parse, schema, typed manifest), serial as the baseline
// runs: what the loader adds to the YAML library's parse.
func BenchmarkLoadMonorepo(b *testing.B) {
	b.SetBytes(inputBytes(monorepo))
	b.ReportAllocs()
	for b.Loop() {
		for _, in := range monorepo {
			if _, err := schema.Load(in.name, in.data, schema.DefaultLimits); err != nil {
				b.Fatalf("%s: %v", in.name, err)
			}
		}
	}
}

// The dense-findings monorepo: 800 manifests of about 40 tables, half of them flagged,
// so the hints' cost shows beside the reading's.
func BenchmarkCheckDense(b *testing.B)  { benchCheck(b, dense) }
func BenchmarkDecodeDense(b *testing.B) { benchDecode(b, dense) }

// The monorepo checked and written as the JSON report (to nowhere): the tables kept to
// the end, and the report streamed.
func BenchmarkJSONMonorepo(b *testing.B) {
	cfg, _ := PlainConfig("2026-01-01")
	format, _ := report.Lookup("json", report.CheckReport)
	outs := []Destination{{Format: format}}
	b.ReportAllocs()
	for b.Loop() {
		files, findings := Check(slices.Clone(monorepo), cfg, nil, schema.DefaultLimits, NeedsTables(outs))
		r := &report.Result{Files: files, Findings: findings, Summary: report.Summarize(files), FailOn: rules.Error}
		if err := Write(outs, r, io.Discard, false); err != nil {
			b.Fatal(err)
		}
	}
}

// diff of the monorepo and a copy with 5% of its files changed, beside one check of the
// copy (BenchmarkCheckMonorepoChanged).
func BenchmarkDiffMonorepo(b *testing.B) {
	cfg, _ := PlainConfig("2026-01-01")
	changed := gen.Changed(monorepoData, 0.05, 1)
	b.ReportAllocs()
	for b.Loop() {
		// Fresh sides each time: checking them drops their bytes.
		checked := CheckSides(diffSides(monorepoData, changed), cfg, Project{}, schema.DefaultLimits)
		if d := change.Compare(checked[0], checked[1]); d.TableCount() == 0 {
			b.Fatal("no tables compared")
		}
	}
}

// The same diff as the command runs it, the sides released once compared, and written
// as the JSON diff (to nowhere), which lists every table and finding: text, the default,
// beside it.
func BenchmarkDiffReportMonorepo(b *testing.B) {
	cfg, _ := PlainConfig("2026-01-01")
	changed := gen.Changed(monorepoData, 0.05, 1)
	for _, name := range []string{"text", "json"} {
		format, _ := report.Lookup(name, report.DiffReport)
		b.Run(name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				d := CompareSides(diffSides(monorepoData, changed), cfg, Project{}, schema.DefaultLimits, change.Options{FigureThreshold: change.DefaultFigureThreshold})
				if d.TableCount() == 0 {
					b.Fatal("no tables compared")
				}
				res := report.NewDiffResult("v0.0.0-bench", d, change.Gate{})
				if err := Write([]Destination{{Format: format}}, res, io.Discard, false); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

func BenchmarkCheckMonorepoChanged(b *testing.B) {
	benchCheck(b, benchInputs(gen.Changed(monorepoData, 0.05, 1)))
}

// (c) the demo.
func BenchmarkCheckDemo(b *testing.B) {
	paths, _ := filepath.Glob("../../testdata/demo/*.yaml")
	files := map[string][]byte{}
	for _, p := range paths {
		data, err := os.ReadFile(p)
		if err != nil {
			b.Fatal(err)
		}
		files[p] = data
	}
	benchCheck(b, benchInputs(files))
}

// Cost against partitions: one time table of 10k, 100k and 1M day partitions.
func BenchmarkCheckPartitions(b *testing.B) {
	for _, n := range []int{10_000, 100_000, 1_000_000} {
		b.Run(fmt.Sprint(n), func(b *testing.B) {
			benchCheck(b, benchInputs(map[string][]byte{"days.yaml": gen.Days(n)}))
		})
	}
}

// Cost against tables: one manifest of 1k, 10k and 100k small tables (gen.ManyTables), beside
// the decode-only baseline of the same bytes. Every whole-model figure (refresh peak,
// forecast, sweep) must stay linear in tables.
func BenchmarkCheckTables(b *testing.B) {
	for _, n := range []int{1_000, 10_000, 100_000} {
		in := benchInputs(map[string][]byte{"tables.yaml": gen.ManyTables(n, 1)})
		b.Run(fmt.Sprint(n), func(b *testing.B) { benchCheck(b, in) })
	}
}

func BenchmarkDecodeTables(b *testing.B) {
	for _, n := range []int{1_000, 10_000, 100_000} {
		in := benchInputs(map[string][]byte{"tables.yaml": gen.ManyTables(n, 1)})
		b.Run(fmt.Sprint(n), func(b *testing.B) { benchDecode(b, in) })
	}
}

// diffPair is a monorepo of files manifests of about 40 tables and a copy of it where
// one file in twenty has a table of one partition split into three: what a pull request
// that touches 5% of the files looks like to diff.
func diffPair(files int) (base, head map[string][]byte) {
	base = gen.Monorepo(files, 40, 0.05, 1)
	head = make(map[string][]byte, len(base))
	i := 0
	for _, name := range slices.Sorted(maps.Keys(base)) {
		head[name] = base[name]
		if i%20 == 0 {
			head[name] = bytes.Replace(base[name], []byte("{scheme: none}"), []byte("{scheme: even, count: 3}"), 1)
		}
		i++
	}
	return base, head
}

// diffSides keys the pair as PathSides keys two directories.
func diffSides(base, head map[string][]byte) [2]Side {
	var s [2]Side
	for i, files := range []map[string][]byte{base, head} {
		s[i].label = fmt.Sprint(i)
		for _, in := range benchInputs(files) {
			s[i].add(in, in.name, "")
		}
	}
	return s
}

// Cost of a whole diff (both sides checked, byte-identical files once, tables and
// findings matched, the gate) against tables: about 1,000 and 10,000 tables with 5% of
// the files changed, each beside one check of the head side (head-check). Linear growth
// means ns/table stays put from one size to the next; compare in one run.
func BenchmarkDiff(b *testing.B) {
	cfg, _ := PlainConfig("2026-01-01")
	for _, files := range []int{25, 250} {
		base, head := diffPair(files)
		b.Run(fmt.Sprintf("tables=%d/head-check", files*40), func(b *testing.B) { benchCheck(b, benchInputs(head)) })
		b.Run(fmt.Sprintf("tables=%d/diff", files*40), func(b *testing.B) {
			b.ReportAllocs()
			tables := 0
			for b.Loop() {
				sides := CheckSides(diffSides(base, head), cfg, Project{}, schema.DefaultLimits)
				d := change.Compare(sides[0], sides[1])
				change.Gate{FailOnNew: rules.Warning}.Check(d)
				tables = d.TableCount()
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(tables), "ns/table")
		})
	}
}

// The comparison alone (matching tables by model and name, findings by fingerprint,
// the gate) on sides checked beforehand: 1,000, 10,000 and 100,000 tables of one model,
// every table changed. ns/table must stay put: no step walks every table per table.
func BenchmarkCompare(b *testing.B) {
	cfg, _ := PlainConfig("2026-01-01")
	for _, n := range []int{1_000, 10_000, 100_000} {
		base := map[string][]byte{"m.yaml": gen.ManyTables(n, 1)}
		head := map[string][]byte{"m.yaml": gen.ManyTables(n, 2)}
		sides := CheckSides(diffSides(base, head), cfg, Project{}, schema.DefaultLimits)
		b.Run(fmt.Sprintf("tables=%d", n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				d := change.Compare(sides[0], sides[1])
				change.Gate{FailOnNew: rules.Warning}.Check(d)
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(n), "ns/table")
		})
	}
}
