package main

import (
	"encoding/json"
	"strings"
	"testing"
)

// jsonRec is the part of a recommendation object the tests read.
type jsonRec struct {
	Change       string
	Hint         string
	Fits         bool
	SegmentRows  int64 `json:"segment_rows"`
	Segments     int64
	HoldsThrough *string `json:"holds_through"`
	Horizon      int     `json:"horizon_months"`
}

// planRec is the recommendation of the first table of plan's JSON for a manifest, with
// the flags given; nil when today's layout is kept.
func planRec(t *testing.T, path string, flags ...string) *jsonRec {
	t.Helper()
	return planRecs(t, path, flags...)[0]
}

// planRecs are the recommendations of every table of the first file of plan's JSON.
func planRecs(t *testing.T, path string, flags ...string) []*jsonRec {
	t.Helper()
	r := scangate(t, root(t), "", nil, append([]string{"plan", path, "--format", "json", "--today", "2026-01-15"}, flags...)...)
	wantCode(t, r, 0)
	var doc struct {
		Files []struct {
			Tables []struct {
				Recommendation *jsonRec
			}
		}
	}
	if err := json.Unmarshal([]byte(r.stdout), &doc); err != nil {
		t.Fatal(err)
	}
	var out []*jsonRec
	for _, tb := range doc.Files[0].Tables {
		out = append(out, tb.Recommendation)
	}
	return out
}

// The contradictions of issue 17, each as a manifest of testdata/advice (the arithmetic is
// in each file's comment): every finding of a table and plan name one fix.
func TestAdviceRegressions(t *testing.T) {
	check := func(path string) string {
		return scangate(t, root(t), "", nil, "check", path, "--today", "2026-01-15", "--fail-on", "never").stdout
	}
	// A table that fits in one segment: needless-partitioning, truncated-segments and plan
	// agree on one partition (they named scheme none, count 1 and "keep" before).
	out := check("testdata/advice/one-segment-lookup.yaml")
	r := planRec(t, "testdata/advice/one-segment-lookup.yaml")
	if r == nil || r.Segments != 1 || !strings.Contains(out, "hint: "+r.Hint+"\n") ||
		!strings.Contains(out, "hint: see the recommendation for table fare_bands above") {
		t.Errorf("one-segment table: plan %+v, check:\n%s", r, out)
	}
	// The budget needs 64Mi rows per segment, past the default sizes up to 16Mi: the sweep
	// reaches it, for the hint and for plan alike.
	r = planRec(t, "testdata/advice/beyond-16mi.yaml")
	if r == nil || !r.Fits || r.SegmentRows != 64<<20 || r.Segments != 120 {
		t.Errorf("beyond 16Mi: plan %+v", r)
	}
	if out := check("testdata/advice/beyond-16mi.yaml"); !strings.Contains(out, "hint: raise engine.segment_rows from 8Mi to 64Mi: 954 -> 120 segments, -1,251 ms per scan\n") {
		t.Errorf("beyond 16Mi: check:\n%s", out)
	}
	// The refresh peak is already over the engine's memory; every layout that cuts the
	// fixed ms adds to the peak (larger segments hold more rows in flight, fuller ones
	// wider dictionaries): no closest layout may make it worse, so today's is kept.
	if r := planRec(t, "testdata/advice/broken-memory.yaml"); r != nil {
		t.Errorf("broken memory: plan recommends %q, which makes the broken memory budget worse", r.Change)
	}
	if out := check("testdata/advice/broken-memory.yaml"); !strings.Contains(out, "hint: no layout tried fits every budget, or comes nearer to them than today's without breaking another or making one worse") {
		t.Errorf("broken memory: check:\n%s", out)
	}
	// A refresh no layout can fit (the two copies alone past the engine memory) steers no
	// table's advice: the over-partitioned table gets its one partition at today's segment
	// size, not a smaller size that trims the rows in flight and pushes the other table
	// further over its scan budget (the arithmetic is in the file's comment).
	recs := planRecs(t, "testdata/advice/unreachable-memory.yaml")
	if len(recs) != 2 || recs[0] == nil || recs[0].SegmentRows != 4<<20 || recs[1] == nil || recs[1].Change != "use count: 1" || recs[1].SegmentRows != 4<<20 {
		got, _ := json.Marshal(recs)
		t.Errorf("unreachable memory: plan %s", got)
	}
	// engine.max_segment_rows caps the sweep: the closest layout is the largest size allowed.
	r = planRec(t, "testdata/advice/capped-size.yaml")
	if r == nil || r.Fits || r.SegmentRows != 32<<20 || r.Segments != 2981 {
		t.Errorf("capped size: plan %+v", r)
	}
	// Growth: check and plan judge the recommendation over one horizon and say it.
	out = check("testdata/advice/growing-horizon.yaml")
	r = planRec(t, "testdata/advice/growing-horizon.yaml")
	if r == nil || r.Horizon != 12 || r.HoldsThrough == nil || !strings.HasSuffix(r.Hint, "(12-month horizon)") || !strings.Contains(out, "hint: "+r.Hint+"\n") {
		t.Errorf("growth: plan %+v, check:\n%s", r, out)
	}
	p := scangate(t, root(t), "", nil, "plan", "testdata/advice/growing-horizon.yaml", "--today", "2026-01-15")
	if !strings.Contains(p.stdout, "It holds every budget through "+*r.HoldsThrough+" (12-month horizon).") {
		t.Errorf("plan text does not say the horizon:\n%s", p.stdout)
	}
	// With the segment size fixed, plan recommends the layout check names as the
	// alternative at today's size.
	fixed := planRec(t, "testdata/advice/growing-horizon.yaml", "--fixed-segment-rows")
	if fixed == nil || !strings.Contains(out, "hint: alternative if engine.segment_rows must stay 4Mi: "+fixed.Change+": ") {
		t.Errorf("fixed segment rows: plan %+v, check:\n%s", fixed, out)
	}
}
