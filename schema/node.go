package schema

import (
	"encoding/json"
	"fmt"
	"math"
	"math/big"
	"regexp"
	"strconv"
	"strings"

	"go.yaml.in/yaml/v3"
)

// Limits bound the work one input file can cause, so a hostile file fails with a
// positioned error instead of exhausting the runner.
type Limits struct {
	MaxFileBytes int // larger files are refused before parsing
	MaxDepth     int // nesting of mappings and sequences
	MaxNodes     int // nodes visited in all, aliases expanded
	// MaxAliasNodes bounds the nodes reached through aliases and merge keys, so an alias
	// bomb stops after a little work however small the file; 0 means no separate bound.
	MaxAliasNodes int
	// MaxRunPartitions bounds the partitions one run analyses over all its files; a file
	// that would pass it is reported, not analysed.
	MaxRunPartitions int64
}

// DefaultLimits are generous for hand-written manifests and small for an attacker.
var DefaultLimits = Limits{
	MaxFileBytes: 8 << 20,
	MaxDepth:     64,
	MaxNodes:     4_000_000,
	// Sharing a profile or a partition policy by alias costs a few hundred nodes.
	MaxAliasNodes: 100_000,
	// Twenty tables at the per-table limit; about 40 s of analysis on one core.
	MaxRunPartitions: 20_000_000,
}

// located is where a JSON pointer's key and value sit in the file, so validation and
// decoding errors point at the right place.
type located struct {
	key   *yaml.Node // nil for sequence elements and the root
	value *yaml.Node
}

// tree is a YAML document turned into JSON-like values (map[string]any, []any,
// string, bool, nil, json.Number), with the node tree kept to find positions. Positions
// are looked up when asked for rather than recorded for every node: a manifest with
// 100,000 listed partitions would otherwise build as many pointer strings.
type tree struct {
	root       any
	doc        *yaml.Node
	path       []step // where the conversion is, for error messages
	nodes      int
	inAlias    int // how many aliases deep the conversion is
	aliasNodes int
	lim        Limits
}

// step is one token of the conversion's path: a key, or an index when key is "".
type step struct {
	key   string
	index int
	isKey bool
}

// here is the JSON pointer of the node being converted.
func (t *tree) here() string {
	tokens := make([]string, len(t.path))
	for i, s := range t.path {
		if s.isKey {
			tokens[i] = s.key
		} else {
			tokens[i] = strconv.Itoa(s.index)
		}
	}
	return pointer(tokens)
}

// locate finds a pointer's key and value nodes by walking the node tree the way the
// conversion did: through aliases, and into merged mappings for keys a mapping does not
// set itself. The value of an alias is the alias node, so errors point where the user
// wrote it.
func (t *tree) locate(ptr string) located {
	at := located{value: t.doc}
	if t.doc == nil {
		return at
	}
	// Decoding asks for a position per table and column: walk the pointer's tokens in
	// place rather than splitting it.
	rest, more := strings.TrimPrefix(ptr, "/"), ptr != ""
	for more {
		var tok string
		tok, rest, more = strings.Cut(rest, "/")
		if strings.Contains(tok, "~") {
			tok = strings.ReplaceAll(strings.ReplaceAll(tok, "~1", "/"), "~0", "~")
		}
		n := deref(at.value)
		switch n.Kind {
		case yaml.MappingNode:
			k, v := lookupKey(n, tok, 0)
			if v == nil {
				return at
			}
			at = located{key: k, value: v}
		case yaml.SequenceNode:
			i, err := strconv.Atoi(tok)
			if err != nil || i < 0 || i >= len(n.Content) {
				return at
			}
			at = located{value: n.Content[i]}
		default:
			return at
		}
	}
	return at
}

func deref(n *yaml.Node) *yaml.Node {
	for i := 0; n.Kind == yaml.AliasNode && n.Alias != nil && i < 64; i++ {
		n = n.Alias
	}
	return n
}

// lookupKey finds key in a mapping: its own keys first, then its merge keys in order.
func lookupKey(m *yaml.Node, key string, depth int) (*yaml.Node, *yaml.Node) {
	if depth > 64 {
		return nil, nil
	}
	for i := 0; i+1 < len(m.Content); i += 2 {
		if k := m.Content[i]; k.Kind == yaml.ScalarNode && k.Tag != "!!merge" && k.Value == key {
			return k, m.Content[i+1]
		}
	}
	for i := 0; i+1 < len(m.Content); i += 2 {
		if k := m.Content[i]; k.Kind == yaml.ScalarNode && k.Tag == "!!merge" {
			src := deref(m.Content[i+1])
			sources := []*yaml.Node{src}
			if src.Kind == yaml.SequenceNode {
				sources = src.Content
			}
			for _, s := range sources {
				if s = deref(s); s.Kind == yaml.MappingNode {
					if k, v := lookupKey(s, key, depth+1); v != nil {
						return k, v
					}
				}
			}
		}
	}
	return nil, nil
}

// splitPointer splits a JSON pointer into unescaped tokens (RFC 6901).
func splitPointer(ptr string) []string {
	if ptr == "" {
		return nil
	}
	tokens := strings.Split(strings.TrimPrefix(ptr, "/"), "/")
	for i, t := range tokens {
		tokens[i] = strings.ReplaceAll(strings.ReplaceAll(t, "~1", "/"), "~0", "~")
	}
	return tokens
}

// pointer joins escaped JSON pointer tokens (RFC 6901).
func pointer(tokens []string) string {
	if len(tokens) == 0 {
		return ""
	}
	var b strings.Builder
	for _, t := range tokens {
		b.WriteByte('/')
		t = strings.ReplaceAll(t, "~", "~0")
		b.WriteString(strings.ReplaceAll(t, "/", "~1"))
	}
	return b.String()
}

// count charges one node to the limits: every node to MaxNodes, nodes reached through
// an alias also to MaxAliasNodes.
func (t *tree) count(n *yaml.Node) *Problem {
	t.nodes++
	if t.nodes > t.lim.MaxNodes {
		return problemAt(n, "", fmt.Sprintf("the document holds or expands to more than %s nodes (aliases included); split it or expand fewer aliases", group(int64(t.lim.MaxNodes))))
	}
	if t.inAlias > 0 {
		t.aliasNodes++
		if t.lim.MaxAliasNodes > 0 && t.aliasNodes > t.lim.MaxAliasNodes {
			return problemAt(n, "", fmt.Sprintf("aliases expand to more than %s nodes; expand fewer aliases", group(int64(t.lim.MaxAliasNodes))))
		}
	}
	return nil
}

func child(ptr, token string) string {
	return ptr + pointer([]string{token})
}

func (t *tree) convert(n *yaml.Node, depth int) (any, *Problem) {
	if p := t.count(n); p != nil {
		return nil, p
	}
	if depth > t.lim.MaxDepth {
		return nil, problemAt(n, "", fmt.Sprintf("nesting deeper than %d levels; a manifest needs far fewer", t.lim.MaxDepth))
	}
	if n.Kind == yaml.AliasNode {
		// The alias's target is recorded at this pointer, but errors point at the alias.
		t.inAlias++
		v, p := t.convert(n.Alias, depth+1)
		t.inAlias--
		return v, p
	}
	switch n.Kind {
	case yaml.MappingNode:
		out := make(map[string]any, len(n.Content)/2)
		var merges []*yaml.Node
		for i := 0; i+1 < len(n.Content); i += 2 {
			k, v := n.Content[i], n.Content[i+1]
			if k.Kind == yaml.ScalarNode && k.Tag == "!!merge" {
				merges = append(merges, v)
				continue
			}
			if k.Kind != yaml.ScalarNode {
				return nil, problemAt(k, t.here(), "a key must be a plain name, not a mapping or a sequence")
			}
			if _, dup := out[k.Value]; dup {
				return nil, problemAt(k, t.here(), fmt.Sprintf("key %q is already defined at line %d; remove one of them", k.Value, firstKey(n, k.Value).Line))
			}
			t.path = append(t.path, step{key: k.Value, isKey: true})
			cv, p := t.convert(v, depth+1)
			t.path = t.path[:len(t.path)-1]
			if p != nil {
				return nil, p
			}
			out[k.Value] = cv
		}
		// Merge keys (<<) fill in only the keys the mapping does not set itself.
		for _, m := range merges {
			if p := t.merge(out, m, depth); p != nil {
				return nil, p
			}
		}
		return out, nil
	case yaml.SequenceNode:
		out := make([]any, 0, len(n.Content))
		for i, e := range n.Content {
			t.path = append(t.path, step{index: i})
			cv, p := t.convert(e, depth+1)
			t.path = t.path[:len(t.path)-1]
			if p != nil {
				return nil, p
			}
			out = append(out, cv)
		}
		return out, nil
	case yaml.ScalarNode:
		return scalar(n, t.here)
	}
	return nil, problemAt(n, t.here(), "unsupported YAML node")
}

// firstKey is the first key node of mapping n named key, for a duplicate's message.
func firstKey(n *yaml.Node, key string) *yaml.Node {
	for i := 0; i+1 < len(n.Content); i += 2 {
		if k := n.Content[i]; k.Kind == yaml.ScalarNode && k.Tag != "!!merge" && k.Value == key {
			return k
		}
	}
	return n
}

// merge fills out with the keys of a merged mapping that out does not hold yet: keys
// the mapping sets itself come first, then earlier merges win over later ones.
func (t *tree) merge(out map[string]any, m *yaml.Node, depth int) *Problem {
	// Each merge counts as a node and a level: a merge key that refers to its own mapping
	// would otherwise recurse until the stack overflows, and merges of merges of merges
	// would take exponential time without ever converting a node.
	if p := t.count(m); p != nil {
		return p
	}
	if depth > t.lim.MaxDepth {
		return problemAt(m, t.here(), fmt.Sprintf("merge keys (<<) nest deeper than %d levels; a merge key must not refer to the mapping that holds it", t.lim.MaxDepth))
	}
	target := m
	if target.Kind == yaml.AliasNode {
		t.inAlias++
		defer func() { t.inAlias-- }()
	}
	for target.Kind == yaml.AliasNode {
		target = target.Alias
	}
	switch target.Kind {
	case yaml.SequenceNode:
		for _, e := range target.Content {
			if p := t.merge(out, e, depth+1); p != nil {
				return p
			}
		}
		return nil
	case yaml.MappingNode:
	default:
		return problemAt(m, t.here(), "a merge key (<<) must refer to a mapping or a list of mappings")
	}
	for i := 0; i+1 < len(target.Content); i += 2 {
		k, v := target.Content[i], target.Content[i+1]
		if k.Kind == yaml.ScalarNode && k.Tag == "!!merge" {
			if p := t.merge(out, v, depth+1); p != nil {
				return p
			}
			continue
		}
		if _, set := out[k.Value]; set || k.Kind != yaml.ScalarNode {
			continue
		}
		t.path = append(t.path, step{key: k.Value, isKey: true})
		cv, p := t.convert(v, depth+1)
		t.path = t.path[:len(t.path)-1]
		if p != nil {
			return p
		}
		out[k.Value] = cv
	}
	return nil
}

// canonicalInt is a non-negative decimal integer written without sign, leading zeros or
// separators, the way most counts are written.
func canonicalInt(s string) bool {
	if s == "" || len(s) > 18 || (s[0] == '0' && len(s) > 1) {
		return false
	}
	for i := 0; i < len(s); i++ {
		if s[i] < '0' || s[i] > '9' {
			return false
		}
	}
	return true
}

var jsonNumber = regexp.MustCompile(`^-?(0|[1-9][0-9]*)(\.[0-9]+)?([eE][+-]?[0-9]+)?$`)

// scalar turns a YAML scalar into a JSON value; numbers stay exact as json.Number.
func scalar(n *yaml.Node, here func() string) (any, *Problem) {
	switch n.ShortTag() {
	case "!!null":
		return nil, nil
	case "!!bool":
		var b bool
		if err := n.Decode(&b); err != nil {
			return nil, problemAt(n, here(), "not a valid true/false value")
		}
		return b, nil
	case "!!int":
		if canonicalInt(n.Value) {
			return json.Number(n.Value), nil // already as big.Int would print it
		}
		s := strings.ReplaceAll(n.Value, "_", "")
		neg := strings.HasPrefix(s, "-")
		s = strings.TrimLeft(s, "+-")
		if strings.HasPrefix(s, "0o") {
			s = "0" + s[2:]
		}
		var i big.Int
		if _, ok := i.SetString(s, 0); !ok {
			return nil, problemAt(n, here(), fmt.Sprintf("%q is not a valid integer", n.Value))
		}
		if neg {
			i.Neg(&i)
		}
		return json.Number(i.String()), nil
	case "!!float":
		f, err := strconv.ParseFloat(strings.ReplaceAll(n.Value, "_", ""), 64)
		lower := strings.ToLower(n.Value)
		if strings.Contains(lower, "nan") || strings.Contains(lower, "inf") || math.IsInf(f, 0) || math.IsNaN(f) {
			return nil, problemAt(n, here(), fmt.Sprintf("%s is not a finite number; write a plain number", n.Value))
		}
		if err != nil {
			return nil, problemAt(n, here(), fmt.Sprintf("%q is not a valid number", n.Value))
		}
		// Keep the number as written when it is valid JSON, so messages quote the user.
		if text := strings.ReplaceAll(n.Value, "_", ""); jsonNumber.MatchString(text) {
			return json.Number(text), nil
		}
		return json.Number(strconv.FormatFloat(f, 'g', -1, 64)), nil
	default:
		// Strings, timestamps and anything else custom-tagged are kept as written.
		return n.Value, nil
	}
}
