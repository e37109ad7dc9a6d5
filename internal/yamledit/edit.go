package yamledit

import (
	"fmt"
	"strconv"
	"strings"

	"go.yaml.in/yaml/v3"
)

// Step is one step of a path: a mapping key, a sequence index, or the first item of a
// sequence that a predicate accepts.
type Step struct {
	key   string
	index int
	match func(*yaml.Node) bool
	kind  int
	what  string // for messages
}

const (
	byKey = iota
	byIndex
	byMatch
)

// Key steps to the value of a mapping key.
func Key(k string) Step { return Step{key: k, kind: byKey, what: strconv.Quote(k)} }

// Index steps to a sequence item by position.
func Index(i int) Step { return Step{index: i, kind: byIndex, what: "item " + strconv.Itoa(i)} }

// Where steps to the first sequence item match accepts; what names it in messages.
func Where(what string, match func(item *yaml.Node) bool) Step {
	return Step{match: match, kind: byMatch, what: what}
}

// Field accepts a mapping item whose key holds the scalar value: Where("table x",
// Field("name", "x")).
func Field(key, value string) func(*yaml.Node) bool {
	return func(n *yaml.Node) bool {
		v := lookup(n, key)
		return v != nil && v.Kind == yaml.ScalarNode && v.Value == value
	}
}

// lookup is the value of key in mapping n (aliases followed), nil when absent.
func lookup(n *yaml.Node, key string) *yaml.Node {
	n = deref(n)
	if n == nil || n.Kind != yaml.MappingNode {
		return nil
	}
	for i := 0; i+1 < len(n.Content); i += 2 {
		if n.Content[i].Value == key && n.Content[i].Kind == yaml.ScalarNode {
			return deref(n.Content[i+1])
		}
	}
	return nil
}

func deref(n *yaml.Node) *yaml.Node {
	if n != nil && n.Kind == yaml.AliasNode {
		return n.Alias
	}
	return n
}

// slot is where a path ends: the parent collection, the key node and value for a
// mapping entry (value nil when the key is absent), or the item for a sequence.
type slot struct {
	parent *yaml.Node
	key    *yaml.Node
	value  *yaml.Node
	at     int // index in parent.Content of the value (or item); -1 when absent
	name   string
}

// Find is the node at path, nil without an error when only the last key is absent.
func (d *Doc) Find(path ...Step) (*yaml.Node, error) {
	s, err := d.resolve(path)
	if err != nil {
		return nil, err
	}
	return s.value, nil
}

func pathWords(path []Step) string {
	w := make([]string, len(path))
	for i, s := range path {
		w[i] = s.what
	}
	return strings.Join(w, " > ")
}

// resolve walks path, refusing aliases and anchors used elsewhere on the way.
func (d *Doc) resolve(path []Step) (slot, error) {
	if len(path) == 0 {
		return slot{}, &Error{Msg: "an empty path"}
	}
	cur := d.root
	var s slot
	for i, st := range path {
		if err := d.editable(cur, pathWords(path[:i])); err != nil {
			return slot{}, err
		}
		s = slot{parent: cur, at: -1, name: pathWords(path[:i+1])}
		switch st.kind {
		case byKey:
			if cur.Kind != yaml.MappingNode {
				return slot{}, errAt(cur, "%s is not a mapping, so it has no key %s", orTop(pathWords(path[:i])), st.what)
			}
			for j := 0; j+1 < len(cur.Content); j += 2 {
				if k := cur.Content[j]; k.Kind == yaml.ScalarNode && k.Value == st.key {
					s.key, s.value, s.at = k, cur.Content[j+1], j+1
				}
			}
			if s.value == nil && i < len(path)-1 {
				if merged := lookup(mergedOnly(cur), st.key); merged != nil {
					return slot{}, errAt(merged, "%s comes from a merge key (<<); write it out in this mapping before editing inside it", s.name)
				}
				return slot{}, errAt(cur, "%s has no key %s", orTop(pathWords(path[:i])), st.what)
			}
		default:
			if cur.Kind != yaml.SequenceNode {
				return slot{}, errAt(cur, "%s is not a sequence, so it has no %s", orTop(pathWords(path[:i])), st.what)
			}
			for j, item := range cur.Content {
				if (st.kind == byIndex && j == st.index) || (st.kind == byMatch && st.match(deref(item))) {
					s.value, s.at = item, j
					break
				}
			}
			if s.value == nil && i < len(path)-1 {
				return slot{}, errAt(cur, "%s has no %s", orTop(pathWords(path[:i])), st.what)
			}
		}
		cur = s.value
	}
	return s, nil
}

func orTop(w string) string {
	if w == "" {
		return "the document"
	}
	return w
}

// mergedOnly is a mapping of the entries n takes from its merge keys, nil without any.
func mergedOnly(n *yaml.Node) *yaml.Node {
	out := &yaml.Node{Kind: yaml.MappingNode}
	for i := 0; i+1 < len(n.Content); i += 2 {
		if n.Content[i].Value != "<<" {
			continue
		}
		v := deref(n.Content[i+1])
		var srcs []*yaml.Node
		if v != nil && v.Kind == yaml.SequenceNode {
			srcs = v.Content
		} else {
			srcs = []*yaml.Node{v}
		}
		for _, m := range srcs {
			if m = deref(m); m != nil && m.Kind == yaml.MappingNode {
				out.Content = append(out.Content, m.Content...)
			}
		}
	}
	return out
}

// editable refuses a node that is an alias, or an anchor other nodes alias: changing
// it would change, or break, every use.
func (d *Doc) editable(n *yaml.Node, name string) error {
	if n == nil {
		return nil
	}
	name = orTop(name)
	if n.Kind == yaml.AliasNode {
		at := ""
		if n.Alias != nil {
			at = fmt.Sprintf(" (line %d)", n.Alias.Line)
		}
		return errAt(n, "%s is an alias of &%s%s; editing it would change every use of the anchor: write the value out in full here first", name, n.Value, at)
	}
	if uses := d.uses[n]; len(uses) > 0 {
		return errAt(n, "%s is the anchor &%s, also used at line %d; editing it would change every use: write the values out in full first", name, n.Anchor, uses[0].Line)
	}
	return nil
}

// editableTree is editable for n and everything under it: a subtree being replaced or
// removed must hold no anchor that is used outside it.
func (d *Doc) editableTree(n *yaml.Node, name string) error {
	if n.Kind == yaml.AliasNode {
		return nil // replacing an alias leaves its anchor alone
	}
	if err := d.editable(n, name); err != nil {
		return err
	}
	for _, c := range n.Content {
		if err := d.editableTree(c, name); err != nil {
			return err
		}
	}
	return nil
}

// Set writes v at path: the value of a key (added at the end of its mapping when
// absent) or a sequence item. The new text follows the old one's style: inline where
// the old value was a scalar or flow collection, block where it was a block.
func (d *Doc) Set(v *yaml.Node, path ...Step) error {
	return d.set(v, "", path)
}

// SetScalar is Set with a scalar of a Go value (Scalar).
func (d *Doc) SetScalar(v any, path ...Step) error { return d.Set(Scalar(v), path...) }

// SetText is Set with the value written as YAML text. Where the value goes in block
// style the text is kept as written (its comments too), re-indented to fit; elsewhere it
// is rendered in the document's style.
func (d *Doc) SetText(text string, path ...Step) error {
	v, err := Parsed(text)
	if err != nil {
		return err
	}
	return d.set(v, text, path)
}

func (d *Doc) set(v *yaml.Node, text string, path []Step) error {
	s, err := d.resolve(path)
	if err != nil {
		return err
	}
	last := path[len(path)-1]
	if s.value == nil {
		if last.kind != byKey {
			return errAt(s.parent, "%s has no %s to replace", orTop(pathWords(path[:len(path)-1])), last.what)
		}
		return d.addKey(s, last.key, v, text, path)
	}
	if err := d.editableTree(s.value, s.name); err != nil {
		return err
	}
	start, end, repl, err := d.replacement(s, v, text)
	if err != nil {
		return err
	}
	return d.splice(start, end, repl, d.expect(path, v))
}

// expect checks, after a splice, that path reads v.
func (d *Doc) expect(path []Step, v *yaml.Node) func() error {
	return func() error {
		got, err := d.Find(path...)
		if err != nil || got == nil || !same(got, v) {
			return &Error{Msg: fmt.Sprintf("the edit of %s would not read back as the value meant; the document is left as it was", pathWords(path))}
		}
		return nil
	}
}

// replacement is the span to replace and the text for an existing slot.
func (d *Doc) replacement(s slot, v *yaml.Node, text string) (start, end int, repl string, err error) {
	sp := d.spans[s.value]
	old := s.value
	flowCtx := d.json || s.parent.Style&yaml.FlowStyle != 0
	oldBlock := !flowCtx && isBlock(old) && old.Style&yaml.FlowStyle == 0
	if d.json {
		multi := d.lineOf(sp.start) != d.lineOf(sp.end)
		j, err := d.jsonText(v, multi, indentAt(d.src, lineStartOf(d.src, sp.start)))
		return sp.start, sp.end, j, err
	}
	if oldBlock && isBlock(v) && v.Style&yaml.FlowStyle == 0 {
		// The first line goes where the old entries began; the rest at their column.
		col := sp.start - lineStartOf(d.src, sp.start)
		lines := d.reindent(v, text, col)
		lines[0] = lines[0][col:]
		return sp.start, sp.end, strings.Join(lines, d.nl), nil
	}
	repl = inline(v)
	if oldBlock && s.key != nil {
		// A block value becomes an inline one: it moves up beside its key.
		colon := d.colonAfter(s.key)
		return colon, sp.end, " " + repl, nil
	}
	if sp.start == sp.end && sp.start > 0 && d.src[sp.start-1] == ':' {
		repl = " " + repl // an empty value right after its key's colon
	}
	return sp.start, sp.end, repl, nil
}

// reindent is v's block lines at col: the caller's text as written when it has some,
// else rendered.
func (d *Doc) reindent(v *yaml.Node, text string, col int) []string {
	if strings.TrimSpace(text) == "" {
		return d.blockLines(v, col)
	}
	lines := strings.Split(strings.TrimRight(strings.ReplaceAll(text, "\r\n", "\n"), "\n"), "\n")
	common := -1
	for _, l := range lines {
		if strings.TrimSpace(l) == "" {
			continue
		}
		if n := len(l) - len(strings.TrimLeft(l, " ")); common < 0 || n < common {
			common = n
		}
	}
	pad := strings.Repeat(" ", col)
	for i, l := range lines {
		if strings.TrimSpace(l) == "" {
			lines[i] = ""
			continue
		}
		lines[i] = pad + l[common:]
	}
	for len(lines) > 0 && lines[0] == "" {
		lines = lines[1:]
	}
	return lines
}

// colonAfter is the offset just past the ':' that follows a key.
func (d *Doc) colonAfter(key *yaml.Node) int {
	i := d.spans[key].end
	for i < len(d.src) && d.src[i] != ':' {
		i++
	}
	return min(i+1, len(d.src))
}

func (d *Doc) lineOf(p int) int {
	return strings.Count(string(d.src[:p]), "\n")
}

// lineEnd is the offset of the line break ending p's line (before a CR), or the end.
func (d *Doc) lineEnd(p int) int {
	for p < len(d.src) && d.src[p] != '\n' {
		p++
	}
	return trimCR(d.src, p)
}

// addKey adds key: v at the end of the mapping s.parent.
func (d *Doc) addKey(s slot, key string, v *yaml.Node, text string, path []Step) error {
	m := s.parent
	k := &yaml.Node{Kind: yaml.ScalarNode, Tag: "!!str", Value: key}
	sp := d.spans[m]
	switch {
	case d.json:
		kt, _ := jsonScalar(k)
		return d.insertFlow(m, func(multi bool, ind int) (string, error) {
			j, err := d.jsonText(v, multi, ind)
			return kt + ": " + j, err
		}, d.expect(path, v))
	case m.Style&yaml.FlowStyle != 0:
		return d.insertFlow(m, func(bool, int) (string, error) { return inline(k) + ": " + inline(v), nil }, d.expect(path, v))
	}
	if len(m.Content) == 0 {
		return errAt(m, "an empty block mapping cannot be extended")
	}
	first := d.spans[m.Content[0]].start
	col := first - lineStartOf(d.src, first)
	at := d.lineEnd(sp.end)
	var b strings.Builder
	b.WriteString(d.nl + strings.Repeat(" ", col) + inline(k) + ":")
	if isBlock(v) {
		step := d.unit
		if v.Kind == yaml.SequenceNode && !d.seqIn {
			step = 0
		}
		b.WriteString(d.nl + strings.Join(d.reindent(v, text, col+step), d.nl))
	} else {
		b.WriteString(" " + inline(v))
	}
	return d.splice(at, at, b.String(), d.expect(path, v))
}

// insertFlow adds an entry at the end of a flow collection (or JSON one): after its last
// entry, one a line when the collection spreads over lines.
func (d *Doc) insertFlow(c *yaml.Node, entry func(multi bool, ind int) (string, error), ok func() error) error {
	sp := d.spans[c]
	closeAt := sp.end - 1
	if len(c.Content) == 0 {
		text, err := entry(false, 0)
		if err != nil {
			return err
		}
		return d.splice(closeAt, closeAt, text, ok)
	}
	end := d.spans[c.Content[len(c.Content)-1]].end
	multi := d.lineOf(d.spans[c.Content[0]].start) != d.lineOf(sp.start)
	if multi {
		entryStart := d.spans[c.Content[len(c.Content)-1-btoi(c.Kind == yaml.MappingNode)]].start
		ind := entryStart - lineStartOf(d.src, entryStart)
		text, err := entry(true, ind)
		if err != nil {
			return err
		}
		return d.splice(end, end, ","+d.nl+strings.Repeat(" ", ind)+text, ok)
	}
	text, err := entry(false, 0)
	if err != nil {
		return err
	}
	return d.splice(end, end, ", "+text, ok)
}

func btoi(b bool) int {
	if b {
		return 1
	}
	return 0
}

// Append adds v as the last item of the sequence at path.
func (d *Doc) Append(v *yaml.Node, path ...Step) error {
	seq, err := d.Find(path...)
	if err != nil {
		return err
	}
	if seq == nil || seq.Kind != yaml.SequenceNode {
		return errAt(seq, "%s is not a sequence", pathWords(path))
	}
	if err := d.editable(seq, pathWords(path)); err != nil {
		return err
	}
	n := len(seq.Content)
	ok := d.expect(append(append([]Step(nil), path...), Index(n)), v)
	if d.json || seq.Style&yaml.FlowStyle != 0 {
		return d.insertFlow(seq, func(multi bool, ind int) (string, error) {
			if d.json {
				return d.jsonText(v, multi, ind)
			}
			return inline(v), nil
		}, ok)
	}
	last := seq.Content[n-1]
	dash := d.dashBefore(d.spans[last].start)
	if dash < 0 {
		return errAt(last, "the items of %s do not each start their line with '-'", pathWords(path))
	}
	col := dash - lineStartOf(d.src, dash)
	at := d.lineEnd(d.spans[last].end)
	var text string
	if isBlock(v) {
		lines := d.blockLines(v, col+2)
		lines[0] = strings.Repeat(" ", col) + "- " + lines[0][col+2:]
		text = strings.Join(lines, d.nl)
	} else {
		text = strings.Repeat(" ", col) + "- " + inline(v)
	}
	return d.splice(at, at, d.nl+text, ok)
}

// dashBefore is the offset of the '-' that opens the block item starting at p, when only
// blanks stand before it on its line; -1 otherwise.
func (d *Doc) dashBefore(p int) int {
	i := p - 1
	for i >= 0 && (d.src[i] == ' ' || d.src[i] == '\t' || d.src[i] == '\n' || d.src[i] == '\r') {
		i--
	}
	if i < 0 || d.src[i] != '-' {
		return -1
	}
	for j := i - 1; j >= 0 && d.src[j] != '\n'; j-- {
		if d.src[j] != ' ' {
			return -1
		}
	}
	return i
}

// Upsert replaces the first item of the sequence at path that match accepts with v, or
// appends v when none does ("add or replace table x").
func (d *Doc) Upsert(v *yaml.Node, what string, match func(*yaml.Node) bool, path ...Step) error {
	item := append(append([]Step(nil), path...), Where(what, match))
	s, err := d.resolve(item)
	if err != nil {
		return err
	}
	if s.value != nil {
		return d.Set(v, item...)
	}
	return d.Append(v, path...)
}

// Delete removes a mapping key (with its value) or a sequence item.
func (d *Doc) Delete(path ...Step) error {
	s, err := d.resolve(path)
	if err != nil {
		return err
	}
	if s.value == nil {
		return nil // nothing to delete
	}
	if err := d.editableTree(s.value, s.name); err != nil {
		return err
	}
	c := s.parent
	isMap := c.Kind == yaml.MappingNode
	first := s.at // index in Content of the entry's first node
	if isMap {
		first = s.at - 1
	}
	entries := len(c.Content) / (1 + btoi(isMap))
	if entries == 1 && !d.json && c.Style&yaml.FlowStyle == 0 {
		return errAt(s.value, "%s is the only entry; set %s to an empty value instead", s.name, orTop(pathWords(path[:len(path)-1])))
	}
	startOf := func(i int) int { return d.spans[c.Content[i]].start }
	endOf := d.spans[s.value].end
	step := 1 + btoi(isMap)
	var start, end int
	switch {
	case d.json || c.Style&yaml.FlowStyle != 0:
		switch {
		case entries == 1: // everything between the brackets
			start, end = d.spans[c].start+1, d.spans[c].end-1
		case first+step < len(c.Content): // up to the next entry
			start, end = startOf(first), startOf(first+step)
		default: // from the end of the entry before
			start, end = d.spans[c.Content[first-1]].end, endOf
		}
	default:
		entry := startOf(first)
		lineStart := lineStartOf(d.src, entry)
		if !isMap {
			entry = d.dashBefore(entry)
			if entry < 0 {
				return errAt(s.value, "the items of %s do not each start their line with '-'", orTop(pathWords(path[:len(path)-1])))
			}
		}
		if strings.TrimSpace(string(d.src[lineStart:entry])) == "" {
			// The entry has lines of its own: remove them whole.
			start, end = lineStart, d.nextLine(endOf)
		} else if first+step < len(c.Content) {
			// The first key of an item ("- name: x"): the next key moves up.
			start, end = entry, startOf(first+step)
		} else {
			return errAt(s.value, "%s cannot be removed without its line", s.name)
		}
	}
	want := without(s)
	return d.splice(start, end, "", func() error {
		got := d.root
		if len(path) > 1 {
			got, err = d.Find(path[:len(path)-1]...)
		}
		if err != nil || got == nil || !same(got, want) {
			return &Error{Msg: fmt.Sprintf("removing %s would not read back as meant; the document is left as it was", s.name)}
		}
		return nil
	})
}

// without is the parent of s as it reads with s's entry removed.
func without(s slot) *yaml.Node {
	c := *s.parent
	step, from := 1, s.at
	if c.Kind == yaml.MappingNode {
		step, from = 2, s.at-1
	}
	c.Content = append(append([]*yaml.Node(nil), s.parent.Content[:from]...), s.parent.Content[from+step:]...)
	return &c
}

// nextLine is the start of the line after p's, or the end.
func (d *Doc) nextLine(p int) int {
	for p < len(d.src) && d.src[p] != '\n' {
		p++
	}
	return min(p+1, len(d.src))
}
