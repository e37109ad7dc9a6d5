package yamledit

import (
	"bytes"
	"errors"
	"io"
	"strings"
	"unicode/utf8"

	"go.yaml.in/yaml/v3"
)

// parseYAML reads one YAML document and finds every node's span. The parser gives each
// node's start (line and column in characters); the end is found from the text: a block
// collection ends with its last entry, a flow one at its closing bracket, a scalar by
// its style.
func parseYAML(src []byte) (*yaml.Node, map[*yaml.Node]span, error) {
	dec := yaml.NewDecoder(bytes.NewReader(src))
	var doc yaml.Node
	if err := dec.Decode(&doc); err != nil {
		if errors.Is(err, io.EOF) {
			return nil, nil, &Error{Msg: "the document is empty"}
		}
		return nil, nil, &Error{Msg: err.Error()}
	}
	var next yaml.Node
	if err := dec.Decode(&next); !errors.Is(err, io.EOF) {
		return nil, nil, &Error{Line: next.Line, Col: next.Column, Msg: "more than one YAML document; only one can be edited"}
	}
	if len(doc.Content) == 0 {
		return nil, nil, &Error{Msg: "the document is empty"}
	}
	s := &scanner{src: src, lines: lineStarts(src), spans: map[*yaml.Node]span{}}
	root := doc.Content[0]
	if _, err := s.node(root, false); err != nil {
		return nil, nil, err
	}
	return root, s.spans, nil
}

type scanner struct {
	src   []byte
	lines []int // byte offset of each line's start
	spans map[*yaml.Node]span
}

func lineStarts(src []byte) []int {
	out := []int{0}
	for i, c := range src {
		if c == '\n' {
			out = append(out, i+1)
		}
	}
	return out
}

// offset is the byte offset of a 1-based line and character column.
func (s *scanner) offset(line, col int) int {
	if line < 1 || line > len(s.lines) {
		return len(s.src)
	}
	p := s.lines[line-1]
	for i := 1; i < col && p < len(s.src) && s.src[p] != '\n'; i++ {
		_, w := utf8.DecodeRune(s.src[p:])
		p += w
	}
	return p
}

// node records n's span and its children's; flow says n sits inside a flow collection.
func (s *scanner) node(n *yaml.Node, flow bool) (span, error) {
	start := s.offset(n.Line, n.Column)
	body := s.skipProps(start)
	var end int
	var err error
	switch {
	case n.Kind == yaml.AliasNode:
		end = s.token(body+1, true)
	case n.Kind == yaml.ScalarNode:
		end, err = s.scalarEnd(n, body, flow)
	case n.Style&yaml.FlowStyle != 0:
		for _, c := range n.Content {
			if _, err := s.node(c, true); err != nil {
				return span{}, err
			}
		}
		end, err = s.flowEnd(body, n)
	default: // a block collection ends with its last entry
		end = body
		for _, c := range n.Content {
			sp, err := s.node(c, false)
			if err != nil {
				return span{}, err
			}
			end = max(end, sp.end)
		}
	}
	if err != nil {
		return span{}, err
	}
	sp := span{start, end}
	s.spans[n] = sp
	return sp, nil
}

// skipProps steps over an anchor and a tag (and the blanks after them) at p.
func (s *scanner) skipProps(p int) int {
	for p < len(s.src) && (s.src[p] == '&' || s.src[p] == '!') {
		p = s.token(p, true)
		for p < len(s.src) && (s.src[p] == ' ' || s.src[p] == '\t' || s.src[p] == '\r' || s.src[p] == '\n') {
			p++
		}
	}
	return p
}

// token is the end of the run of characters from p up to a blank (or, with flowStop, a
// flow indicator).
func (s *scanner) token(p int, flowStop bool) int {
	for p < len(s.src) {
		c := s.src[p]
		if c == ' ' || c == '\t' || c == '\r' || c == '\n' || (flowStop && (c == ',' || c == ']' || c == '}' || c == '[' || c == '{')) {
			break
		}
		p++
	}
	return p
}

func (s *scanner) scalarEnd(n *yaml.Node, p int, flow bool) (int, error) {
	switch {
	case n.Style&yaml.DoubleQuotedStyle != 0:
		for i := p + 1; i < len(s.src); i++ {
			switch s.src[i] {
			case '\\':
				i++
			case '"':
				return i + 1, nil
			}
		}
	case n.Style&yaml.SingleQuotedStyle != 0:
		for i := p + 1; i < len(s.src); i++ {
			if s.src[i] == '\'' {
				if i+1 < len(s.src) && s.src[i+1] == '\'' {
					i++
					continue
				}
				return i + 1, nil
			}
		}
	case n.Style&(yaml.LiteralStyle|yaml.FoldedStyle) != 0:
		return s.blockScalarEnd(p), nil
	default:
		return s.plainEnd(n, p, flow)
	}
	return 0, errAt(n, "cannot find the end of this quoted value")
}

// blockScalarEnd is the end of the last non-empty line of a literal or folded scalar
// whose header is at p: its lines are those indented deeper than the header's line.
func (s *scanner) blockScalarEnd(p int) int {
	lineEnd := func(i int) int {
		if j := bytes.IndexByte(s.src[i:], '\n'); j >= 0 {
			return i + j
		}
		return len(s.src)
	}
	hdr := lineStartOf(s.src, p)
	parent := indentAt(s.src, hdr)
	end := trimCR(s.src, lineEnd(p))
	for i := lineEnd(p) + 1; i < len(s.src); {
		e := lineEnd(i)
		text := strings.TrimRight(string(s.src[i:e]), " \t\r")
		if text != "" {
			if indentAt(s.src, i) <= parent {
				break
			}
			end = i + len(text)
		}
		i = e + 1
	}
	return end
}

func trimCR(src []byte, e int) int {
	if e > 0 && src[e-1] == '\r' {
		return e - 1
	}
	return e
}

func lineStartOf(src []byte, p int) int {
	return bytes.LastIndexByte(src[:p], '\n') + 1
}

func indentAt(src []byte, lineStart int) int {
	i := lineStart
	for i < len(src) && src[i] == ' ' {
		i++
	}
	return i - lineStart
}

// plainEnd is the end of a plain scalar: the line's text up to a comment (or, in flow,
// an indicator), followed onto further lines while the folded text is still short of
// the value.
func (s *scanner) plainEnd(n *yaml.Node, p int, flow bool) (int, error) {
	if n.Tag == "!!null" && n.Value == "" {
		return p, nil // nothing written: the span is empty
	}
	var folded strings.Builder
	for i := p; ; {
		end := s.plainLine(i, flow)
		part := strings.TrimSpace(string(s.src[i:end]))
		if folded.Len() > 0 && part != "" {
			folded.WriteByte(' ')
		}
		folded.WriteString(part)
		if folded.Len() >= len(n.Value) || foldedMatches(folded.String(), n.Value) {
			return end, nil
		}
		// Continue on the next line that is not blank.
		nl := bytes.IndexByte(s.src[end:], '\n')
		if nl < 0 {
			break
		}
		i = end + nl + 1
		for i < len(s.src) && (s.src[i] == ' ' || s.src[i] == '\t') {
			i++
		}
		if i >= len(s.src) {
			break
		}
	}
	return 0, errAt(n, "cannot find the end of this value")
}

// foldedMatches compares a plain scalar's folded lines with its value, which the parser
// folded the same way (empty lines become line breaks; they are rare in manifests).
func foldedMatches(got, want string) bool {
	return got == want || strings.ReplaceAll(want, "\n", " ") == got
}

// plainLine is where a plain scalar's text on the line from p ends, trailing blanks cut.
func (s *scanner) plainLine(p int, flow bool) int {
	i := p
	for i < len(s.src) {
		c := s.src[i]
		if c == '\n' || c == '\r' {
			break
		}
		if c == '#' && i > p && (s.src[i-1] == ' ' || s.src[i-1] == '\t') {
			break
		}
		if flow && (c == ',' || c == ']' || c == '}') {
			break
		}
		if c == ':' && i+1 <= len(s.src) && (i+1 == len(s.src) || isBlankOrFlow(s.src[i+1], flow)) {
			break
		}
		i++
	}
	for i > p && (s.src[i-1] == ' ' || s.src[i-1] == '\t') {
		i--
	}
	return i
}

func isBlankOrFlow(c byte, flow bool) bool {
	return c == ' ' || c == '\t' || c == '\n' || c == '\r' || (flow && (c == ',' || c == ']' || c == '}'))
}

// flowEnd is the offset after the bracket closing the flow collection opened at p: after
// its last entry, past blanks, commas and comments.
func (s *scanner) flowEnd(p int, n *yaml.Node) (int, error) {
	i := p + 1
	if len(n.Content) > 0 {
		i = s.spans[n.Content[len(n.Content)-1]].end
	}
	for i < len(s.src) {
		switch c := s.src[i]; c {
		case ']', '}':
			return i + 1, nil
		case '#':
			for i < len(s.src) && s.src[i] != '\n' {
				i++
			}
		default:
			i++
		}
	}
	return 0, errAt(n, "cannot find the bracket closing this collection")
}
