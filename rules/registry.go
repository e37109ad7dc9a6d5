package rules

import (
	"sort"
	"time"

	"github.com/scangate/scangate/schema"
)

// Rule is one check: its identity, its documentation and its logic.
type Rule struct {
	ID      string   // part of the interface: reports, waivers and configs name it
	Default Severity // the most severe level the rule raises
	Title   string   // one line
	Why     string   // why it matters
	Fix     string   // how to fix it
	// Check returns the rule's findings for one analysed table; nil for rules raised
	// elsewhere (schema).
	Check func(t *Table) []Finding
}

// Config is what a run knows beyond the manifest: the date forecasts count from and the
// settings a project may tune. The zero value is the documented default.
type Config struct {
	Today time.Time // the date forecasts and waivers are judged on; zero means now (UTC)
}

// All lists every rule, sorted by ID.
func All() []Rule {
	all := []Rule{
		Schema,
		TruncatedSegments,
		ScanOverhead,
		ScanTime,
		RowCountMismatch,
		NeedlessPartitioning,
		PartitionCount,
	}
	sort.Slice(all, func(i, j int) bool { return all[i].ID < all[j].ID })
	return all
}

// Lookup finds a rule by ID.
func Lookup(id string) (Rule, bool) {
	for _, r := range All() {
		if r.ID == id {
			return r, true
		}
	}
	return Rule{}, false
}

// Run analyses every table of m and returns the findings of every rule, sorted.
func Run(m *schema.Manifest, cfg Config) []Finding {
	_, fs := Check(m, cfg)
	return fs
}

// Check analyses every table of m and returns the tables with their numbers and the
// findings of every rule, sorted; reports show both.
func Check(m *schema.Manifest, cfg Config) ([]*Table, []Finding) {
	tables := Analyze(m, cfg)
	var out []Finding
	for _, t := range tables {
		for _, r := range All() {
			if r.Check == nil {
				continue
			}
			for _, f := range r.Check(t) {
				f.Rule = r.ID
				out = append(out, f)
			}
		}
	}
	sort.SliceStable(out, func(i, j int) bool { return Less(out[i], out[j]) })
	return tables, out
}
