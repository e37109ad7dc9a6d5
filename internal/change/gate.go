package change

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"github.com/scangate/scangate/internal/units"

	"github.com/scangate/scangate/rules"
)

// Gate holds the limits a change must respect; a nil limit or a zero FailOnNew is off.
type Gate struct {
	MaxAddedMs       *float64 // fixed ms per scan a change may add to any one table
	MaxAddedSegments *int64   // segments a change may add to any one table
	// FailOnNew is the lowest severity of a new finding that fails the change. A finding
	// that was already there but rose to this level (a warning become an error) counts
	// as new: the change made it so.
	FailOnNew rules.Severity
}

// NewGate is the gate of diff's --max-added-ms and --max-added-segments, each nil when
// not given. The limits are copied; a negative one, or ms that are not a number, are
// refused with a message naming the flag. FailOnNew is left off for the caller to set.
func NewGate(maxMs *float64, maxSegments *int64) (Gate, error) {
	var g Gate
	if maxMs != nil {
		ms := *maxMs
		if math.IsNaN(ms) || math.IsInf(ms, 0) || ms < 0 {
			return Gate{}, fmt.Errorf("--max-added-ms %v: give a number of milliseconds, 0 or more", ms)
		}
		g.MaxAddedMs = &ms
	}
	if maxSegments != nil {
		n := *maxSegments
		if n < 0 {
			return Gate{}, fmt.Errorf("--max-added-segments %d: give a number of segments, 0 or more", n)
		}
		g.MaxAddedSegments = &n
	}
	return g, nil
}

// Breach is one limit a change crosses.
type Breach struct {
	Kind    string // "added-ms", "added-segments" or "new-finding"
	Model   string
	Table   string
	Value   float64 // what the change adds (ms or segments); 0 for a finding
	Limit   float64
	Message string // one line for people
	Finding *FindingChange
}

// Check lists every breach, tables in report order then findings in report order.
// Added milliseconds are compared after rounding to 6 decimals, the precision reports
// print, so a change that adds exactly the limit passes on every machine.
func (g Gate) Check(d *Diff) []Breach {
	var out []Breach
	name := d.Labeler() // called only for a breach: most tables breach nothing
	for _, t := range d.Tables() {
		if g.MaxAddedMs != nil {
			if added := Round(t.AddedMs()); added > *g.MaxAddedMs {
				out = append(out, Breach{
					Kind: "added-ms", Model: t.Model, Table: t.Name, Value: added, Limit: *g.MaxAddedMs,
					Message: fmt.Sprintf("%s adds %s ms per scan, more than the %s ms allowed (--max-added-ms)", name(t), msOver(added, *g.MaxAddedMs), Limit(*g.MaxAddedMs)),
				})
			}
		}
		if g.MaxAddedSegments != nil {
			if added := t.AddedSegments(); added > *g.MaxAddedSegments {
				out = append(out, Breach{
					Kind: "added-segments", Model: t.Model, Table: t.Name, Value: float64(added), Limit: float64(*g.MaxAddedSegments),
					Message: fmt.Sprintf("%s adds %s segments, more than the %s allowed (--max-added-segments)", name(t), units.Num(added), units.Num(*g.MaxAddedSegments)),
				})
			}
		}
	}
	if g.FailOnNew == 0 {
		return out
	}
	flag := fmt.Sprintf("(--fail-on-new %s)", g.FailOnNew)
	modelOf := d.modelOf(d.Introduced, d.Worsened)
	for i := range d.Introduced {
		f := &d.Introduced[i]
		// A finding the manifest waives or the baseline records is accepted debt.
		if f.Finding.Severity >= g.FailOnNew && !f.Finding.Accepted() {
			out = append(out, Breach{
				Kind: "new-finding", Model: modelOf(f.Finding), Table: f.Finding.Table, Finding: f,
				Message: fmt.Sprintf("new %s %s%s at %s %s", f.Finding.Severity, f.Finding.Rule, on(f.Finding), Location(f.Finding), flag),
			})
		}
	}
	for i := range d.Worsened { // a severity that rose is always worsened
		f := &d.Worsened[i]
		if f.Escalated() && f.Was < g.FailOnNew && f.Finding.Severity >= g.FailOnNew && !f.Finding.Accepted() {
			out = append(out, Breach{
				Kind: "new-finding", Model: modelOf(f.Finding), Table: f.Finding.Table, Finding: f,
				Message: fmt.Sprintf("%s%s at %s rose from %s to %s %s", f.Finding.Rule, on(f.Finding), Location(f.Finding), f.Was, f.Finding.Severity, flag),
			})
		}
	}
	return out
}

// on names the table a finding is about: " on meter_reads", or "" for a whole file.
func on(f rules.Finding) string {
	if f.Table == "" {
		return ""
	}
	return " on " + f.Table
}

// modelOf returns the model of the table a head finding of the lists is about, looked
// up in an index built once (a change of thousands of findings and tables) that holds
// only the tables the lists' findings name: the first head table of each, by file.
func (d *Diff) modelOf(lists ...[]FindingChange) func(rules.Finding) string {
	models := map[[2]string]*string{} // nil until the table is found
	for _, l := range lists {
		for _, f := range l {
			models[[2]string{f.Finding.File, f.Finding.Table}] = nil
		}
	}
	for _, t := range d.Tables() {
		k := [2]string{t.HeadFile, t.Name}
		if m, asked := models[k]; asked && m == nil && t.HeadFile != "" {
			models[k] = &t.Model
		}
	}
	return func(f rules.Finding) string {
		if m := models[[2]string{f.File, f.Table}]; m != nil {
			return *m
		}
		return ""
	}
}

// Location is file:line:col of a finding, or the file alone for one about the whole file.
func Location(f rules.Finding) string {
	if f.Pos.Line > 0 {
		return fmt.Sprintf("%s:%d:%d", f.File, f.Pos.Line, f.Pos.Col)
	}
	return f.File
}

// Round keeps 6 decimals, as the reports do.
func Round(x float64) float64 {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return 0
	}
	if math.Abs(x) >= 1e15 {
		return math.Round(x)
	}
	return math.Round(x*1e6) / 1e6
}

// msOver writes added ms as findings do (1,240; 15.0), or with every decimal it has
// when that rounding would hide why it is over the limit (10.001 against 10).
func msOver(added, limit float64) string {
	s := units.Ms(added)
	if v, err := strconv.ParseFloat(strings.ReplaceAll(s, ",", ""), 64); err == nil && v <= limit {
		return strconv.FormatFloat(added, 'f', -1, 64)
	}
	return s
}

// Limit writes a limit as the user gave it: 500, 12.5.
func Limit(x float64) string {
	if x == math.Trunc(x) && math.Abs(x) < 1e15 {
		return units.Num(int64(x))
	}
	return fmt.Sprint(x)
}

// Label names a table for people: its name, or "name (model)" when two models of the
// change hold a table of that name.
func (d *Diff) Label(t TableChange) string { return d.Labeler()(t) }

// Labeler is Label for many tables: which names two models share is worked out once,
// one entry per table name rather than per table, and a label is written only when asked.
func (d *Diff) Labeler() func(TableChange) string {
	type seen struct {
		model  string // the first model with a table of the name
		shared bool   // another model has one too
	}
	names := map[string]seen{}
	for _, t := range d.Tables() {
		switch s, ok := names[t.Name]; {
		case !ok:
			names[t.Name] = seen{model: t.Model}
		case !s.shared && s.model != t.Model:
			names[t.Name] = seen{s.model, true}
		}
	}
	return func(t TableChange) string {
		if names[t.Name].shared {
			return fmt.Sprintf("%s (%s)", t.Name, t.Model)
		}
		return t.Name
	}
}

// Verdict is one line saying what the change does to ms per scan: "adds 1,240 ms per
// scan to meter_reads", "saves 180 ms per scan on pipes", both joined by "; ", or "no
// change in segments or ms per scan". Tables are named largest change first, three at
// most. A table whose segments change at no ms cost is named by its segments.
func (d *Diff) Verdict() string {
	if len(d.Invalid) > 0 {
		n := len(d.Invalid)
		return fmt.Sprintf("cannot compare: %d %s the schema or cannot be read", n, pick(n, "file breaks", "files break"))
	}
	var up, down []TableChange
	for _, t := range d.Tables() {
		ms, segs := Round(t.AddedMs()), t.AddedSegments()
		switch {
		case ms > 0 || (ms == 0 && segs > 0):
			up = append(up, t)
		case ms < 0 || (ms == 0 && segs < 0):
			down = append(down, t)
		}
	}
	if len(up) == 0 && len(down) == 0 {
		return "no change in segments or ms per scan"
	}
	byMagnitude := func(ts []TableChange) {
		sort.SliceStable(ts, func(i, j int) bool {
			a, b := math.Abs(Round(ts[i].AddedMs())), math.Abs(Round(ts[j].AddedMs()))
			if a != b {
				return a > b
			}
			return abs(ts[i].AddedSegments()) > abs(ts[j].AddedSegments())
		})
	}
	byMagnitude(up)
	byMagnitude(down)
	var parts []string
	label := d.Labeler()
	if len(up) > 0 {
		parts = append(parts, clause("adds", "to", up, label))
	}
	if len(down) > 0 {
		parts = append(parts, clause("saves", "on", down, label))
	}
	return strings.Join(parts, "; ")
}

// clause words one direction: "adds 1,240 ms per scan to a, 30.0 ms to b and 3 more tables".
func clause(verb, prep string, ts []TableChange, label func(TableChange) string) string {
	var items []string
	for i, t := range ts {
		if i == 3 {
			n := len(ts) - 3
			items = append(items, fmt.Sprintf("%d more %s", n, pick(n, "table", "tables")))
			break
		}
		unit := "ms"
		amount := units.Ms(math.Abs(Round(t.AddedMs())))
		if Round(t.AddedMs()) == 0 {
			n := abs(t.AddedSegments())
			amount, unit = units.Num(n), pick64(n, "segment", "segments")
		} else if i == 0 {
			unit = "ms per scan"
		}
		items = append(items, fmt.Sprintf("%s %s %s %s", amount, unit, prep, label(t)))
	}
	s := verb + " "
	for i, it := range items {
		switch {
		case i == 0:
		case i == len(items)-1:
			s += " and "
		default:
			s += ", "
		}
		s += it
	}
	return s
}

func abs(n int64) int64 {
	if n < 0 {
		return -n
	}
	return n
}

func pick(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}

func pick64(n int64, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}
