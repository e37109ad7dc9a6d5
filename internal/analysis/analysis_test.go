package analysis

import (
	"maps"
	"os"
	"slices"
	"strings"
	"testing"

	"github.com/scangate/scangate/bench/gen"
	"github.com/scangate/scangate/internal/advisor"
	"github.com/scangate/scangate/internal/layout"
	"github.com/scangate/scangate/schema"
)

func load(t *testing.T, src string) *schema.Manifest {
	t.Helper()
	m, err := schema.Load("m.yaml", []byte(src), schema.DefaultLimits)
	if err != nil {
		t.Fatal(err)
	}
	return m
}

// 10,000 rows in 40 even partitions at 1,000 rows per segment: 40 segments of 250 rows,
// 60 ms per scan at 1.5 ms each, against a 50 ms budget (hand-computed); count 10 at
// today's segment size gives 10 full segments and 15 ms.
const evenForty = "format: 1\nmodel: m\nengine: {segment_rows: 1000}\nbudgets: {scan_overhead_ms: 50}\n" +
	"tables:\n  - {name: quiet, rows: 10, partitions: {scheme: none}}\n" +
	"  - {name: t, rows: 10000, growth_per_year: 0.1, partitions: {scheme: even, count: 40}}\n"

func TestAnalyzeOncePerTable(t *testing.T) {
	md := Analyze(load(t, evenForty), advisor.DefaultLevels)
	if len(md.Tables) != 2 || md.FirstGrowing != 1 {
		t.Fatalf("%d tables, first growing %d; want 2 and 1", len(md.Tables), md.FirstGrowing)
	}
	tb := md.Tables[1]
	if tb.Index != 1 || tb.Layout.Segments != 40 || tb.Layout.FixedMs != 60 || len(tb.Parts) != 40 {
		t.Errorf("layout %+v, %d parts", tb.Layout, len(tb.Parts))
	}
	if tb.Model() != md || tb.Advisor() == nil {
		t.Error("a table does not reach its model")
	}
}

// The recommendation is the sweep's pick, worded against today's layout; asking twice
// computes the sweep once.
func TestRecommendedIsTheSweepsPick(t *testing.T) {
	tb := Analyze(load(t, evenForty), advisor.DefaultLevels).Tables[1]
	r, ok := tb.Recommended()
	if !ok || !r.Fits || r.Hint() != "use count: 10: 40 -> 10 partitions, 40 -> 10 segments, -45.0 ms per scan" {
		t.Fatalf("recommendation %q (ok %v, fits %v)", r.Hint(), ok, r.Fits)
	}
	sw := tb.Sweep()
	if c, _, _ := sw.Pick(); c.Change != r.Candidate.Change || c.SegmentRows != r.Candidate.SegmentRows || tb.Sweep() != sw {
		t.Error("the recommendation is not the one sweep's pick")
	}
	if q := Analyze(load(t, evenForty), advisor.DefaultLevels).Tables[0]; func() bool { _, ok := q.Recommended(); return ok }() {
		t.Error("a one-segment table got a recommendation")
	}
}

// Settling drops the partitions and the sweep but keeps what reports print: the encoded
// size and the sweep in brief, equal to what it was before.
func TestSettleKeepsWhatReportsPrint(t *testing.T) {
	src := strings.Replace(evenForty, "partitions: {scheme: even, count: 40}}", "partitions: {scheme: even, count: 40}, columns: [{name: c, type: int64, distinct: 100}]}", 1)
	tb := Analyze(load(t, src), advisor.DefaultLevels).Tables[1]
	tb.Recommended()
	before, bytes := tb.Layouts(), tb.EncodedBytes()
	if before == nil || before.Recommended == nil || before.Recommended.FixedMs != 15 || before.Today.FixedMs != 60 {
		t.Fatalf("layouts before settling: %+v", before)
	}
	tb.Settle()
	if tb.Parts != nil || tb.Sweep() != nil || tb.Model() != nil {
		t.Error("Settle kept the partitions, the sweep or the model")
	}
	after := tb.Layouts()
	if after == nil || after.Today != before.Today || *after.Recommended != *before.Recommended || len(after.Front) != len(before.Front) {
		t.Errorf("layouts after settling %+v, before %+v", after, before)
	}
	if tb.EncodedBytes() != bytes || bytes <= 0 {
		t.Errorf("encoded bytes %v after settling, %v before", tb.EncodedBytes(), bytes)
	}
	// The recommendation stays, worded alike.
	if r, ok := tb.Recommended(); !ok || r.Hint() != "use count: 10: 40 -> 10 partitions, 40 -> 10 segments, -45.0 ms per scan" {
		t.Errorf("recommendation after settling %q (ok %v)", r.Hint(), ok)
	}
}

// Advise sweeps only today's capacity when a layout there is clean, and must still give
// the full sweep's recommendation, or its reason for keeping today's layout.
func TestAdviseIsTheFullSweepsPick(t *testing.T) {
	for _, src := range []string{
		evenForty,
		"format: 1\nmodel: m\nengine: {segment_rows: 8Mi}\ntables: [{name: t, rows: 40M, partitions: {scheme: even, count: 8}}]\n",
		"format: 1\nmodel: m\nengine: {segment_rows: 8Mi}\ntables: [{name: t, rows: 5000, partitions: {scheme: even, count: 4}}]\n",
		"format: 1\nmodel: m\nengine: {segment_rows: 8Mi}\nbudgets: {scan_overhead_ms: 300}\ntables: [{name: t, rows: 8G, partitions: {scheme: none}}]\n",
	} {
		lv := advisor.DefaultLevels
		quick, full := Analyze(load(t, src), lv), Analyze(load(t, src), lv)
		for i, q := range quick.Tables {
			q.Advise()
			f := full.Tables[i]
			if q.Advice() != f.Advice() || q.Layouts() != nil {
				t.Errorf("%s: Advise says %q, the full sweep %q", q.Spec.Name, q.Advice(), f.Advice())
			}
		}
	}
}

// The encoded size Analyze keeps from sizing the columns is layout.TableBytes to the
// bit, for a listed table whose declared rows are not its items' sum (TableBytes sizes
// the dictionaries by the declared rows, so it is computed apart) and for the demo's
// tables.
func TestEncodedBytesAreTableBytes(t *testing.T) {
	cols := "columns: [{name: a, type: int64, distinct: 900}, {name: b, type: string, avg_length: 9, distinct: 40000, order: clustered}]"
	srcs := []string{
		"format: 1\nmodel: m\nengine: {segment_rows: 1Mi}\ntables:\n  - {name: t, rows: 3000000, partitions: {scheme: even, count: 7}, " + cols + "}\n",
		"format: 1\nmodel: m\nengine: {segment_rows: 1Mi}\ntables:\n  - {name: t, rows: 3000000, partitions: {scheme: list, items: [{name: a, rows: 1000}, {name: b, rows: 2000000}]}, " + cols + "}\n",
	}
	for _, name := range []string{"billing", "meter-telemetry", "network-assets"} {
		data, err := os.ReadFile("../../testdata/demo/" + name + ".yaml")
		if err != nil {
			t.Fatal(err)
		}
		srcs = append(srcs, string(data))
	}
	profiled := 0
	for _, src := range srcs {
		for _, tb := range Analyze(load(t, src), advisor.DefaultLevels).Tables {
			want := layout.TableBytes(tb.Spec.Columns, tb.Spec.Rows, tb.Parts, tb.Engine.SegmentRows)
			if got := tb.EncodedBytes(); got != want {
				t.Errorf("%s: encoded bytes %v, TableBytes %v", tb.Spec.Name, got, want)
			}
			if len(tb.Spec.Columns) > 0 {
				profiled++
			}
		}
	}
	if profiled < 4 {
		t.Fatalf("only %d profiled tables", profiled)
	}
}

// The sweeps quote the figures Analyze hands over for each table as it is (Scanned)
// instead of figuring them again: every pick, closest layout and figured candidate must
// be what a model without them finds, pruned or in full. Generated manifests with
// about half the tables flagged (the benchmark's), and the demo.
func TestScannedFiguresAreTheSweepsOwn(t *testing.T) {
	var srcs [][]byte
	files := gen.Dense(12, 5)
	for _, name := range slices.Sorted(maps.Keys(files)) {
		srcs = append(srcs, files[name])
	}
	for _, name := range []string{"billing", "meter-telemetry", "network-assets"} {
		data, err := os.ReadFile("../../testdata/demo/" + name + ".yaml")
		if err != nil {
			t.Fatal(err)
		}
		srcs = append(srcs, data)
	}
	quoted := 0
	for n, src := range srcs {
		for _, set := range []advisor.Settings{{Prune: true, Lean: true}, {Prune: true}, {}} {
			m := load(t, string(src))
			md := Analyze(m, advisor.DefaultLevels)
			bare := advisor.NewModel(m)
			for _, tb := range md.Tables {
				bare.Expanded(tb.Index, tb.Parts)
			}
			for _, tb := range md.Tables {
				got, want := md.advisor.Sweep(tb.Index, set), bare.Sweep(tb.Index, set)
				if got.Recommended != want.Recommended || got.Closest != want.Closest || len(got.Candidates) != len(want.Candidates) {
					t.Fatalf("manifest %d, %s (%+v): pick %d closest %d of %d, without the hand-over %d, %d of %d", n, tb.Spec.Name, set,
						got.Recommended, got.Closest, len(got.Candidates), want.Recommended, want.Closest, len(want.Candidates))
				}
				for k := range got.Candidates {
					g, w := got.Candidates[k], want.Candidates[k]
					if g.Fits != w.Fits || !slices.Equal(g.Misses, w.Misses) || !slices.Equal(g.Warnings, w.Warnings) || g.Layout != w.Layout || g.Peak != w.Peak {
						t.Fatalf("manifest %d, %s, candidate %d (%s): %+v, without the hand-over %+v", n, tb.Spec.Name, k, g.Change, g, w)
					}
					// A full sweep figures every candidate in full, a pruned one its pick and
					// closest layout: those column figures are the same. (A pruned sweep may
					// quote exact figures where the other keeps a ceiling.)
					if (k == got.Recommended || k == got.Closest || !set.Prune) && g.Figures != w.Figures {
						t.Fatalf("manifest %d, %s, candidate %d (%s): %+v, without the hand-over %+v", n, tb.Spec.Name, k, g.Change, g.Figures, w.Figures)
					}
				}
				if tb.Widest != nil {
					quoted++
				}
			}
		}
	}
	if quoted < 50 {
		t.Fatalf("only %d profiled tables swept", quoted)
	}
}
