package yamledit

import (
	"reflect"
	"sort"

	"go.yaml.in/yaml/v3"
)

// effect is what an edit does to the document's value: set the value at keys (adding
// the key), remove it (del), or append v to the sequence at keys (add).
type effect struct {
	keys     []any
	v        *yaml.Node
	del, add bool
}

type pending struct {
	start, end int
	text       string
	eff        effect
	seq        int
}

// Batch starts collecting edits: until Commit, Set, SetText, Delete and Append work out
// their text against the document as it is now and change nothing, so paths and indexes
// all refer to it (deleting item 1 leaves item 2 at index 2). Commit splices them in at
// once and reads the document back once: many edits cost one parse, not one each.
func (d *Doc) Batch() { d.batch = true }

// Commit applies the edits collected since Batch. They must not overlap. The result is
// checked as a whole: it must read as the document's value with each edit's effect;
// otherwise nothing is applied and the document is left as it was.
func (d *Doc) Commit() error {
	ps := d.pending
	d.batch, d.pending = false, nil
	if len(ps) == 0 {
		return nil
	}
	sort.SliceStable(ps, func(i, j int) bool {
		if ps[i].start != ps[j].start {
			return ps[i].start < ps[j].start
		}
		return ps[i].end < ps[j].end
	})
	for i := 1; i < len(ps); i++ {
		if ps[i].start < ps[i-1].end {
			return &Error{Msg: "two edits of one batch overlap; the document is left as it was"}
		}
	}
	want, err := Value(d.root)
	if err != nil {
		return &Error{Msg: "the document's value cannot be read: " + err.Error()}
	}
	// Effects from the last offset to the first, so indexes stay those of the document
	// as it was; at one offset, in the order the edits came.
	for i := len(ps) - 1; i >= 0; {
		j := i
		for j > 0 && ps[j-1].start == ps[i].start {
			j--
		}
		for k := j; k <= i; k++ {
			if want, err = apply(want, ps[k].eff); err != nil {
				return err
			}
		}
		i = j - 1
	}
	old, oldChanges := d.src, d.change
	next := make([]byte, 0, len(old))
	at := 0
	for _, p := range ps {
		next = append(append(next, old[at:p.start]...), p.text...)
		at = p.end
	}
	d.src = append(next, old[at:]...)
	d.recordAll(ps)
	fail := func(msg string) error {
		d.src, d.change = old, oldChanges
		if rerr := d.reparse(); rerr != nil {
			panic("yamledit: the document no longer parses after an undo: " + rerr.Error())
		}
		return &Error{Msg: msg + "; the document is left as it was"}
	}
	if err := d.reparse(); err != nil {
		return fail("the edits would not read back (" + err.Error() + ")")
	}
	got, err := Value(d.root)
	if err != nil || !reflect.DeepEqual(got, want) {
		return fail("the edits would not read back as the values meant")
	}
	return nil
}

// recordAll records the splices of one batch, sorted and disjoint: linear when nothing
// was edited before the batch.
func (d *Doc) recordAll(ps []pending) {
	if len(d.change) > 0 {
		shift := 0
		for _, p := range ps {
			d.record(p.start+shift, p.end+shift, len(p.text))
			shift += len(p.text) - (p.end - p.start)
		}
		return
	}
	shift := 0
	for _, p := range ps {
		c := Change{Old: [2]int{p.start, p.end}, New: [2]int{p.start + shift, p.start + shift + len(p.text)}}
		shift += len(p.text) - (p.end - p.start)
		if n := len(d.change); n > 0 && d.change[n-1].Old[1] == c.Old[0] {
			d.change[n-1].Old[1], d.change[n-1].New[1] = c.Old[1], c.New[1]
			continue
		}
		d.change = append(d.change, c)
	}
}

// apply is v with the effect made: maps changed in place, slices rebuilt.
func apply(v any, e effect) (any, error) {
	var x any
	if e.v != nil {
		var err error
		if x, err = Value(e.v); err != nil {
			return nil, &Error{Msg: "the new value cannot be read: " + err.Error()}
		}
	}
	return at(v, e.keys, func(old any, present bool) (any, bool) {
		switch {
		case e.del:
			return nil, false
		case e.add:
			s, _ := old.([]any)
			return append(s, x), true
		}
		return x, true
	}), nil
}

// at replaces the value at keys in v with f's result (f may drop it).
func at(v any, keys []any, f func(old any, present bool) (any, bool)) any {
	if len(keys) == 0 {
		n, _ := f(v, true)
		return n
	}
	last := len(keys) == 1
	switch c := v.(type) {
	case map[string]any:
		k, _ := keys[0].(string)
		return atKey(c, k, keys[1:], f)
	case map[any]any:
		return atKey(c, keys[0], keys[1:], f)
	case []any:
		i, _ := keys[0].(int)
		if i < 0 || i >= len(c) {
			return c
		}
		if last {
			if n, keep := f(c[i], true); keep {
				c[i] = n
				return c
			}
			return append(c[:i:i], c[i+1:]...)
		}
		c[i] = at(c[i], keys[1:], f)
		return c
	}
	return v
}

// atKey is at for one key of a map: rest are the keys below it.
func atKey[K comparable](c map[K]any, k K, rest []any, f func(old any, present bool) (any, bool)) map[K]any {
	old, ok := c[k]
	if len(rest) > 0 {
		c[k] = at(old, rest, f)
	} else if n, keep := f(old, ok); keep {
		c[k] = n
	} else {
		delete(c, k)
	}
	return c
}
