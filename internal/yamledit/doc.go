// Package yamledit edits YAML and JSON source by splicing new text in at the byte span of
// one node, found through the node tree of go.yaml.in/yaml/v3 (or, for JSON, a scanner of
// its own), so that comments, key order and formatting everywhere else stay byte for byte.
// Every edit is checked by parsing the result again: an edit that would not read back as
// the intended value is refused, never written. Pure: no I/O.
package yamledit

import (
	"bytes"
	"fmt"
	"reflect"

	"go.yaml.in/yaml/v3"
)

// Error is a refused edit or an unreadable document, positioned when it can be.
type Error struct {
	Line, Col int // 1-based; 0 when the problem has no place
	Msg       string
}

func (e *Error) Error() string {
	if e.Line > 0 {
		return fmt.Sprintf("%d:%d: %s", e.Line, e.Col, e.Msg)
	}
	return e.Msg
}

func errAt(n *yaml.Node, format string, args ...any) error {
	e := &Error{Msg: fmt.Sprintf(format, args...)}
	if n != nil {
		e.Line, e.Col = n.Line, n.Column
	}
	return e
}

// Change is one edited region: Old in the source Parse was given, New in Bytes(); the
// bytes before, between and after the changes are equal in both.
type Change struct {
	Old, New [2]int
}

// Doc is a document being edited.
type Doc struct {
	src     []byte // without the byte order mark
	bom     bool
	json    bool
	nl      string // the line break the document uses
	root    *yaml.Node
	spans   map[*yaml.Node]span
	uses    map[*yaml.Node][]*yaml.Node // anchored node -> the aliases of it
	lines   []int                       // offset of each line's start
	unit    int                         // indentation step of nested blocks
	seqIn   bool                        // block sequences under a key are indented by unit
	change  []Change
	batch   bool
	pending []pending
}

// span is a node's text: [start, end) bytes of src, the anchor and tag included; block
// collections also know the column their entries start at.
type span struct{ start, end int }

const bomBytes = "\ufeff"

// Parse reads one YAML document, or with asJSON one JSON value, for editing.
func Parse(src []byte, asJSON bool) (*Doc, error) {
	d := &Doc{json: asJSON}
	if bytes.HasPrefix(src, []byte(bomBytes)) {
		d.bom = true
		src = src[len(bomBytes):]
	}
	if bytes.HasPrefix(src, []byte(bomBytes)) {
		// The YAML parser drops a mark at the start of its input without counting a
		// column, and misreads later lines after a second one: every span would be off.
		return nil, &Error{Line: 1, Col: 1, Msg: "the document starts with more than one byte order mark; remove all but one"}
	}
	d.src = bytes.Clone(src)
	d.nl = "\n"
	if i := bytes.IndexByte(src, '\n'); i > 0 && src[i-1] == '\r' {
		d.nl = "\r\n"
	}
	if err := d.reparse(); err != nil {
		return nil, err
	}
	d.unit, d.seqIn = d.style()
	return d, nil
}

// Bytes is the edited document, its byte order mark kept.
func (d *Doc) Bytes() []byte {
	if d.bom {
		return append([]byte(bomBytes), d.src...)
	}
	return bytes.Clone(d.src)
}

// Root is the document's top node (a mapping, for a manifest). Callers must not change it.
func (d *Doc) Root() *yaml.Node { return d.root }

// Changes are the regions edited so far, in source order.
// Offsets count the byte order mark.
func (d *Doc) Changes() []Change {
	out := append([]Change(nil), d.change...)
	if d.bom {
		for i := range out {
			for j := range 2 {
				out[i].Old[j] += len(bomBytes)
				out[i].New[j] += len(bomBytes)
			}
		}
	}
	return out
}

func (d *Doc) reparse() error {
	var root *yaml.Node
	var spans map[*yaml.Node]span
	var err error
	if d.json {
		root, spans, err = parseJSON(d.src)
	} else {
		root, spans, err = parseYAML(d.src)
	}
	if err != nil {
		return err
	}
	d.root, d.spans, d.lines = root, spans, lineStarts(d.src)
	d.uses = map[*yaml.Node][]*yaml.Node{}
	walk(root, func(n *yaml.Node) {
		if n.Kind == yaml.AliasNode && n.Alias != nil {
			d.uses[n.Alias] = append(d.uses[n.Alias], n)
		}
	})
	return nil
}

func walk(n *yaml.Node, f func(*yaml.Node)) {
	f(n)
	if n.Kind == yaml.AliasNode {
		return
	}
	for _, c := range n.Content {
		walk(c, f)
	}
}

// splice replaces src[start:end] with text, records the change, parses the result and
// checks it with ok; on any failure the document is left as it was.
func (d *Doc) splice(start, end int, text string, ok func() error, eff effect) error {
	if d.batch {
		d.pending = append(d.pending, pending{start: start, end: end, text: text, eff: eff, seq: len(d.pending)})
		return nil
	}
	old, oldChanges := d.src, d.change
	next := make([]byte, 0, len(old)-(end-start)+len(text))
	next = append(append(append(next, old[:start]...), text...), old[end:]...)
	d.src = next
	d.record(start, end, len(text))
	fail := func(err error) error {
		d.src, d.change = old, oldChanges
		if rerr := d.reparse(); rerr != nil {
			panic("yamledit: the document no longer parses after an undo: " + rerr.Error())
		}
		return err
	}
	if err := d.reparse(); err != nil {
		return fail(&Error{Msg: "the edit would not read back (" + err.Error() + "); the document is left as it was"})
	}
	if err := ok(); err != nil {
		return fail(err)
	}
	return nil
}

// record folds the splice of [start, end) (current coordinates) by n bytes into the
// changes, which stay sorted and disjoint in both coordinates.
func (d *Doc) record(start, end, n int) {
	// back maps a current offset to the source: inside a change, to its old edges.
	back := func(p int, low bool) int {
		shift := 0
		for _, c := range d.change {
			if p < c.New[0] {
				break
			}
			if p <= c.New[1] {
				if low {
					return c.Old[0]
				}
				return c.Old[1]
			}
			shift = c.Old[1] - c.New[1]
		}
		return p + shift
	}
	oldStart, oldEnd := back(start, true), back(end, false)
	delta := n - (end - start)
	var out []Change
	merged := Change{Old: [2]int{oldStart, oldEnd}, New: [2]int{start, start + n}}
	for _, c := range d.change {
		switch {
		case c.New[1] < start:
			out = append(out, c)
		case c.New[0] > end:
			c.New[0] += delta
			c.New[1] += delta
			out = append(out, c)
		default: // touches the new change: absorb it
			merged.Old[0] = min(merged.Old[0], c.Old[0])
			merged.Old[1] = max(merged.Old[1], c.Old[1])
			if c.New[0] < merged.New[0] {
				merged.New[0] = c.New[0]
			}
			if e := c.New[1] + delta; c.New[1] > end && e > merged.New[1] {
				merged.New[1] = e
			}
		}
	}
	out = append(out, merged)
	sortChanges(out)
	d.change = out
}

func sortChanges(cs []Change) {
	for i := 1; i < len(cs); i++ {
		for j := i; j > 0 && cs[j].Old[0] < cs[j-1].Old[0]; j-- {
			cs[j], cs[j-1] = cs[j-1], cs[j]
		}
	}
}

// Value is the Go value of a node (maps, slices, strings, numbers), for comparisons.
func Value(n *yaml.Node) (any, error) {
	var v any
	if err := n.Decode(&v); err != nil {
		return nil, err
	}
	return v, nil
}

// same reports whether two nodes decode to the same value.
func same(a, b *yaml.Node) bool {
	va, err1 := Value(a)
	vb, err2 := Value(b)
	return err1 == nil && err2 == nil && reflect.DeepEqual(va, vb)
}
