package rules

import (
	"sort"
	"sync"

	"github.com/scangate/scangate/schema"
)

// Rule is one check: its identity, its documentation and its logic.
type Rule struct {
	ID      string   // part of the interface: reports, waivers and configs name it
	Default Severity // the most severe level the rule raises
	Title   string   // one line
	Why     string   // why it matters
	Fix     string   // how to fix it
	How     string   // how the number behind it is computed
	Bad     string   // a manifest snippet that raises it
	Good    string   // the same snippet fixed
	// Params are the thresholds a project may tune in .scangate.yaml.
	Params []Param
	// Check returns the rule's findings for one analysed table; nil for rules raised
	// elsewhere (schema) and for model-wide rules.
	Check func(t *Table) []Finding
	// CheckModel returns the findings of a model-wide rule, about every table of one
	// manifest together (refresh memory); nil for per-table rules.
	CheckModel func(ts []*Table) []Finding
}

// Param is one tunable threshold of a rule.
type Param struct {
	Name    string
	Default float64
	Doc     string
}

// All lists every rule, sorted by ID. The slice is shared: callers must not change it.
func All() []Rule { return registry() }

// registry builds the sorted list once; Check walks it for every table.
var registry = sync.OnceValue(func() []Rule {
	all := []Rule{
		Schema,
		ExpiredWaiver,
		UnusedWaiver,
		TruncatedSegments,
		ScanOverhead,
		ScanTime,
		BudgetForecast,
		RowCountMismatch,
		NeedlessPartitioning,
		PartitionCount,
		RefreshMemory,
	}
	sort.Slice(all, func(i, j int) bool { return all[i].ID < all[j].ID })
	return all
})

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
	// Model-wide findings are about no one table; a live waiver for the rule on any
	// table of the model accepts them (the first such waiver counts as used).
	var model []Finding
	for _, r := range All() {
		if r.CheckModel == nil || cfg.off(r.ID) {
			continue
		}
		for _, f := range r.CheckModel(tables) {
			f.Rule = r.ID
			f.Severity = cfg.severity(r.ID, f.Severity)
			model = append(model, f)
		}
	}
	var out []Finding
	for _, t := range tables {
		var own []Finding
		for _, r := range All() {
			if r.Check == nil || cfg.off(r.ID) {
				continue
			}
			for _, f := range r.Check(t) {
				f.Rule = r.ID
				f.Severity = cfg.severity(r.ID, f.Severity)
				own = append(own, f)
			}
		}
		n := len(own)
		fs := applyWaivers(t, append(own, model...), cfg)
		for k := range model {
			if model[k].Waiver == nil {
				model[k].Waiver = fs[n+k].Waiver
			}
		}
		out = append(out, fs[:n]...)
		out = append(out, fs[n+len(model):]...)
	}
	out = append(out, model...)
	sort.SliceStable(out, func(i, j int) bool { return Less(out[i], out[j]) })
	for _, t := range tables {
		t.settle(out)
	}
	return tables, out
}
