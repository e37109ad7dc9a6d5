package adopt

import (
	"fmt"
	"strings"
	"testing"

	"go.yaml.in/yaml/v3"

	"github.com/scangate/scangate/internal/advisor"
	"github.com/scangate/scangate/internal/yamledit"
	"github.com/scangate/scangate/schema"
)

func adoptText(t *testing.T, name, src, table string) *Result {
	t.Helper()
	r, err := File(name, []byte(src), Options{Limits: schema.DefaultLimits, Levels: advisor.DefaultLevels, Table: table})
	if err != nil {
		t.Fatal(err)
	}
	return r
}

// Listed partitions merged by the recommendation: the merged runs are rewritten, the
// item kept stays as written (its block style and all), counts keep their words.
func TestListMerge(t *testing.T) {
	src := `format: 1
model: shop
engine: {segment_rows: 1Mi}
budgets: {scan_overhead_ms: 13}
tables:
  - name: orders
    partitions:
      scheme: list
      items:
        - {name: a, rows: 300k}   # small
        - {name: b, rows: 300k}
        - {name: c, rows: 3M}
        - name: d
          rows: 3M
        - {name: e, rows: 200k}
        - {name: f, rows: 300k}
`
	want := strings.NewReplacer(
		"{segment_rows: 1Mi}", "{segment_rows: 2Mi}",
		"        - {name: a, rows: 300k}   # small\n        - {name: b, rows: 300k}\n        - {name: c, rows: 3M}\n", "        - {name: a+b+c, rows: 3.6M}   # small\n",
		"        - {name: e, rows: 200k}\n        - {name: f, rows: 300k}\n", "        - {name: e+f, rows: 500k}\n",
	).Replace(src)
	r := adoptText(t, "shop.yaml", src, "")
	if got := string(r.After); got != want {
		t.Fatalf("got\n%s\nwant\n%s", got, want)
	}
	if o := r.Tables[0]; !o.Adopted || strings.Join(o.Edits, ", ") != "partitions.items (line 10), engine.segment_rows (line 3)" {
		t.Errorf("outcome %+v", o)
	}
}

// An even count alone, in a flow mapping with a comment after it.
func TestEvenCount(t *testing.T) {
	src := "format: 1\nmodel: m\nengine:\n  segment_rows: 1Mi\nbudgets: {scan_overhead_ms: 20}\ntables:\n  - name: events\n    rows: 40M\n    partitions: {scheme: even, count: 64} # one per shard\n"
	r := adoptText(t, "m.yaml", src, "events")
	got := string(r.After)
	if !strings.Contains(got, "    partitions: {scheme: even, count: ") || !strings.HasSuffix(got, "} # one per shard\n") {
		t.Fatalf("%s", got)
	}
	if strings.Count(got, "\n") != strings.Count(src, "\n") {
		t.Errorf("lines came or went:\n%s", got)
	}
}

func TestItemOps(t *testing.T) {
	it := func(spec string) []schema.Item {
		var out []schema.Item
		for _, f := range strings.Fields(spec) {
			var rows int64
			name, r, _ := strings.Cut(f, "=")
			fmt.Sscan(r, &rows)
			out = append(out, schema.Item{Name: name, Rows: rows})
		}
		return out
	}
	cases := []struct {
		old, new string
		want     string
	}{
		{"a=1 b=2 c=3", "a+b=3 c=3", "[{0 1 0}]"},
		{"a=1 b=2 c=3 d=4", "a=1 b+c+d=9", "[{1 2 1}]"},
		{"a=1 b=2", "a=1 b=2", "[]"},
		{"a=1 b=2", "b=2 a=1", "<nil>"},       // not a merge
		{"a=1 b=2 c=3", "a+b=4 c=3", "<nil>"}, // rows do not add up
		{"a=1 b=2 c=3", "a+b=3", "<nil>"},     // an item lost
	}
	for _, c := range cases {
		ops := itemOps(it(c.old), it(c.new))
		got := fmt.Sprint(ops)
		if ops == nil {
			got = "<nil>"
		}
		if got != c.want {
			t.Errorf("%s -> %s: %s, want %s", c.old, c.new, got, c.want)
		}
	}
}

// A list merged in many places is written whole, in one edit, so adopting stays linear
// in the items; in few places, item by item, the rest as written.
func TestManyMergesWriteTheListWhole(t *testing.T) {
	for _, pairs := range []int{maxItemEdits + 4, 3} {
		var b strings.Builder
		b.WriteString("items:\n")
		var old, merged []schema.Item
		for i := range 40 {
			fmt.Fprintf(&b, "  - {name: p%d, rows: 10} # p%d\n", i, i)
			old = append(old, schema.Item{Name: fmt.Sprintf("p%d", i), Rows: 10})
		}
		for i := 0; i < 40; i += 2 {
			if i/2 < pairs {
				merged = append(merged, schema.Item{Name: old[i].Name + "+" + old[i+1].Name, Rows: 20})
			} else {
				merged = append(merged, old[i], old[i+1])
			}
		}
		doc, err := yamledit.Parse([]byte(b.String()), false)
		if err != nil {
			t.Fatal(err)
		}
		e := &editor{doc: doc, file: "m.yaml"}
		doc.Batch()
		ops := itemOps(old, merged)
		if len(ops) != pairs {
			t.Fatalf("%d ops for %d merges", len(ops), pairs)
		}
		if err := e.sequence([]yamledit.Step{yamledit.Key("items")}, len(merged), ops, func(j int) *yaml.Node { return itemNode(merged[j], false) }); err != nil {
			t.Fatal(err)
		}
		if err := doc.Commit(); err != nil {
			t.Fatal(err)
		}
		got := string(doc.Bytes())
		whole := len(doc.Changes()) == 1
		if whole != (pairs > maxItemEdits) {
			t.Errorf("%d merges: %d changes:\n%s", pairs, len(doc.Changes()), got)
		}
		if !strings.Contains(got, "  - {name: p0+p1, rows: 20}") {
			t.Errorf("%d merges:\n%s", pairs, got)
		}
	}
}

// BenchmarkAdoptTables adopts a recommendation in every table of a manifest of 1,000
// and of 4,000 tables: the time per table should stay flat (one parse per batch).
func BenchmarkAdoptTables(b *testing.B) {
	for _, n := range []int{1000, 4000} {
		var sb strings.Builder
		sb.WriteString("format: 1\nmodel: big\nengine: {segment_rows: 8Mi}\ntables:\n")
		for i := range n {
			fmt.Fprintf(&sb, "  - name: t%d # table %d\n    rows: 40M\n    partitions: {scheme: even, count: 64}\n", i, i)
		}
		src := []byte(sb.String())
		b.Run(fmt.Sprint(n), func(b *testing.B) {
			for b.Loop() {
				r, err := File("big.yaml", src, Options{Limits: schema.DefaultLimits, Levels: advisor.DefaultLevels})
				if err != nil || !r.Changed() {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(n), "ns/table")
		})
	}
}
