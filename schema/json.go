package schema

import (
	"fmt"
	"regexp"
	"strings"
	"unicode/utf8"

	"go.yaml.in/yaml/v3"
)

// A .json file is read as strict JSON (RFC 8259), not as YAML: the YAML parser would
// accept trailing commas and comments, and refuses valid JSON (the \/ escape, surrogate
// pairs, keys over 1024 characters). The reader builds the node tree the YAML parser
// builds for the same text, with the same lines and columns, so conversion, limits,
// validation and messages are shared.

// jsonMaxDepth bounds the reader's recursion whatever the limits say.
const jsonMaxDepth = 10_000

type jsonReader struct {
	src   []byte
	i     int
	line  int
	col   int
	depth int
	nodes int
	lim   Limits
}

// jsonFail is a reader error: a positioned problem that ends the read. fail panics with
// it and parseJSON recovers it, so the recursive reader needs no error returns; any
// other panic is passed on.
type jsonFail struct{ p Problem }

// parseJSON reads data (already known to be UTF-8 without NUL bytes) into a node tree.
func parseJSON(data []byte, lim Limits, start string) (*yaml.Node, *Problem) {
	r := &jsonReader{src: data, line: 1, col: 1, lim: lim}
	if len(data) >= 3 && string(data[:3]) == "\uFEFF" {
		r.i = 3 // a byte order mark moves no position, as in YAML
	}
	var out *yaml.Node
	err := r.catch(func() {
		r.space()
		if r.i == len(r.src) {
			r.fail(Pos{1, 1}, "file is empty; "+start)
		}
		out = r.value()
		r.space()
		if r.i < len(r.src) {
			r.fail(r.pos(), "invalid JSON: the file holds more than one value; remove what follows the first: a file holds one document")
		}
	})
	if err != nil {
		return nil, err
	}
	return out, nil
}

func (r *jsonReader) catch(f func()) (p *Problem) {
	defer func() {
		if e := recover(); e != nil {
			jf, ok := e.(jsonFail)
			if !ok {
				panic(e)
			}
			p = &jf.p
		}
	}()
	f()
	return nil
}

func (r *jsonReader) fail(at Pos, msg string) {
	panic(jsonFail{Problem{Pos: at, Message: msg}})
}

func (r *jsonReader) pos() Pos { return Pos{r.line, r.col} }

// next moves past one character, counting lines as YAML does (CR LF, CR, LF).
func (r *jsonReader) next() {
	c := r.src[r.i]
	switch {
	case c == '\n' || (c == '\r' && (r.i+1 == len(r.src) || r.src[r.i+1] != '\n')):
		r.i++
		r.line, r.col = r.line+1, 1
	case c < utf8.RuneSelf:
		r.i++
		r.col++
	default:
		_, size := utf8.DecodeRune(r.src[r.i:])
		r.i += size
		r.col++
	}
}

// space skips JSON whitespace and refuses comments, which JSON does not have.
func (r *jsonReader) space() {
	for r.i < len(r.src) {
		switch r.src[r.i] {
		case ' ', '\t', '\n', '\r':
			r.next()
		case '/', '#':
			r.fail(r.pos(), "invalid JSON: comments are not allowed in JSON; remove the comment, or save the manifest as .yaml and write it as a # comment")
		default:
			return
		}
	}
}

func (r *jsonReader) peek() byte {
	if r.i < len(r.src) {
		return r.src[r.i]
	}
	return 0
}

// value reads one value; nodes and depth are charged as the conversion charges them, so
// a file too deep or too large stops at the node the YAML path would name.
func (r *jsonReader) value() *yaml.Node {
	at := r.pos()
	r.nodes++
	if r.lim.MaxNodes > 0 && r.nodes > r.lim.MaxNodes {
		r.fail(at, fmt.Sprintf("the document holds or expands to more than %s nodes (aliases included); split it or expand fewer aliases", group(int64(r.lim.MaxNodes))))
	}
	if r.depth > r.lim.MaxDepth || r.depth > jsonMaxDepth {
		r.fail(at, fmt.Sprintf("nesting deeper than %d levels; no scangate file needs more than a few", min(r.lim.MaxDepth, jsonMaxDepth)))
	}
	switch c := r.peek(); {
	case c == 0:
		r.fail(at, "invalid JSON: the file ends where a value is expected; complete the value or remove the comma before it")
	case c == '{':
		return r.object(at)
	case c == '[':
		return r.array(at)
	case c == '"':
		s := r.str()
		return &yaml.Node{Kind: yaml.ScalarNode, Tag: "!!str", Style: yaml.DoubleQuotedStyle, Value: s, Line: at.Line, Column: at.Col}
	}
	return r.word(at)
}

func (r *jsonReader) object(at Pos) *yaml.Node {
	n := &yaml.Node{Kind: yaml.MappingNode, Tag: "!!map", Style: yaml.FlowStyle, Line: at.Line, Column: at.Col}
	r.next()
	r.depth++
	defer func() { r.depth-- }()
	r.space()
	if r.peek() == '}' {
		r.next()
		return n
	}
	for {
		if r.peek() != '"' {
			r.fail(r.pos(), "invalid JSON: expected a key in double quotes; write \"key\": value")
		}
		kp := r.pos()
		k := r.str()
		n.Content = append(n.Content, &yaml.Node{Kind: yaml.ScalarNode, Tag: "!!str", Style: yaml.DoubleQuotedStyle, Value: k, Line: kp.Line, Column: kp.Col})
		r.space()
		if r.peek() != ':' {
			r.fail(r.pos(), "invalid JSON: expected ':' after the key; write \"key\": value")
		}
		r.next()
		r.space()
		n.Content = append(n.Content, r.value())
		if !r.more('}') {
			return n
		}
	}
}

func (r *jsonReader) array(at Pos) *yaml.Node {
	n := &yaml.Node{Kind: yaml.SequenceNode, Tag: "!!seq", Style: yaml.FlowStyle, Line: at.Line, Column: at.Col}
	r.next()
	r.depth++
	defer func() { r.depth-- }()
	r.space()
	if r.peek() == ']' {
		r.next()
		return n
	}
	for {
		n.Content = append(n.Content, r.value())
		if !r.more(']') {
			return n
		}
	}
}

// more reads what follows a member: a comma (true) or the closing bracket (false).
func (r *jsonReader) more(closer byte) bool {
	r.space()
	switch r.peek() {
	case closer:
		r.next()
		return false
	case ',':
		comma := r.pos()
		r.next()
		r.space()
		if r.peek() == closer {
			r.fail(comma, fmt.Sprintf("invalid JSON: a comma before '%c'; JSON allows no comma after the last item, remove it", closer))
		}
		return true
	case 0:
		r.fail(r.pos(), fmt.Sprintf("invalid JSON: the file ends before the closing '%c'; add it", closer))
	}
	r.fail(r.pos(), fmt.Sprintf("invalid JSON: expected ',' or '%c' here; look for a missing comma or closing bracket", closer))
	return false
}

var jsonEscapes = map[byte]byte{'"': '"', '\\': '\\', '/': '/', 'b': '\b', 'f': '\f', 'n': '\n', 'r': '\r', 't': '\t'}

// str reads a string from its opening quote.
func (r *jsonReader) str() string {
	open := r.pos()
	r.next()
	var b strings.Builder
	for {
		if r.i == len(r.src) {
			r.fail(open, "invalid JSON: the string that starts here is not closed; add the closing \"")
		}
		c := r.src[r.i]
		switch {
		case c == '"':
			r.next()
			return b.String()
		case c < 0x20:
			r.fail(r.pos(), fmt.Sprintf("invalid JSON: control character U+%04X inside a string; write it as an escape (\\n, \\t or \\u%04X) or close the string", c, c))
		case c == '\\':
			r.escape(&b)
		default:
			start := r.i
			r.next()
			b.Write(r.src[start:r.i])
		}
	}
}

// escape reads one backslash escape; \u escapes must pair UTF-16 surrogates (RFC 8259
// section 7).
func (r *jsonReader) escape(b *strings.Builder) {
	at := r.pos()
	if r.i+1 >= len(r.src) {
		r.fail(at, "invalid JSON: the string ends inside an escape; complete it or close the string")
	}
	c := r.src[r.i+1]
	if e, ok := jsonEscapes[c]; ok {
		r.next()
		r.next()
		b.WriteByte(e)
		return
	}
	if c != 'u' {
		r.fail(at, fmt.Sprintf("invalid JSON: unknown escape \\%s; JSON escapes are \\\" \\\\ \\/ \\b \\f \\n \\r \\t and \\uXXXX", string(r.runeAt(r.i+1))))
	}
	u := r.hex4(at)
	switch {
	case u >= 0xDC00 && u <= 0xDFFF:
		r.fail(at, fmt.Sprintf("invalid JSON: invalid surrogate \\u%04x: a low surrogate without a high one (\\uD800-\\uDBFF) before it; write the character itself", u))
	case u >= 0xD800 && u <= 0xDBFF:
		if r.i+1 >= len(r.src) || r.src[r.i] != '\\' || r.src[r.i+1] != 'u' {
			r.fail(at, fmt.Sprintf("invalid JSON: invalid surrogate \\u%04x: a high surrogate must be followed by a low one (\\uDC00-\\uDFFF); write the character itself", u))
		}
		low := r.hex4(r.pos())
		if low < 0xDC00 || low > 0xDFFF {
			r.fail(at, fmt.Sprintf("invalid JSON: invalid surrogate \\u%04x: a high surrogate must be followed by a low one (\\uDC00-\\uDFFF), not \\u%04x; write the character itself", u, low))
		}
		b.WriteRune(0x10000 + (u-0xD800)<<10 + (low - 0xDC00))
	default:
		b.WriteRune(u)
	}
}

func (r *jsonReader) runeAt(i int) rune {
	c, _ := utf8.DecodeRune(r.src[i:])
	return c
}

// hex4 reads \uXXXX at the reader's position.
func (r *jsonReader) hex4(at Pos) rune {
	if r.i+6 > len(r.src) {
		r.fail(at, "invalid JSON: \\u must be followed by four hex digits; write \\u00e9 or the character itself")
	}
	var u rune
	for _, c := range r.src[r.i+2 : r.i+6] {
		var d byte
		switch {
		case c >= '0' && c <= '9':
			d = c - '0'
		case c >= 'a' && c <= 'f':
			d = c - 'a' + 10
		case c >= 'A' && c <= 'F':
			d = c - 'A' + 10
		default:
			r.fail(at, "invalid JSON: \\u must be followed by four hex digits; write \\u00e9 or the character itself")
		}
		u = u<<4 | rune(d)
	}
	for range 6 {
		r.next()
	}
	return u
}

var jsonInt = regexp.MustCompile(`^-?(0|[1-9][0-9]*)$`)

// word reads a number or a literal, taken as the longest run of characters that may
// belong to one, so "0x10" or "True" is reported whole.
func (r *jsonReader) word(at Pos) *yaml.Node {
	start := r.i
	for r.i < len(r.src) && isWordByte(r.src[r.i]) {
		r.next()
	}
	w := string(r.src[start:r.i])
	node := func(tag string) *yaml.Node {
		return &yaml.Node{Kind: yaml.ScalarNode, Tag: tag, Value: w, Line: at.Line, Column: at.Col}
	}
	switch {
	case w == "":
		r.fail(at, fmt.Sprintf("invalid JSON: unexpected %q; a value is an object, a list, a \"string\", a number, true, false or null", string(r.runeAt(r.i))))
	case w == "true" || w == "false":
		return node("!!bool")
	case w == "null":
		return node("!!null")
	case jsonInt.MatchString(w):
		return node("!!int")
	case jsonNumber.MatchString(w):
		return node("!!float")
	}
	if msg := numberFormProblem(w); msg != "" {
		r.fail(at, "invalid JSON: "+msg)
	}
	r.fail(at, fmt.Sprintf("invalid JSON: unexpected %s; write a string in double quotes, a number, true, false or null", quoteShort(w)))
	return nil
}

func isWordByte(c byte) bool {
	return c >= '0' && c <= '9' || c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || c == '.' || c == '+' || c == '-' || c == '_'
}
