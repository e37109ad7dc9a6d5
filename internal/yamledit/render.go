package yamledit

import (
	"bytes"
	"encoding/json"
	"strings"

	"go.yaml.in/yaml/v3"
)

// Scalar is a plain scalar node of a Go value: a string (tagged as a string, so "5" stays
// text), or an integer, float or bool.
func Scalar(v any) *yaml.Node {
	var n yaml.Node
	if err := n.Encode(v); err != nil || n.Kind != yaml.ScalarNode {
		return &yaml.Node{Kind: yaml.ScalarNode, Tag: "!!str", Value: toString(v)}
	}
	n.Style = 0
	return &n
}

func toString(v any) string {
	b, _ := json.Marshal(v)
	return string(b)
}

// Parsed is the node of a piece of YAML text ("{scheme: none}", "- a\n- b").
func Parsed(text string) (*yaml.Node, error) {
	var doc yaml.Node
	if err := yaml.Unmarshal([]byte(text), &doc); err != nil {
		return nil, &Error{Msg: "the new value is not valid YAML: " + err.Error()}
	}
	if len(doc.Content) == 0 {
		return &yaml.Node{Kind: yaml.ScalarNode, Tag: "!!null", Value: "null"}, nil
	}
	return doc.Content[0], nil
}

// scalarText is a scalar as YAML writes it on one line, quoted when it must be.
func scalarText(n *yaml.Node) string {
	c := *n
	c.Anchor, c.Line, c.Column = "", 0, 0
	c.HeadComment, c.LineComment, c.FootComment = "", "", ""
	if c.Style&(yaml.LiteralStyle|yaml.FoldedStyle) != 0 || strings.ContainsAny(c.Value, "\n\r") {
		c.Style = yaml.DoubleQuotedStyle
	}
	var buf bytes.Buffer
	enc := yaml.NewEncoder(&buf)
	if err := enc.Encode(&c); err != nil {
		c.Style = yaml.DoubleQuotedStyle
		buf.Reset()
		_ = yaml.NewEncoder(&buf).Encode(&c)
	}
	return strings.TrimSuffix(buf.String(), "\n")
}

// inline renders n on one line: a scalar, or a flow collection.
func inline(n *yaml.Node) string {
	switch n.Kind {
	case yaml.MappingNode:
		parts := make([]string, 0, len(n.Content)/2)
		for i := 0; i+1 < len(n.Content); i += 2 {
			parts = append(parts, inline(n.Content[i])+": "+inline(n.Content[i+1]))
		}
		return "{" + strings.Join(parts, ", ") + "}"
	case yaml.SequenceNode:
		parts := make([]string, len(n.Content))
		for i, c := range n.Content {
			parts[i] = inline(c)
		}
		return "[" + strings.Join(parts, ", ") + "]"
	case yaml.AliasNode:
		if n.Alias != nil {
			return inline(n.Alias)
		}
	}
	return scalarText(n)
}

// blockLines renders a non-empty collection in block style, every line indented by ind
// spaces; nested blocks step by unit, sequences under a key by unit when seqIn.
func (d *Doc) blockLines(n *yaml.Node, ind int) []string {
	pad := strings.Repeat(" ", ind)
	var out []string
	switch n.Kind {
	case yaml.MappingNode:
		for i := 0; i+1 < len(n.Content); i += 2 {
			k, v := inline(n.Content[i]), n.Content[i+1]
			if !isBlock(v) {
				out = append(out, pad+k+": "+inline(v))
				continue
			}
			out = append(out, pad+k+":")
			step := d.unit
			if v.Kind == yaml.SequenceNode && !d.seqIn {
				step = 0
			}
			out = append(out, d.blockLines(v, ind+step)...)
		}
	case yaml.SequenceNode:
		for _, c := range n.Content {
			if !isBlock(c) {
				out = append(out, pad+"- "+inline(c))
				continue
			}
			sub := d.blockLines(c, ind+2)
			sub[0] = pad + "- " + sub[0][ind+2:]
			out = append(out, sub...)
		}
	}
	return out
}

// isBlock is a collection with entries (an empty one is written {} or []).
func isBlock(n *yaml.Node) bool {
	if n.Kind == yaml.AliasNode && n.Alias != nil {
		n = n.Alias
	}
	return (n.Kind == yaml.MappingNode || n.Kind == yaml.SequenceNode) && len(n.Content) > 0
}

// jsonText renders n as JSON: on one line, or with multi set one entry a line, nested
// entries indented ind spaces plus unit per level.
func (d *Doc) jsonText(n *yaml.Node, multi bool, ind int) (string, error) {
	if n.Kind == yaml.AliasNode && n.Alias != nil {
		n = n.Alias
	}
	switch n.Kind {
	case yaml.MappingNode, yaml.SequenceNode:
		open, close := "[", "]"
		step := 1
		if n.Kind == yaml.MappingNode {
			open, close, step = "{", "}", 2
		}
		if len(n.Content) == 0 {
			return open + close, nil
		}
		var parts []string
		for i := 0; i < len(n.Content); i += step {
			v, err := d.jsonText(n.Content[i+step-1], multi, ind+d.unit)
			if err != nil {
				return "", err
			}
			if step == 2 {
				k, err := jsonScalar(&yaml.Node{Kind: yaml.ScalarNode, Tag: "!!str", Value: n.Content[i].Value})
				if err != nil {
					return "", err
				}
				v = k + ": " + v
			}
			parts = append(parts, v)
		}
		if !multi {
			return open + strings.Join(parts, ", ") + close, nil
		}
		in := d.nl + strings.Repeat(" ", ind+d.unit)
		return open + in + strings.Join(parts, ","+in) + d.nl + strings.Repeat(" ", ind) + close, nil
	}
	return jsonScalar(n)
}

// jsonScalar is a scalar as JSON: its YAML value encoded, so 8Mi stays a string and 1e3
// a number.
func jsonScalar(n *yaml.Node) (string, error) {
	v, err := Value(n)
	if err != nil {
		return "", err
	}
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetEscapeHTML(false)
	if err := enc.Encode(v); err != nil {
		return "", &Error{Msg: "the new value has no JSON form: " + err.Error()}
	}
	return strings.TrimSuffix(buf.String(), "\n"), nil
}

// style reads the document's indentation step (the smallest step from a block
// mapping's key to a nested block's entries) and whether block sequences under a key
// are indented.
func (d *Doc) style() (unit int, seqIn bool) {
	unit, seqIn, found := 0, true, false
	walk(d.root, func(n *yaml.Node) {
		if n.Kind != yaml.MappingNode || n.Style&yaml.FlowStyle != 0 {
			return
		}
		for i := 0; i+1 < len(n.Content); i += 2 {
			k, v := n.Content[i], n.Content[i+1]
			if !isBlock(v) || v.Style&yaml.FlowStyle != 0 || v.Line == k.Line || v.Anchor != "" || v.Tag != "" && v.Style&yaml.TaggedStyle != 0 {
				continue
			}
			step := v.Column - k.Column
			if v.Kind == yaml.SequenceNode {
				if !found {
					seqIn, found = step > 0, true
				}
				continue
			}
			if step > 0 && (unit == 0 || step < unit) {
				unit = step
			}
		}
	})
	if d.json {
		unit = d.jsonUnit()
	}
	if unit == 0 {
		unit = 2
	}
	return unit, seqIn
}

// jsonUnit is the step from an object's line to its first member's, when the object
// spreads over lines.
func (d *Doc) jsonUnit() int {
	unit := 0
	walk(d.root, func(n *yaml.Node) {
		if unit > 0 || len(n.Content) == 0 || n.Kind == yaml.AliasNode {
			return
		}
		first := n.Content[0]
		if first.Line == n.Line {
			return
		}
		ls := lineStartOf(d.src, d.spans[n].start)
		fs := lineStartOf(d.src, d.spans[first].start)
		if step := indentAt(d.src, fs) - indentAt(d.src, ls); step > 0 {
			unit = step
		}
	})
	return unit
}
