package schema

import (
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"math/big"
	"regexp"
	"strconv"
	"strings"
	"unicode/utf8"

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

// tree is a YAML document as the schema and the decoder read it: the node tree, checked
// once by the conversion (limits, duplicate keys, tags, number forms), read through
// views (view.go) that see it as the JSON-like values the conversion defines; the values
// themselves (map[string]any, []any, string, bool, nil, json.Number) are built only when
// asked for: for the JSON Schema library, which reads no other form, and for the project
// config and the baseline, which are small. A manifest is read from its nodes alone, so
// a large one is never held twice. Positions are looked up when asked for rather than
// recorded for every node: a manifest with 100,000 listed partitions would otherwise
// build as many pointer strings.
type tree struct {
	root       any  // the values, once built
	built      bool // root holds the values
	doc        *yaml.Node
	path       []step // where the conversion is, for error messages
	nodes      int
	inAlias    int // how many aliases deep the conversion is
	aliasNodes int
	lim        Limits
	// problems are what the conversion refused without stopping (a duplicate key, a
	// number in a form the schema does not allow, an unknown tag); the rest of the file
	// is still validated and decoded, so every problem is reported in one run.
	problems []Problem
	// refused are the pointers of values the conversion refused: validation and decoding
	// say nothing more about them.
	refused map[string]bool
	// reported are the nodes a problem was recorded for: a node reached again through an
	// alias is refused at every pointer but reported once, where it is written.
	reported map[*yaml.Node]bool
}

// refuse records a problem the conversion goes on after.
func (t *tree) refuse(n *yaml.Node, ptr, msg string, value bool) {
	if t.refused == nil {
		t.refused, t.reported = map[string]bool{}, map[*yaml.Node]bool{}
	}
	if value {
		t.refused[ptr] = true
	}
	if !t.reported[n] {
		t.reported[n] = true
		t.problems = append(t.problems, *problemAt(n, ptr, msg))
	}
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

// values builds the JSON-like values of a tree checked without them. The conversion
// runs again over the same nodes: it cannot fail where it passed, and every problem it
// finds was recorded the first time.
func (t *tree) values() any {
	if !t.built {
		t.built, t.nodes, t.aliasNodes = true, 0, 0
		t.root, _ = t.convert(t.doc, 0)
	}
	return t.root
}

// convert checks the node n and everything below it and, once the tree is built, returns
// its value.
func (t *tree) convert(n *yaml.Node, depth int) (any, *Problem) {
	if p := t.count(n); p != nil {
		return nil, p
	}
	if depth > t.lim.MaxDepth {
		return nil, problemAt(n, "", fmt.Sprintf("nesting deeper than %d levels; no scangate file needs more than a few", t.lim.MaxDepth))
	}
	if n.Kind == yaml.AliasNode {
		// The alias's target is recorded at this pointer, but errors point at the alias.
		t.inAlias++
		v, p := t.convert(n.Alias, depth+1)
		t.inAlias--
		return v, p
	}
	if msg := tagProblem(n); msg != "" {
		t.refuse(n, t.here(), msg, true)
		if n.Kind == yaml.ScalarNode {
			return n.Value, nil
		}
	}
	switch n.Kind {
	case yaml.MappingNode:
		return t.mapping(n, depth)
	case yaml.SequenceNode:
		var out []any
		if t.built {
			out = make([]any, 0, len(n.Content))
		}
		for i, e := range n.Content {
			t.path = append(t.path, step{index: i})
			cv, p := t.convert(e, depth+1)
			t.path = t.path[:len(t.path)-1]
			if p != nil {
				return nil, p
			}
			if t.built {
				out = append(out, cv)
			}
		}
		if !t.built {
			return nil, nil
		}
		return out, nil
	case yaml.ScalarNode:
		if !t.built {
			if msg := scalarProblem(n); msg != "" {
				t.refuse(n, t.here(), msg, true)
			}
			return nil, nil
		}
		v, msg := scalar(n)
		if msg != "" {
			t.refuse(n, t.here(), msg, true)
		}
		return v, nil
	}
	return nil, problemAt(n, t.here(), "unsupported YAML node")
}

// maxKeyLength is YAML 1.2's bound on an implicit key, 1024 characters (the note on its
// implicit-key productions; from memory), kept for JSON and explicit keys too: no
// manifest key comes near it, and a longer one would be quoted whole in messages.
const maxKeyLength = 1024

// filled are the keys a mapping has set so far: the map itself once the tree is built,
// else just the names.
type filled struct {
	out  map[string]any
	keys keySet
}

func (f *filled) has(k string) bool {
	if f.out != nil {
		_, ok := f.out[k]
		return ok
	}
	return f.keys.has(k)
}

func (f *filled) put(k string, v any) {
	if f.out != nil {
		f.out[k] = v
	} else {
		f.keys.add(k)
	}
}

func (t *tree) mapping(n *yaml.Node, depth int) (any, *Problem) {
	out := &filled{}
	if t.built {
		out.out = make(map[string]any, len(n.Content)/2)
	}
	var merges []*yaml.Node
	var firstMerge *yaml.Node
	for i := 0; i+1 < len(n.Content); i += 2 {
		k, v := n.Content[i], n.Content[i+1]
		if k.Kind == yaml.ScalarNode && k.Tag == "!!merge" {
			if firstMerge != nil {
				t.refuse(k, t.here(), fmt.Sprintf("a second merge key (<<) in one mapping; the first is at line %d. Merge several mappings with one key: <<: [*first, *second]", firstMerge.Line), false)
				continue
			}
			firstMerge = k
			merges = append(merges, v)
			continue
		}
		if k.Kind != yaml.ScalarNode {
			t.refuse(k, t.here(), "a key must be a plain name, not a mapping or a sequence", false)
			continue
		}
		if msg := tagProblem(k); msg != "" {
			t.refuse(k, t.here(), msg, false)
			continue
		}
		if l := utf8.RuneCountInString(k.Value); l > maxKeyLength {
			t.refuse(k, t.here(), fmt.Sprintf("key is %s characters long, above the limit of %s; shorten it (manifest keys are short names)", group(int64(l)), group(maxKeyLength)), false)
			continue
		}
		if out.has(k.Value) {
			t.refuse(k, t.here(), fmt.Sprintf("key %s is already defined at line %d; remove one of them", quoteShort(k.Value), firstKey(n, k.Value).Line), false)
			continue
		}
		t.path = append(t.path, step{key: k.Value, isKey: true})
		cv, p := t.convert(v, depth+1)
		t.path = t.path[:len(t.path)-1]
		if p != nil {
			return nil, p
		}
		out.put(k.Value, cv)
	}
	// Merge keys (<<) fill in only the keys the mapping does not set itself.
	for _, m := range merges {
		if p := t.merge(out, m, depth); p != nil {
			return nil, p
		}
	}
	if out.out == nil {
		return nil, nil
	}
	return out.out, nil
}

// explicitTags are the tags a manifest may write: YAML's core types. A plain date
// resolves to !!timestamp and stays a string; !!merge is what << resolves to.
var explicitTags = map[string]bool{
	"!!str": true, "!!int": true, "!!float": true, "!!bool": true, "!!null": true,
	"!!map": true, "!!seq": true, "!!timestamp": true,
}

// tagProblem refuses a tag outside the core types: !foo or !!binary would be read
// as a plain string, not as what the writer meant.
func tagProblem(n *yaml.Node) string {
	if n.Style&yaml.TaggedStyle == 0 || explicitTags[n.Tag] {
		return ""
	}
	return fmt.Sprintf("unknown tag %s; remove it (a manifest uses plain values; the tags allowed are !!str, !!int, !!float, !!bool, !!null, !!map and !!seq)", quoteShort(n.Tag))
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
func (t *tree) merge(out *filled, m *yaml.Node, depth int) *Problem {
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
		t.refuse(m, t.here(), "a merge key (<<) must refer to a mapping or a list of mappings", false)
		return nil
	}
	// A mapping written in place under << is checked here as a mapping of its own is.
	own := map[string]bool{}
	var firstMerge *yaml.Node
	for i := 0; i+1 < len(target.Content); i += 2 {
		k, v := target.Content[i], target.Content[i+1]
		if k.Kind == yaml.ScalarNode && k.Tag == "!!merge" {
			if firstMerge != nil {
				t.refuse(k, t.here(), fmt.Sprintf("a second merge key (<<) in one mapping; the first is at line %d. Merge several mappings with one key: <<: [*first, *second]", firstMerge.Line), false)
				continue
			}
			firstMerge = k
			if p := t.merge(out, v, depth+1); p != nil {
				return p
			}
			continue
		}
		if k.Kind != yaml.ScalarNode {
			continue
		}
		if own[k.Value] {
			t.refuse(k, t.here(), fmt.Sprintf("key %s is already defined at line %d; remove one of them", quoteShort(k.Value), firstKey(target, k.Value).Line), false)
			continue
		}
		own[k.Value] = true
		if out.has(k.Value) {
			continue
		}
		t.path = append(t.path, step{key: k.Value, isKey: true})
		cv, p := t.convert(v, depth+1)
		t.path = t.path[:len(t.path)-1]
		if p != nil {
			return p
		}
		out.put(k.Value, cv)
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

// scalar turns a YAML scalar into a JSON value; numbers stay exact as json.Number. A
// value it refuses comes back as written, with the reason.
func scalar(n *yaml.Node) (any, string) {
	sc, msg := scalarOf(n)
	return sc.value(), msg
}

// scal is a scalar's JSON value unboxed: its type (one of tNull, tBoolean, tNumber,
// tString) and its text or truth. The quick check reads node scalars through it, so
// checking a value allocates nothing.
type scal struct {
	kind typeSet
	text string
	b    bool
}

func (s scal) value() any {
	switch s.kind {
	case tNull:
		return nil
	case tBoolean:
		return s.b
	case tNumber:
		return json.Number(s.text)
	}
	return s.text
}

// scalarOf is scalar unboxed.
func scalarOf(n *yaml.Node) (scal, string) {
	if msg := scalarProblem(n); msg != "" {
		return scal{kind: tString, text: n.Value}, msg
	}
	switch n.ShortTag() {
	case "!!null":
		return scal{kind: tNull}, ""
	case "!!bool":
		var b bool
		n.Decode(&b) // scalarProblem decoded it already
		return scal{kind: tBoolean, b: b}, ""
	case "!!int":
		if canonicalInt(n.Value) {
			return scal{kind: tNumber, text: n.Value}, "" // already as big.Int would print it
		}
		var i big.Int
		i.SetString(n.Value, 10)
		return scal{kind: tNumber, text: i.String()}, ""
	case "!!float":
		// Kept as written, so messages quote the user.
		return scal{kind: tNumber, text: n.Value}, ""
	default:
		// Strings and plain dates (!!timestamp) are kept as written.
		return scal{kind: tString, text: n.Value}, ""
	}
}

// scalarProblem is why scalar refuses n, "" when it takes it; the conversion's check,
// which needs no value.
func scalarProblem(n *yaml.Node) string {
	switch n.ShortTag() {
	case "!!bool":
		var b bool
		if err := n.Decode(&b); err != nil {
			return "not a valid true/false value"
		}
	case "!!int":
		if canonicalInt(n.Value) || jsonInt.MatchString(n.Value) {
			return ""
		}
		if msg := numberFormProblem(n.Value); msg != "" {
			return msg
		}
		return fmt.Sprintf("%s is not a valid integer", quoteShort(n.Value))
	case "!!float":
		if !jsonNumber.MatchString(n.Value) {
			if msg := numberFormProblem(n.Value); msg != "" {
				return msg
			}
			return fmt.Sprintf("%s is not a valid number", quoteShort(n.Value))
		}
		if f, err := strconv.ParseFloat(n.Value, 64); err != nil && !errors.Is(err, strconv.ErrRange) || math.IsInf(f, 0) {
			return fmt.Sprintf("%s is not a finite number; write a plain number", quoteShort(n.Value))
		}
	}
	return ""
}
