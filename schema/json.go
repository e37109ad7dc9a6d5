package schema

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"strings"
	"unicode/utf8"

	"go.yaml.in/yaml/v3"
)

// parseJSON reads one strict JSON value (RFC 8259) into the node tree manifests are read
// into, so duplicate keys, the limits, validation and positions work as for manifests.
// Positions count characters, with CR LF, a lone CR and LF each one line break, as the
// YAML parser counts them. A UTF-8 byte-order mark is skipped, as the YAML parser does.
func parseJSON(data []byte, lim Limits, start string) (*tree, []Problem) {
	fail := func(p Problem) (*tree, []Problem) { return nil, []Problem{p} }
	if lim.MaxFileBytes > 0 && len(data) > lim.MaxFileBytes {
		return fail(Problem{Pos: Pos{1, 1}, Message: fmt.Sprintf("file is %d bytes, above the limit of %d; raise --max-file-size", len(data), lim.MaxFileBytes)})
	}
	if p := encodingProblem(data); p != nil {
		p.Message = strings.Replace(p.Message, "a manifest is YAML or JSON", "it must be JSON", 1)
		return fail(*p)
	}
	data = bytes.TrimPrefix(data, []byte{0xEF, 0xBB, 0xBF})
	c := &cursor{data: data, line: 1, col: 1}
	if p := conflictMarker(data, c); p != nil {
		return fail(*p)
	}
	var root *yaml.Node
	var p *Problem
	if json.Valid(data) {
		root, p = (&validJSON{data: data, at: c, lim: lim}).value(0)
	} else {
		root, p = tokenTree(data, c, lim)
	}
	if p != nil {
		if p.Message == "" { // the input ended before any value
			p.Pos, p.Message = Pos{1, 1}, "file is empty; "+start
		}
		return fail(*p)
	}
	t := &tree{doc: root, lim: lim}
	v, p := t.convert(root, 0)
	if p != nil {
		return fail(*p)
	}
	t.root = v
	return t, nil
}

// tokenTree builds the tree from the decoder's tokens, which word and position syntax
// errors well but cost a microsecond each; only input json.Valid refuses takes this way.
func tokenTree(data []byte, c *cursor, lim Limits) (*yaml.Node, *Problem) {
	b := &jsonBuilder{dec: json.NewDecoder(bytes.NewReader(data)), data: data, at: c, lim: lim}
	b.dec.UseNumber()
	root, p := b.value(0)
	if p != nil {
		return nil, p
	}
	if rest := len(data) - len(bytes.TrimLeft(data[b.dec.InputOffset():], " \t\r\n")); rest < len(data) {
		return nil, &Problem{Pos: c.pos(rest), Message: "text after the end of the JSON object; the file must hold exactly one JSON object"}
	}
	return root, nil
}

// jsonBuilder turns the decoder's tokens into YAML nodes positioned at each token's start.
type jsonBuilder struct {
	dec   *json.Decoder
	data  []byte
	at    *cursor
	lim   Limits
	nodes int
}

// value reads one JSON value; a problem with an empty message means the input ended first.
func (b *jsonBuilder) value(depth int) (*yaml.Node, *Problem) {
	startOff := skipSpace(b.data, int(b.dec.InputOffset()))
	tok, err := b.dec.Token()
	if err != nil {
		return nil, b.tokenProblem(err, startOff)
	}
	pos := b.at.pos(startOff)
	if b.nodes++; b.lim.MaxNodes > 0 && b.nodes > b.lim.MaxNodes {
		return nil, &Problem{Pos: pos, Message: fmt.Sprintf("the file holds more than %s values; split it", group(int64(b.lim.MaxNodes)))}
	}
	n := &yaml.Node{Line: pos.Line, Column: pos.Col, Kind: yaml.ScalarNode}
	switch v := tok.(type) {
	case json.Delim:
		if b.lim.MaxDepth > 0 && depth >= b.lim.MaxDepth {
			return nil, &Problem{Pos: pos, Message: fmt.Sprintf("nesting deeper than %d levels", b.lim.MaxDepth)}
		}
		if v == '{' {
			return b.object(n, depth)
		}
		return b.array(n, depth)
	case string:
		n.Tag, n.Value, n.Style = "!!str", v, yaml.DoubleQuotedStyle
	case json.Number:
		n.Tag, n.Value = "!!int", string(v)
		if strings.ContainsAny(string(v), ".eE") {
			n.Tag = "!!float"
		}
	case bool:
		n.Tag, n.Value = "!!bool", fmt.Sprint(v)
	case nil:
		n.Tag, n.Value = "!!null", "null"
	}
	return n, nil
}

func (b *jsonBuilder) object(n *yaml.Node, depth int) (*yaml.Node, *Problem) {
	n.Kind, n.Tag = yaml.MappingNode, "!!map"
	for b.dec.More() {
		k, p := b.value(depth + 1) // a key is a string token; the decoder refuses anything else
		if p != nil {
			return nil, b.ended(p)
		}
		v, p := b.value(depth + 1)
		if p != nil {
			return nil, b.ended(p)
		}
		n.Content = append(n.Content, k, v)
	}
	return n, b.closing()
}

func (b *jsonBuilder) array(n *yaml.Node, depth int) (*yaml.Node, *Problem) {
	n.Kind, n.Tag = yaml.SequenceNode, "!!seq"
	for b.dec.More() {
		v, p := b.value(depth + 1)
		if p != nil {
			return nil, b.ended(p)
		}
		n.Content = append(n.Content, v)
	}
	return n, b.closing()
}

// closing reads the closing bracket More stopped at.
func (b *jsonBuilder) closing() *Problem {
	off := skipSpace(b.data, int(b.dec.InputOffset()))
	if _, err := b.dec.Token(); err != nil {
		return b.ended(b.tokenProblem(err, off))
	}
	return nil
}

// ended words an end of input inside a value: the file was cut off.
func (b *jsonBuilder) ended(p *Problem) *Problem {
	if p.Message == "" {
		p.Message = "the file ends inside a JSON value; it is cut off"
	}
	return p
}

// tokenProblem positions a decoder error: a syntax error at the byte it is about, the end
// of the input at the end of the file.
func (b *jsonBuilder) tokenProblem(err error, off int) *Problem {
	var se *json.SyntaxError
	switch {
	case errors.As(err, &se):
		// Offset counts the bytes read, the offending one included.
		bad := max(0, min(int(se.Offset)-1, len(b.data)))
		if bad < off && off <= len(b.data) {
			bad = off
		}
		return &Problem{Pos: b.at.pos(bad), Message: "not valid JSON: " + se.Error()}
	case errors.Is(err, io.EOF), errors.Is(err, io.ErrUnexpectedEOF):
		return &Problem{Pos: b.at.pos(len(b.data))}
	}
	return &Problem{Pos: b.at.pos(off), Message: "not valid JSON: " + err.Error()}
}

// validJSON builds the tree of input json.Valid has passed, so it only has to find
// where each value starts and ends.
type validJSON struct {
	data  []byte
	off   int
	at    *cursor
	lim   Limits
	nodes int
}

func (v *validJSON) value(depth int) (*yaml.Node, *Problem) {
	v.off = skipSpace(v.data, v.off)
	pos := v.at.pos(v.off)
	if v.nodes++; v.lim.MaxNodes > 0 && v.nodes > v.lim.MaxNodes {
		return nil, &Problem{Pos: pos, Message: fmt.Sprintf("the file holds more than %s values; split it", group(int64(v.lim.MaxNodes)))}
	}
	n := &yaml.Node{Line: pos.Line, Column: pos.Col, Kind: yaml.ScalarNode}
	switch v.data[v.off] {
	case '{', '[':
		if v.lim.MaxDepth > 0 && depth >= v.lim.MaxDepth {
			return nil, &Problem{Pos: pos, Message: fmt.Sprintf("nesting deeper than %d levels", v.lim.MaxDepth)}
		}
		return v.container(n, depth)
	case '"':
		n.Tag, n.Value, n.Style = "!!str", v.str(), yaml.DoubleQuotedStyle
	case 't':
		n.Tag, n.Value = "!!bool", "true"
		v.off += len("true")
	case 'f':
		n.Tag, n.Value = "!!bool", "false"
		v.off += len("false")
	case 'n':
		n.Tag, n.Value = "!!null", "null"
		v.off += len("null")
	default:
		end := v.off
		for end < len(v.data) && strings.IndexByte("+-.eE0123456789", v.data[end]) >= 0 {
			end++
		}
		n.Tag, n.Value = "!!int", string(v.data[v.off:end])
		if strings.ContainsAny(n.Value, ".eE") {
			n.Tag = "!!float"
		}
		v.off = end
	}
	return n, nil
}

// container reads an object or an array; skipSpace steps over the commas and colons.
func (v *validJSON) container(n *yaml.Node, depth int) (*yaml.Node, *Problem) {
	n.Kind, n.Tag = yaml.SequenceNode, "!!seq"
	closing := byte(']')
	if v.data[v.off] == '{' {
		n.Kind, n.Tag, closing = yaml.MappingNode, "!!map", '}'
	}
	v.off++
	for {
		if v.off = skipSpace(v.data, v.off); v.data[v.off] == closing {
			v.off++
			return n, nil
		}
		e, p := v.value(depth + 1)
		if p != nil {
			return nil, p
		}
		n.Content = append(n.Content, e)
	}
}

// str reads the string at off; only one with escapes goes through the JSON decoder.
func (v *validJSON) str() string {
	start, escaped := v.off, false
	i := start + 1
	for ; v.data[i] != '"'; i++ {
		if v.data[i] == '\\' {
			escaped = true
			i++
		}
	}
	v.off = i + 1
	if !escaped {
		return string(v.data[start+1 : i])
	}
	var s string
	_ = json.Unmarshal(v.data[start:v.off], &s) // json.Valid passed it
	return s
}

// skipSpace returns the offset of the first byte at or after off that is not JSON white
// space, a comma or a colon: where the decoder's next token starts.
func skipSpace(data []byte, off int) int {
	for off < len(data) {
		switch data[off] {
		case ' ', '\t', '\n', '\r', ',', ':':
			off++
		default:
			return off
		}
	}
	return off
}

// cursor turns byte offsets into positions. Offsets are asked for in increasing order,
// so the walk is linear in the file; an earlier offset starts again from the top.
type cursor struct {
	data      []byte
	off       int
	line, col int
}

func (c *cursor) pos(off int) Pos {
	if off < c.off {
		c.off, c.line, c.col = 0, 1, 1
	}
	off = min(off, len(c.data))
	for c.off < off {
		switch ch := c.data[c.off]; {
		case ch == '\r':
			c.line, c.col = c.line+1, 1
			c.off++
		case ch == '\n':
			if c.off == 0 || c.data[c.off-1] != '\r' { // CR LF is one break
				c.line, c.col = c.line+1, 1
			}
			c.off++
		default:
			_, size := utf8.DecodeRune(c.data[c.off:])
			c.col++
			c.off += size
		}
	}
	return Pos{Line: c.line, Col: c.col}
}

// conflictMarker finds a line a merge left behind (<<<<<<<, =======, >>>>>>>): the JSON
// around it would be refused anyway, but with a message that does not say why.
func conflictMarker(data []byte, c *cursor) *Problem {
	for off := 0; off < len(data); {
		line := data[off:]
		if i := bytes.IndexAny(line, "\r\n"); i >= 0 {
			line = line[:i]
		}
		for _, m := range []string{"<<<<<<<", "=======", ">>>>>>>"} {
			if bytes.HasPrefix(line, []byte(m)) {
				return &Problem{Pos: c.pos(off), Message: "merge conflict marker " + m + "; resolve the conflict, or write the file again"}
			}
		}
		off += len(line) + 1
	}
	return nil
}
