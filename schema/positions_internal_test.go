package schema

import (
	"io/fs"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// The decoder takes a table's, column's and tier's position from its node, and a
// table's rows, growth and partitions from its own keys, instead of walking the pointer from the
// root: every manifest under testdata that loads, and one of shared profiles, tables
// and merged keys, must get the positions the walk (locate) gives.
func TestDecodedPositionsAreTheWalks(t *testing.T) {
	srcs := map[string][]byte{"shared.yaml": []byte(`format: 1
model: shared
engine: {segment_rows: 1Mi}
tables:
  - &t {name: a, rows: 5M, growth_per_year: 0.2, partitions: {scheme: time, tiers: [{grain: day, keep: 9}, &m {grain: month, keep: 4}]},
        columns: [&c {name: id, type: int64}, {name: v, type: string, avg_length: 4}]}
  - <<: *t
    name: b
  - {name: c, <<: {rows: 7M, growth_per_year: 0.1}, partitions: {scheme: time, tiers: [{grain: week, keep: 3}, *m]}, columns: [*c]}
`)}
	err := filepath.WalkDir("../testdata", func(path string, d fs.DirEntry, err error) error {
		if err != nil || d.IsDir() || !strings.HasSuffix(path, ".yaml") {
			return err
		}
		data, err := os.ReadFile(path)
		srcs[path] = data
		return err
	})
	if err != nil {
		t.Fatal(err)
	}
	loaded, tables := 0, 0
	for name, data := range srcs {
		m, err := Load(name, data, DefaultLimits)
		if err != nil {
			continue
		}
		loaded++
		tr, ps := parseTree(false, data, DefaultLimits, "", false)
		if tr == nil {
			t.Fatalf("%s: %v", name, ps)
		}
		d := &decoder{t: tr}
		want := func(ptr string) Pos { return d.pos(ptr) }
		for i, tb := range m.Tables {
			ptr := "/tables/" + strconv.Itoa(i)
			tables++
			if tb.Pos != want(ptr) {
				t.Errorf("%s: table %s at %v, the walk says %v", name, tb.Name, tb.Pos, want(ptr))
			}
			if tb.RowsDeclared && tb.RowsPos != want(ptr+"/rows") {
				t.Errorf("%s: table %s rows at %v, the walk says %v", name, tb.Name, tb.RowsPos, want(ptr+"/rows"))
			}
			if tb.GrowthPerYear != 0 && tb.GrowthPos != want(ptr+"/growth_per_year") {
				t.Errorf("%s: table %s growth at %v, the walk says %v", name, tb.Name, tb.GrowthPos, want(ptr+"/growth_per_year"))
			}
			if tb.Partitions.Scheme != "" && tb.Partitions.Pos != d.keyPos(ptr+"/partitions") {
				t.Errorf("%s: table %s partitions at %v, the walk says %v", name, tb.Name, tb.Partitions.Pos, d.keyPos(ptr+"/partitions"))
			}
			for j, c := range tb.Columns {
				if p := ptr + "/columns/" + strconv.Itoa(j); c.Pos != want(p) {
					t.Errorf("%s: column %s at %v, the walk says %v", name, p, c.Pos, want(p))
				}
			}
			for j, tier := range tb.Partitions.Tiers {
				if p := ptr + "/partitions/tiers/" + strconv.Itoa(j); tier.Pos != want(p) {
					t.Errorf("%s: tier %s at %v, the walk says %v", name, p, tier.Pos, want(p))
				}
			}
		}
	}
	if loaded < 20 || tables < 50 {
		t.Fatalf("only %d manifests of %d tables loaded", loaded, tables)
	}
	if _, err := Load("shared.yaml", srcs["shared.yaml"], DefaultLimits); err != nil {
		t.Fatalf("the shared manifest does not load: %v", err)
	}
}
