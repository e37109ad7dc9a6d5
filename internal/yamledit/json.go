package yamledit

import (
	"encoding/json"
	"strconv"

	"go.yaml.in/yaml/v3"
)

// parseJSON reads one JSON value into the same node tree the YAML parser builds (flow
// collections, double-quoted strings, resolved tags), with every node's span. The
// manifest loader has already held the file to strict JSON; this reader only has to
// find the values, but it still refuses what it cannot read.
func parseJSON(src []byte) (*yaml.Node, map[*yaml.Node]span, error) {
	r := &jreader{src: src, spans: map[*yaml.Node]span{}, line: 1, lineAt: 0}
	r.blank()
	if r.i >= len(src) {
		return nil, nil, &Error{Msg: "the document is empty"}
	}
	n, err := r.value(0)
	if err != nil {
		return nil, nil, err
	}
	r.blank()
	if r.i < len(src) {
		return nil, nil, r.fail("text after the JSON value")
	}
	return n, r.spans, nil
}

type jreader struct {
	src    []byte
	i      int
	line   int
	lineAt int // offset of the current line's start
	spans  map[*yaml.Node]span
}

const maxJSONDepth = 1000

func (r *jreader) fail(msg string) error {
	return &Error{Line: r.line, Col: r.i - r.lineAt + 1, Msg: msg}
}

func (r *jreader) blank() {
	for r.i < len(r.src) {
		switch r.src[r.i] {
		case '\n':
			r.line++
			r.lineAt = r.i + 1
		case ' ', '\t', '\r':
		default:
			return
		}
		r.i++
	}
}

func (r *jreader) node(kind yaml.Kind, tag string, style yaml.Style) *yaml.Node {
	return &yaml.Node{Kind: kind, Tag: tag, Style: style, Line: r.line, Column: r.i - r.lineAt + 1}
}

func (r *jreader) value(depth int) (*yaml.Node, error) {
	if depth > maxJSONDepth {
		return nil, r.fail("nested too deeply")
	}
	if r.i >= len(r.src) {
		return nil, r.fail("a value is missing")
	}
	start := r.i
	var n *yaml.Node
	var err error
	switch c := r.src[r.i]; {
	case c == '{' || c == '[':
		n, err = r.collection(depth)
	case c == '"':
		n = r.node(yaml.ScalarNode, "!!str", yaml.DoubleQuotedStyle)
		n.Value, err = r.str()
	default:
		n, err = r.word()
	}
	if err != nil {
		return nil, err
	}
	r.spans[n] = span{start, r.i}
	return n, nil
}

func (r *jreader) collection(depth int) (*yaml.Node, error) {
	isMap := r.src[r.i] == '{'
	closer := byte(']')
	n := r.node(yaml.SequenceNode, "!!seq", yaml.FlowStyle)
	if isMap {
		closer = '}'
		n.Kind, n.Tag = yaml.MappingNode, "!!map"
	}
	r.i++
	r.blank()
	if r.i < len(r.src) && r.src[r.i] == closer {
		r.i++
		return n, nil
	}
	for {
		r.blank()
		if isMap {
			if r.i >= len(r.src) || r.src[r.i] != '"' {
				return nil, r.fail("a member name in double quotes is missing")
			}
			k, err := r.value(depth + 1)
			if err != nil {
				return nil, err
			}
			r.blank()
			if r.i >= len(r.src) || r.src[r.i] != ':' {
				return nil, r.fail("':' is missing after the member name")
			}
			r.i++
			r.blank()
			n.Content = append(n.Content, k)
		}
		v, err := r.value(depth + 1)
		if err != nil {
			return nil, err
		}
		n.Content = append(n.Content, v)
		r.blank()
		if r.i >= len(r.src) {
			return nil, r.fail("the collection is not closed")
		}
		switch r.src[r.i] {
		case ',':
			r.i++
		case closer:
			r.i++
			return n, nil
		default:
			return nil, r.fail("',' or the closing bracket is missing")
		}
	}
}

// str reads a string with encoding/json, which knows every escape.
func (r *jreader) str() (string, error) {
	j := r.i + 1
	for j < len(r.src) && r.src[j] != '"' {
		if r.src[j] == '\\' {
			j++
		}
		if j < len(r.src) && r.src[j] == '\n' {
			return "", r.fail("a line break inside a string")
		}
		j++
	}
	if j >= len(r.src) {
		return "", r.fail("the string is not closed")
	}
	var s string
	if err := json.Unmarshal(r.src[r.i:j+1], &s); err != nil {
		return "", r.fail("a string that is not valid JSON")
	}
	r.i = j + 1
	return s, nil
}

func (r *jreader) word() (*yaml.Node, error) {
	j := r.i
	for j < len(r.src) && !isJSONDelim(r.src[j]) {
		j++
	}
	w := string(r.src[r.i:j])
	n := r.node(yaml.ScalarNode, "", 0)
	switch {
	case w == "true" || w == "false":
		n.Tag = "!!bool"
	case w == "null":
		n.Tag = "!!null"
	case json.Valid([]byte(w)):
		n.Tag = "!!float"
		if _, err := strconv.ParseInt(w, 10, 64); err == nil {
			n.Tag = "!!int"
		}
	default:
		return nil, r.fail("not a JSON value")
	}
	n.Value = w
	r.i = j
	return n, nil
}

func isJSONDelim(c byte) bool {
	switch c {
	case ' ', '\t', '\r', '\n', ',', ']', '}', ':':
		return true
	}
	return false
}
