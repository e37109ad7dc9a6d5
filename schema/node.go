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
}

// DefaultLimits are generous for hand-written manifests and small for an attacker.
var DefaultLimits = Limits{
	MaxFileBytes: 8 << 20,
	MaxDepth:     64,
	MaxNodes:     4_000_000,
	// Sharing a profile or a partition policy by alias costs a few hundred nodes.
	MaxAliasNodes: 100_000,
}

// located is what the loader remembers of each JSON pointer: where its key and its
// value sit in the file, so validation and decoding errors point at the right place.
type located struct {
	key   *yaml.Node // nil for sequence elements and the root
	value *yaml.Node
}

// tree is a YAML document turned into JSON-like values (map[string]any, []any,
// string, bool, nil, json.Number) plus the position of every pointer.
type tree struct {
	root       any
	at         map[string]located
	nodes      int
	inAlias    int // how many aliases deep the conversion is
	aliasNodes int
	lim        Limits
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

func (t *tree) convert(n *yaml.Node, ptr string, key *yaml.Node, depth int) (any, *Problem) {
	if p := t.count(n); p != nil {
		return nil, p
	}
	if depth > t.lim.MaxDepth {
		return nil, problemAt(n, "", fmt.Sprintf("nesting deeper than %d levels; a manifest needs far fewer", t.lim.MaxDepth))
	}
	if n.Kind == yaml.AliasNode {
		// The alias's target is recorded at this pointer, but errors point at the alias.
		t.inAlias++
		v, p := t.convert(n.Alias, ptr, key, depth+1)
		t.inAlias--
		if p == nil {
			t.at[ptr] = located{key: key, value: n}
		}
		return v, p
	}
	t.at[ptr] = located{key: key, value: n}
	switch n.Kind {
	case yaml.MappingNode:
		out := map[string]any{}
		seen := map[string]*yaml.Node{}
		var merges []*yaml.Node
		for i := 0; i+1 < len(n.Content); i += 2 {
			k, v := n.Content[i], n.Content[i+1]
			if k.Kind == yaml.ScalarNode && k.Tag == "!!merge" {
				merges = append(merges, v)
				continue
			}
			if k.Kind != yaml.ScalarNode {
				return nil, problemAt(k, ptr, "a key must be a plain name, not a mapping or a sequence")
			}
			if prev, dup := seen[k.Value]; dup {
				return nil, problemAt(k, ptr, fmt.Sprintf("key %q is already defined at line %d; remove one of them", k.Value, prev.Line))
			}
			seen[k.Value] = k
			cv, p := t.convert(v, child(ptr, k.Value), k, depth+1)
			if p != nil {
				return nil, p
			}
			out[k.Value] = cv
		}
		// Merge keys (<<) fill in only the keys the mapping does not set itself.
		for _, m := range merges {
			if p := t.merge(out, seen, m, ptr, depth); p != nil {
				return nil, p
			}
		}
		return out, nil
	case yaml.SequenceNode:
		out := make([]any, 0, len(n.Content))
		for i, e := range n.Content {
			cv, p := t.convert(e, child(ptr, strconv.Itoa(i)), nil, depth+1)
			if p != nil {
				return nil, p
			}
			out = append(out, cv)
		}
		return out, nil
	case yaml.ScalarNode:
		return scalar(n, ptr)
	}
	return nil, problemAt(n, ptr, "unsupported YAML node")
}

func (t *tree) merge(out map[string]any, seen map[string]*yaml.Node, m *yaml.Node, ptr string, depth int) *Problem {
	// Each merge counts as a node and a level: a merge key that refers to its own mapping
	// would otherwise recurse until the stack overflows, and merges of merges of merges
	// would take exponential time without ever converting a node.
	if p := t.count(m); p != nil {
		return p
	}
	if depth > t.lim.MaxDepth {
		return problemAt(m, ptr, fmt.Sprintf("merge keys (<<) nest deeper than %d levels; a merge key must not refer to the mapping that holds it", t.lim.MaxDepth))
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
			if p := t.merge(out, seen, e, ptr, depth+1); p != nil {
				return p
			}
		}
		return nil
	case yaml.MappingNode:
	default:
		return problemAt(m, ptr, "a merge key (<<) must refer to a mapping or a list of mappings")
	}
	for i := 0; i+1 < len(target.Content); i += 2 {
		k, v := target.Content[i], target.Content[i+1]
		if k.Kind == yaml.ScalarNode && k.Tag == "!!merge" {
			if p := t.merge(out, seen, v, ptr, depth+1); p != nil {
				return p
			}
			continue
		}
		if _, set := seen[k.Value]; set || k.Kind != yaml.ScalarNode {
			continue
		}
		seen[k.Value] = k
		cv, p := t.convert(v, child(ptr, k.Value), k, depth+1)
		if p != nil {
			return p
		}
		out[k.Value] = cv
	}
	return nil
}

var jsonNumber = regexp.MustCompile(`^-?(0|[1-9][0-9]*)(\.[0-9]+)?([eE][+-]?[0-9]+)?$`)

// scalar turns a YAML scalar into a JSON value; numbers stay exact as json.Number.
func scalar(n *yaml.Node, ptr string) (any, *Problem) {
	switch n.ShortTag() {
	case "!!null":
		return nil, nil
	case "!!bool":
		var b bool
		if err := n.Decode(&b); err != nil {
			return nil, problemAt(n, ptr, "not a valid true/false value")
		}
		return b, nil
	case "!!int":
		s := strings.ReplaceAll(n.Value, "_", "")
		neg := strings.HasPrefix(s, "-")
		s = strings.TrimLeft(s, "+-")
		if strings.HasPrefix(s, "0o") {
			s = "0" + s[2:]
		}
		var i big.Int
		if _, ok := i.SetString(s, 0); !ok {
			return nil, problemAt(n, ptr, fmt.Sprintf("%q is not a valid integer", n.Value))
		}
		if neg {
			i.Neg(&i)
		}
		return json.Number(i.String()), nil
	case "!!float":
		f, err := strconv.ParseFloat(strings.ReplaceAll(n.Value, "_", ""), 64)
		lower := strings.ToLower(n.Value)
		if strings.Contains(lower, "nan") || strings.Contains(lower, "inf") || math.IsInf(f, 0) || math.IsNaN(f) {
			return nil, problemAt(n, ptr, fmt.Sprintf("%s is not a finite number; write a plain number", n.Value))
		}
		if err != nil {
			return nil, problemAt(n, ptr, fmt.Sprintf("%q is not a valid number", n.Value))
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
