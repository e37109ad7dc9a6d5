package rules

import (
	"fmt"
	"sort"
	"sync"

	"github.com/scangate/scangate/internal/analysis"
	"github.com/scangate/scangate/internal/suggest"
	"github.com/scangate/scangate/schema"
)

// Rule is one check: its identity, its documentation and its logic. Each rule is a file
// of its own that registers its Rule from an init function.
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
	// elsewhere (schema) and for model-wide rules. It reads the table, never changes it.
	Check func(t *analysis.Table, cfg Config) []Finding
	// CheckModel returns the findings of a model-wide rule, about every table of one
	// manifest together (refresh memory); nil for per-table rules.
	CheckModel func(m *analysis.Model, cfg Config) []Finding
}

// Param is one tunable threshold of a rule and the values a project may set it to: the
// config schema is generated from its Range, and ConfigFrom refuses a value outside it.
type Param struct {
	Name    string
	Default float64
	Doc     string
	schema.Range
}

// registered collects the rules as their files' init functions run.
var registered []Rule

// register adds a rule to the registry; a second rule with the same ID is a bug.
func register(r Rule) {
	for _, o := range registered {
		if o.ID == r.ID {
			panic("rules: two rules registered as " + r.ID)
		}
	}
	registered = append(registered, r)
}

// All lists every rule, sorted by ID. The slice is shared: callers must not change it.
func All() []Rule { return sorted() }

// sorted sorts the registry once, after every init has run; Check walks it for every table.
var sorted = sync.OnceValue(func() []Rule {
	all := append([]Rule(nil), registered...)
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

// Unknown words a rule ID the registry lacks, with the nearest registered ID when one is
// close (at most a third of the ID's letters apart): `unknown rule "scan-overheads"; did
// you mean scan-overhead? `scangate rules` lists them`.
func Unknown(id string) string {
	ids := make([]string, 0, len(registered))
	for _, r := range All() {
		ids = append(ids, r.ID)
	}
	best, ok := suggest.Nearest(id, ids)
	if !ok {
		return fmt.Sprintf("unknown rule %q; `scangate rules` lists them", id)
	}
	return fmt.Sprintf("unknown rule %q; did you mean %s? `scangate rules` lists them", id, best)
}

// Run analyses every table of m and returns the findings of every rule, sorted.
func Run(m *schema.Manifest, cfg Config) []Finding {
	_, fs := Check(m, cfg)
	return fs
}

// Check analyses m, runs every rule over it and returns the settled analysis with the
// findings, sorted; reports show both.
func Check(m *schema.Manifest, cfg Config) (*analysis.Model, []Finding) {
	md := analysis.Analyze(m, cfg.Levels())
	md.Charted = cfg.Charts
	// Model-wide findings are about no one table; a live waiver for the rule on any
	// table of the model accepts them (the first such waiver counts as used).
	var model []Finding
	for _, r := range All() {
		if r.CheckModel == nil || cfg.off(r.ID) {
			continue
		}
		for _, f := range r.CheckModel(md, cfg) {
			f.Rule = r.ID
			f.Severity = cfg.severity(r.ID, f.Severity)
			model = append(model, f)
		}
	}
	var out []Finding
	for _, t := range md.Tables {
		var own []Finding
		for _, r := range All() {
			if r.Check == nil || cfg.off(r.ID) {
				continue
			}
			for _, f := range r.Check(t, cfg) {
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
		if cfg.Advise {
			t.Advise()
		}
		t.Settle() // no rule reads it again: drop its sweep before the next table's
	}
	out = append(out, model...)
	sort.SliceStable(out, func(i, j int) bool { return Less(out[i], out[j]) })
	md.Settle()
	return md, out
}

// advised is a finding whose first hint is the table's one recommendation
// (analysis.Table.Advice), the same under every finding of the table, followed by the
// rule's own lines (facts, or a marked alternative), never another layout to adopt.
func advised(t *analysis.Table, sev Severity, pos schema.Pos, subject, msg string, extra []string, nums map[string]float64) Finding {
	var hints []string
	if a := t.Advice(); a != "" {
		hints = append(hints, a)
	}
	for _, h := range extra {
		if h != "" {
			hints = append(hints, h)
		}
	}
	f := finding(t, sev, pos, subject, msg, hints, nums)
	f.Advice = t.Advice() != ""
	return f
}

// finding fills in what every finding of a table shares; Check sets the rule ID.
func finding(t *analysis.Table, sev Severity, pos schema.Pos, subject, msg string, hints []string, nums map[string]float64) Finding {
	return Finding{
		Severity: sev,
		File:     t.File,
		Pos:      pos,
		Table:    t.Spec.Name,
		Subject:  subject,
		Message:  t.Spec.Name + ": " + msg,
		Hints:    hints,
		Numbers:  nums,
	}
}
