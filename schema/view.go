package schema

import (
	"iter"
	"unicode/utf8"

	"go.yaml.in/yaml/v3"
)

// Views read the node tree as the values the conversion (node.go) builds from it, so a
// manifest is validated and decoded from its nodes alone. nodeValue of a node is what
// convert returns for it: an obj for a mapping, a list for a sequence, the scalar's
// value otherwise, aliases followed. An obj sees exactly the keys the conversion keeps:
// its own keys that are plain names (the first of duplicates), then those its merge key
// (<<) brings in. Views are only read on a tree the conversion passed, so its limits
// bound every walk here too. Tests compare the two forms on every file under testdata
// and under fuzzing.

// obj is a mapping of the node tree; the zero obj is an absent one.
type obj struct{ n *yaml.Node }

// list is a sequence of the node tree; the zero list is an absent one.
type list struct{ n *yaml.Node }

// nodeValue is the value of n, as convert builds it.
func nodeValue(n *yaml.Node) any {
	v := rawValue(n)
	if sn, ok := v.(*yaml.Node); ok {
		return nodeScalar(sn).value()
	}
	return v
}

// rawValue is nodeValue with a scalar left as its (dereferenced) node, which boxes
// without allocating: the quick check reads it through nodeScalar.
func rawValue(n *yaml.Node) any {
	if n == nil {
		return nil
	}
	n = deref(n)
	switch n.Kind {
	case yaml.MappingNode:
		return obj{n}
	case yaml.SequenceNode:
		return list{n}
	case yaml.ScalarNode:
		return n
	}
	return nil
}

// nodeScalar is a scalar node's value as convert builds it.
func nodeScalar(n *yaml.Node) scal {
	if tagProblem(n) != "" {
		return scal{kind: tString, text: n.Value}
	}
	sc, _ := scalarOf(n)
	return sc
}

// ownKey is a key the conversion keeps in its mapping (a duplicate aside): a scalar
// that is no merge key, has no unknown tag and is not too long.
func ownKey(k *yaml.Node) bool {
	return k.Kind == yaml.ScalarNode && k.Tag != "!!merge" && tagProblem(k) == "" &&
		(len(k.Value) <= maxKeyLength || utf8.RuneCountInString(k.Value) <= maxKeyLength)
}

func isMergeKey(k *yaml.Node) bool { return k.Kind == yaml.ScalarNode && k.Tag == "!!merge" }

// firstMergeValue is what the first merge key of mapping m refers to, nil for none; the
// conversion refuses any later one.
func firstMergeValue(m *yaml.Node) *yaml.Node {
	for i := 0; i+1 < len(m.Content); i += 2 {
		if isMergeKey(m.Content[i]) {
			return m.Content[i+1]
		}
	}
	return nil
}

// lookup is the value node of key, nil when the mapping has none.
func (o obj) lookup(key string) *yaml.Node {
	if o.n == nil {
		return nil
	}
	c := o.n.Content
	for i := 0; i+1 < len(c); i += 2 {
		if k := c[i]; k.Value == key && ownKey(k) {
			return c[i+1]
		}
	}
	if m := firstMergeValue(o.n); m != nil {
		return mergedLookup(m, key)
	}
	return nil
}

// mergedLookup finds key in what a merge key refers to, as merge fills a mapping: the
// first the merge brings in.
func mergedLookup(m *yaml.Node, key string) *yaml.Node {
	var found *yaml.Node
	var seen keySet
	mergedMembers(m, &seen, func(k string, v *yaml.Node) bool {
		if k == key {
			found = v
		}
		return found == nil
	})
	return found
}

// member is get with a scalar left as its node (rawValue), for the quick check.
func (o obj) member(key string) (any, bool) {
	if v := o.lookup(key); v != nil {
		return rawValue(v), true
	}
	return nil, false
}

// get is the value of key and whether the mapping has it.
func (o obj) get(key string) (any, bool) {
	if v := o.lookup(key); v != nil {
		return nodeValue(v), true
	}
	return nil, false
}

// str is the value of key when it is a string; it allocates nothing.
func (o obj) str(key string) (string, bool) {
	n, ok := rawValue(o.lookup(key)).(*yaml.Node)
	if !ok {
		return "", false
	}
	sc := nodeScalar(n)
	return sc.text, sc.kind == tString
}

// field is the value of key, nil when absent.
func (o obj) field(key string) any {
	v, _ := o.get(key)
	return v
}

// members visits each key the conversion keeps, once, in the order it sets them.
func (o obj) members() iter.Seq2[string, *yaml.Node] {
	return func(yield func(string, *yaml.Node) bool) {
		if o.n == nil {
			return
		}
		var seen keySet
		c := o.n.Content
		for i := 0; i+1 < len(c); i += 2 {
			if k := c[i]; ownKey(k) && !seen.has(k.Value) {
				seen.add(k.Value)
				if !yield(k.Value, c[i+1]) {
					return
				}
			}
		}
		if m := firstMergeValue(o.n); m != nil {
			mergedMembers(m, &seen, yield)
		}
	}
}

// mergedMembers visits the keys a merge brings in that are not set yet, as merge fills
// a mapping: the sources in order, and in each its keys in order with its own first
// merge key where it is written.
func mergedMembers(m *yaml.Node, seen *keySet, yield func(string, *yaml.Node) bool) bool {
	target := m
	for target.Kind == yaml.AliasNode {
		target = target.Alias
	}
	switch target.Kind {
	case yaml.SequenceNode:
		for _, e := range target.Content {
			if !mergedMembers(e, seen, yield) {
				return false
			}
		}
	case yaml.MappingNode:
		merged := false
		c := target.Content
		for i := 0; i+1 < len(c); i += 2 {
			k := c[i]
			switch {
			case isMergeKey(k):
				if !merged {
					merged = true
					if !mergedMembers(c[i+1], seen, yield) {
						return false
					}
				}
			case k.Kind == yaml.ScalarNode && !seen.has(k.Value):
				seen.add(k.Value)
				if !yield(k.Value, c[i+1]) {
					return false
				}
			}
		}
	}
	return true
}

// size is how many keys the mapping has.
func (o obj) size() int {
	n := 0
	for range o.members() {
		n++
	}
	return n
}

// keys lists the mapping's keys in the order they are set.
func (o obj) keys() []string {
	var out []string
	for k := range o.members() {
		out = append(out, k)
	}
	return out
}

func (l list) size() int {
	if l.n == nil {
		return 0
	}
	return len(l.n.Content)
}

func (l list) at(i int) any { return nodeValue(l.n.Content[i]) }

// elem is at with a scalar left as its node (rawValue), for the quick check.
func (l list) elem(i int) any { return rawValue(l.n.Content[i]) }

// items visits the elements with their indexes.
func (l list) items() iter.Seq2[int, any] {
	return func(yield func(int, any) bool) {
		for i := range l.size() {
			if !yield(i, l.at(i)) {
				return
			}
		}
	}
}

// built is the value the conversion builds for a view: for tests, which compare them.
func built(v any) any {
	switch v := v.(type) {
	case obj:
		out := map[string]any{}
		for k, n := range v.members() {
			out[k] = built(nodeValue(n))
		}
		return out
	case list:
		out := make([]any, 0, v.size())
		for _, e := range v.items() {
			out = append(out, built(e))
		}
		return out
	}
	return v
}

// keySet is a small set of names: an array while it is short, a map beyond.
type keySet struct {
	few  [8]string
	n    int
	many map[string]bool
}

func (s *keySet) has(k string) bool {
	if s.many != nil {
		return s.many[k]
	}
	for _, x := range s.few[:s.n] {
		if x == k {
			return true
		}
	}
	return false
}

func (s *keySet) add(k string) {
	switch {
	case s.many != nil:
		s.many[k] = true
	case s.n < len(s.few):
		s.few[s.n] = k
		s.n++
	default:
		s.many = make(map[string]bool, 4*len(s.few))
		for _, x := range s.few {
			s.many[x] = true
		}
		s.many[k] = true
	}
}
