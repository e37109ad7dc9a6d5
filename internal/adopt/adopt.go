// Package adopt writes tables' recommendations (internal/analysis) into their manifest's
// source: only the keys a recommendation changes are rewritten, through internal/yamledit,
// so comments, key order and formatting elsewhere stay as they were. Pure: bytes in,
// bytes out; the driver reads and writes the files.
package adopt

import (
	"bytes"
	"fmt"
	"path/filepath"
	"strconv"
	"strings"

	"go.yaml.in/yaml/v3"

	"github.com/scangate/scangate/internal/advisor"
	"github.com/scangate/scangate/internal/analysis"
	"github.com/scangate/scangate/internal/escape"
	"github.com/scangate/scangate/internal/units"
	"github.com/scangate/scangate/internal/yamledit"
	"github.com/scangate/scangate/schema"
)

// Options are what a manifest is loaded and analysed with, as check does.
type Options struct {
	Limits  schema.Limits
	Project *schema.ProjectConfig // nil without a project config
	Levels  advisor.Levels        // the rules' warning levels (rules.Config.Levels)
	Table   string                // adopt only this table; "" for every table
}

// Outcome is what adopting did to one table.
type Outcome struct {
	Table   string
	Adopted bool
	Fits    bool     // the layout adopted fits every budget; false: it was only the closest
	Hint    string   // the recommendation in check's words; "" when there is none
	Edits   []string // the keys rewritten, with the line they were at: "partitions.count (line 13)"
	Notes   []string // what else the reader must know (a profile overridden, a change left for later)
	// Candidate is the layout adopted, nil when nothing was.
	Candidate *advisor.Candidate
}

// Result is one manifest before and after.
type Result struct {
	File          string
	Before, After []byte
	Tables        []Outcome
	// Changes are the regions rewritten: Old in Before, New in After; the bytes around
	// them are the same in both.
	Changes []yamledit.Change
}

// Changed reports whether the manifest's bytes change.
func (r *Result) Changed() bool { return !bytes.Equal(r.Before, r.After) }

// File adopts the recommendations of the manifest file (named name, holding data). A
// manifest that breaks its schema returns the loader's *schema.Error; one whose keys
// cannot be rewritten in place (under an alias, say) returns an error naming the
// line, and nothing changes.
//
// engine.segment_rows is one setting for the whole model, so a recommendation that
// changes it is adopted first, and the other tables' recommendations are then taken
// from the model analysed again with the new segment size: every recommendation adopted
// is the one check prints for the model it lands in. A second change of the segment
// size in the same run is left for the next run.
func File(name string, data []byte, o Options) (*Result, error) {
	res := &Result{File: name, Before: data, After: data}
	m, err := schema.LoadWith(name, data, schema.Options{Limits: o.Limits, Project: o.Project})
	if err != nil {
		return nil, err
	}
	doc, err := yamledit.Parse(data, isJSON(name))
	if err != nil {
		return nil, fmt.Errorf("%s: %v", name, err)
	}
	picked, err := pick(m, o.Table)
	if err != nil {
		return nil, err
	}
	md := analysis.Analyze(m, o.Levels)
	recs := recommendations(md, picked)
	index := tableIndex(m)
	done := map[string]bool{}
	// The engine change first, alone.
	for _, tn := range picked {
		r, ok := recs[tn]
		if !ok || !r.Candidate.Engine {
			continue
		}
		doc.Batch()
		out, err := apply(doc, m, index[tn], r)
		if err == nil {
			err = doc.Commit()
		}
		if err != nil {
			return nil, commitError(m.File, err)
		}
		res.Tables = append(res.Tables, out)
		done[tn] = true
		if m, err = reload(res.File, doc, o); err != nil {
			return nil, err
		}
		index = tableIndex(m)
		recs = recommendations(analysis.Analyze(m, o.Levels), picked)
		break
	}
	// The others in one batch: each edit works out its text against the document as it
	// is now, and the document is read back once, so the cost stays linear in tables.
	doc.Batch()
	for _, tn := range picked {
		if done[tn] {
			continue
		}
		r, ok := recs[tn]
		switch {
		case !ok:
			res.Tables = append(res.Tables, Outcome{Table: tn})
		case r.Candidate.Engine && len(done) > 0:
			res.Tables = append(res.Tables, Outcome{Table: tn, Hint: r.Hint(), Notes: []string{
				"not adopted: it changes engine.segment_rows again, after the change above; run adopt again to take it from the model as it then is"}})
		default:
			out, err := apply(doc, m, index[tn], r)
			if err != nil {
				return nil, err // the batch is dropped with the document
			}
			res.Tables = append(res.Tables, out)
		}
	}
	if err := doc.Commit(); err != nil {
		return nil, commitError(m.File, err)
	}
	res.After, res.Changes = doc.Bytes(), doc.Changes()
	if res.Changed() {
		if err := verify(res, o); err != nil {
			return nil, err
		}
	}
	return res, nil
}

func commitError(file string, err error) error {
	if _, ok := err.(*yamledit.Error); ok {
		return fmt.Errorf("%s: %v; nothing was written", file, err)
	}
	return err
}

func isJSON(file string) bool { return strings.EqualFold(filepath.Ext(file), ".json") }

// pick is the names of the tables to adopt, in manifest order.
func pick(m *schema.Manifest, only string) ([]string, error) {
	var names []string
	for _, t := range m.Tables {
		if only == "" || t.Name == only {
			names = append(names, t.Name)
		}
	}
	if len(names) == 0 && only != "" {
		all := make([]string, len(m.Tables))
		for i, t := range m.Tables {
			all[i] = t.Name
		}
		return nil, &NoTable{File: m.File, Table: only, Has: all}
	}
	return names, nil
}

// NoTable is --table naming a table the manifest does not declare.
type NoTable struct {
	File, Table string
	Has         []string
}

func (e *NoTable) Error() string {
	return fmt.Sprintf("--table %s: %s has no such table; it has %s", escape.Text(strconv.Quote(e.Table)), escape.Text(e.File), escape.Text(strings.Join(e.Has, ", ")))
}

// recommendations are the picked tables' recommendations by table name.
func recommendations(md *analysis.Model, picked []string) map[string]analysis.Recommendation {
	want := map[string]bool{}
	for _, n := range picked {
		want[n] = true
	}
	out := map[string]analysis.Recommendation{}
	for _, t := range md.Tables {
		if !want[t.Spec.Name] {
			continue
		}
		if r, ok := t.Recommended(); ok {
			c := *r.Candidate // a copy: the sweep it points into is dropped below
			r.Candidate = &c
			out[t.Spec.Name] = r
		}
		// One table's sweep at a time: a model of many tables never holds them all.
		t.Settle()
	}
	md.Settle()
	return out
}

// reload reads the edited document as the loader does, with the same config.
func reload(name string, doc *yamledit.Doc, o Options) (*schema.Manifest, error) {
	m, err := schema.LoadWith(name, doc.Bytes(), schema.Options{Limits: o.Limits, Project: o.Project})
	if err != nil {
		return nil, fmt.Errorf("%s: the manifest with the recommendation written in no longer loads (%v); nothing was written", name, err)
	}
	return m, nil
}

// verify loads the result and checks that each adopted table now reads as its
// candidate: the partition policy, and the engine's segment size.
func verify(res *Result, o Options) error {
	m, err := schema.LoadWith(res.File, res.After, schema.Options{Limits: o.Limits, Project: o.Project})
	if err != nil {
		return fmt.Errorf("%s: the manifest with the recommendations written in no longer loads (%v); nothing was written", res.File, err)
	}
	index := tableIndex(m)
	for _, out := range res.Tables {
		c := out.Candidate
		if c == nil {
			continue
		}
		i, ok := index[out.Table]
		if !ok || !m.Tables[i].Partitions.SamePolicy(c.Spec.Partitions) || (c.Engine && m.Engine.SegmentRows != c.SegmentRows) {
			return fmt.Errorf("%s: table %s does not read back as the recommended layout; nothing was written", res.File, out.Table)
		}
	}
	return nil
}

// tableIndex is each table's place in the manifest, by name (names are unique).
func tableIndex(m *schema.Manifest) map[string]int {
	out := make(map[string]int, len(m.Tables))
	for i, t := range m.Tables {
		out[t.Name] = i
	}
	return out
}

// apply writes one table's recommendation into doc.
func apply(doc *yamledit.Doc, m *schema.Manifest, i int, r analysis.Recommendation) (Outcome, error) {
	c := r.Candidate
	spec := m.Tables[i]
	table := spec.Name
	out := Outcome{Table: table, Adopted: true, Fits: r.Fits, Hint: r.Hint(), Candidate: c}
	tp := []yamledit.Step{yamledit.Key("tables"), yamledit.Index(i).Named(fmt.Sprintf("table %q", table))}
	e := &editor{doc: doc, file: m.File}
	if !spec.Partitions.SamePolicy(c.Spec.Partitions) {
		if err := e.partitions(append(tp, yamledit.Key("partitions")), spec.Partitions, c.Spec.Partitions); err != nil {
			return out, err
		}
	}
	if c.Engine {
		note, err := e.segmentRows(m.Engine, c.SegmentRows)
		if err != nil {
			return out, err
		}
		if note != "" {
			out.Notes = append(out.Notes, note)
		}
	}
	out.Edits = e.edits
	return out, nil
}

// editor rewrites keys and remembers which, with the line each was at.
type editor struct {
	doc   *yamledit.Doc
	file  string
	edits []string
}

func (e *editor) fail(err error) error {
	return fmt.Errorf("%s:%v; nothing was written", e.file, err)
}

func (e *editor) note(key string, path []yamledit.Step) {
	line := 0
	if n, err := e.doc.Find(path...); err == nil && n != nil {
		line = n.Line
	} else if n, err := e.doc.Find(path[:len(path)-1]...); err == nil && n != nil {
		line = n.Line
	}
	e.edits = append(e.edits, fmt.Sprintf("%s (line %d)", key, line))
}

// partitions rewrites a table's policy from old to new: the one key that differs when
// the scheme stays (count, tiers, items: tiers and items item by item where they can),
// the whole policy when the scheme changes.
func (e *editor) partitions(pp []yamledit.Step, old, new schema.Partitions) error {
	at := func(k string) []yamledit.Step { return append(append([]yamledit.Step(nil), pp...), yamledit.Key(k)) }
	var err error
	switch {
	case old.Scheme != new.Scheme:
		e.note("partitions", pp)
		err = e.doc.Set(e.policyNode(pp, new), pp...)
	case new.Scheme == schema.SchemeEven:
		e.note("partitions.count", at("count"))
		err = e.doc.SetScalar(new.Count, at("count")...)
	case new.Scheme == schema.SchemeTime:
		e.note("partitions.tiers", at("tiers"))
		err = e.sequence(at("tiers"), len(new.Tiers), tierOps(old.Tiers, new.Tiers), func(j int) *yaml.Node { return tierNode(new.Tiers[j]) })
	case new.Scheme == schema.SchemeList:
		e.note("partitions.items", at("items"))
		words := e.wordy(append(at("items"), yamledit.Index(0), yamledit.Key("rows")))
		err = e.sequence(at("items"), len(new.Items), itemOps(old.Items, new.Items), func(j int) *yaml.Node { return itemNode(new.Items[j], words) })
	}
	if err != nil {
		return e.fail(err)
	}
	return nil
}

// maxItemEdits bounds the edits of one sequence: each edit reads the document again,
// so past it the sequence is written whole, in one edit, and the cost stays linear.
const maxItemEdits = 16

// seqOp sets the old item at index at to the new item j and removes the del old items
// after it; j < 0 appends the new item -j-1 at the end.
type seqOp struct{ at, del, j int }

// sequence rewrites the sequence at path from n old items to m new ones by ops (which
// align them: items kept are left as written), or whole when ops is nil or long.
func (e *editor) sequence(path []yamledit.Step, m int, ops []seqOp, item func(j int) *yaml.Node) error {
	idx := func(i int) []yamledit.Step { return append(append([]yamledit.Step(nil), path...), yamledit.Index(i)) }
	// New items are written in the style of the first old one: on one line in braces,
	// or a key a line.
	if first, err := e.doc.Find(idx(0)...); err == nil && first != nil && first.Style&yaml.FlowStyle == 0 {
		flowItem := item
		item = func(j int) *yaml.Node {
			it := flowItem(j)
			it.Style &^= yaml.FlowStyle
			return it
		}
	}
	if ops == nil || len(ops) > maxItemEdits {
		whole := &yaml.Node{Kind: yaml.SequenceNode, Tag: "!!seq"}
		for j := 0; j < m; j++ {
			whole.Content = append(whole.Content, item(j))
		}
		return e.doc.Set(whole, path...)
	}
	// In a batch every index is the document's as it was.
	for _, op := range ops {
		if op.j < 0 {
			continue
		}
		for k := range op.del {
			if err := e.doc.Delete(idx(op.at + 1 + k)...); err != nil {
				return err
			}
		}
		if err := e.doc.Set(item(op.j), idx(op.at)...); err != nil {
			return err
		}
	}
	for _, op := range ops {
		if op.j < 0 {
			if err := e.doc.Append(item(-op.j-1), path...); err != nil {
				return err
			}
		}
	}
	return nil
}

// tierOps aligns tiers as the advisor changes them (MergeTiers): a run in the middle
// becomes one tier, or a window and one tier; the tiers before and after stay. nil when
// the change is not of that shape.
func tierOps(old, new []schema.Tier) []seqOp {
	same := func(i, j int) bool { return old[i].Grain == new[j].Grain && old[i].Keep == new[j].Keep }
	n, m := len(old), len(new)
	pre := 0
	for pre < n && pre < m && same(pre, pre) {
		pre++
	}
	suf := 0
	for suf < n-pre && suf < m-pre && same(n-1-suf, m-1-suf) {
		suf++
	}
	oldMid, newMid := n-pre-suf, m-pre-suf
	var ops []seqOp
	switch {
	case newMid == 0 || (newMid > oldMid && suf > 0):
		return nil
	case newMid <= oldMid:
		for k := 0; k < newMid; k++ {
			ops = append(ops, seqOp{at: pre + k, j: pre + k})
		}
		ops[len(ops)-1].del = oldMid - newMid
	default: // more tiers at the end
		for k := 0; k < oldMid; k++ {
			ops = append(ops, seqOp{at: pre + k, j: pre + k})
		}
		for k := oldMid; k < newMid; k++ {
			ops = append(ops, seqOp{j: -(pre + k) - 1})
		}
	}
	return ops
}

// itemOps aligns listed partitions as the advisor merges them: each new item is an old
// one kept, or a run of neighbouring old ones merged (names joined by "+", rows added).
// nil when the change is not of that shape. Linear in the items.
func itemOps(old, new []schema.Item) []seqOp {
	ops := []seqOp{}
	i := 0
	for j, it := range new {
		if i < len(old) && old[i].Name == it.Name && old[i].Rows == it.Rows {
			i++
			continue
		}
		start, name, rows := i, "", int64(0)
		for i < len(old) && rows < it.Rows {
			if name != "" {
				name += "+"
			}
			name, rows = name+old[i].Name, rows+old[i].Rows
			i++
		}
		if name != it.Name || rows != it.Rows {
			return nil
		}
		ops = append(ops, seqOp{at: start, del: i - start - 1, j: j})
	}
	if i != len(old) {
		return nil
	}
	return ops
}

// policyNode is a whole partition policy, its counts in the manifest's style.
func (e *editor) policyNode(pp []yamledit.Step, p schema.Partitions) *yaml.Node {
	n := mapping("scheme", yamledit.Scalar(string(p.Scheme)))
	switch p.Scheme {
	case schema.SchemeEven:
		n.Content = append(n.Content, key("count"), yamledit.Scalar(p.Count))
	case schema.SchemeTime:
		s := &yaml.Node{Kind: yaml.SequenceNode, Tag: "!!seq"}
		for _, t := range p.Tiers {
			s.Content = append(s.Content, tierNode(t))
		}
		n.Content = append(n.Content, key("tiers"), s)
	case schema.SchemeList:
		words := e.wordy(append(append([]yamledit.Step(nil), pp...), yamledit.Key("items"), yamledit.Index(0), yamledit.Key("rows")))
		s := &yaml.Node{Kind: yaml.SequenceNode, Tag: "!!seq"}
		for _, it := range p.Items {
			s.Content = append(s.Content, itemNode(it, words))
		}
		n.Content = append(n.Content, key("items"), s)
	}
	return n
}

// wordy reports whether the count at path is written as a word ("8Mi"), so a new count
// beside it is written alike.
func (e *editor) wordy(path []yamledit.Step) bool {
	n, err := e.doc.Find(path...)
	return err == nil && n != nil && n.Kind == yaml.ScalarNode && n.Tag == "!!str"
}

// segmentRows sets engine.segment_rows. When the size came from an engine profile of
// the project config, the manifest gets a segment_rows of its own, which overrides the
// profile for this model alone: the profile is shared by other manifests, and the
// recommendation was worked out for this one.
func (e *editor) segmentRows(eng schema.Engine, rows int64) (string, error) {
	path := []yamledit.Step{yamledit.Key("engine"), yamledit.Key("segment_rows")}
	own, err := e.doc.Find(path...)
	if err != nil {
		return "", e.fail(err)
	}
	words := own == nil || (own.Kind == yaml.ScalarNode && own.Tag == "!!str")
	e.note("engine.segment_rows", path)
	if err := e.doc.Set(countNode(rows, words), path...); err != nil {
		return "", e.fail(err)
	}
	note := "engine.segment_rows is one setting for the whole model: every table of it now has segments of " + units.Capacity(rows) + " rows"
	if own == nil && eng.Profile != "" {
		note += fmt.Sprintf("; the manifest now sets it itself, overriding engine profile %q (%s) for this model only: the profile is left as it is, since other manifests may share it",
			eng.Profile, units.Capacity(eng.SegmentRows))
	}
	return note, nil
}

func key(k string) *yaml.Node { return &yaml.Node{Kind: yaml.ScalarNode, Tag: "!!str", Value: k} }

func mapping(kv ...any) *yaml.Node {
	n := &yaml.Node{Kind: yaml.MappingNode, Tag: "!!map"}
	for i := 0; i+1 < len(kv); i += 2 {
		n.Content = append(n.Content, key(kv[i].(string)), kv[i+1].(*yaml.Node))
	}
	return n
}

// flowMapping is a mapping written on one line, as manifests write tiers and items.
func flowMapping(kv ...any) *yaml.Node {
	n := mapping(kv...)
	n.Style = yaml.FlowStyle
	return n
}

func tierNode(t schema.Tier) *yaml.Node {
	return flowMapping("grain", yamledit.Scalar(string(t.Grain)), "keep", yamledit.Scalar(t.Keep))
}

func itemNode(it schema.Item, words bool) *yaml.Node {
	return flowMapping("name", yamledit.Scalar(it.Name), "rows", countNode(it.Rows, words))
}

// countNode is a count as a word (8Mi, 185M) when words and a word says it exactly,
// else as a number.
func countNode(n int64, words bool) *yaml.Node {
	if words {
		w := units.Capacity(n)
		if v, err := schema.ParseCount(w); err == nil && v == n {
			return yamledit.Scalar(w)
		}
	}
	return yamledit.Scalar(n)
}
