package schema

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"path/filepath"
	"regexp"
	"runtime"
	"strconv"
	"strings"
	"unicode/utf8"

	"go.yaml.in/yaml/v3"
)

// Load reads one manifest (YAML or JSON), validates it against the embedded JSON Schema
// and decodes it. Invalid input returns an *Error listing every problem with its line
// and column; the manifest is nil then.
func Load(file string, data []byte, lim Limits) (*Manifest, error) {
	return LoadWith(file, data, Options{Limits: lim})
}

// Options tune a load: the limits, and the project config whose engine profiles and
// budgets the manifest builds on (nil for none).
type Options struct {
	Limits  Limits
	Project *ProjectConfig
}

// LoadWith is Load with a project config: engine fields resolve manifest first, then the
// named profile, then the defaults; budgets resolve table, then manifest, then project.
func LoadWith(file string, data []byte, o Options) (*Manifest, error) {
	const start = "a manifest starts with \"format: 1\""
	// Read from its nodes alone: the values are built only if the schema library is needed.
	t, ps := parseTree(isJSON(file), data, o.Limits, start, false)
	if t == nil {
		return nil, &Error{File: file, Problems: ps}
	}
	// The schema and the checks it cannot express run in one pass, each over the parts
	// that are well-formed, so every problem is reported at once.
	ps, bad := t.check(manifestDoc)
	var m *Manifest
	if root, ok := nodeValue(t.doc).(obj); ok {
		var dps []Problem
		m, dps = t.decode(root, o.Project, bad)
		ps = append(ps, dps...)
	} else if len(ps) == 0 {
		// The schema refuses any other root; this keeps a nil manifest from passing.
		ps = []Problem{{Pos: Pos{1, 1}, Message: "a manifest is a mapping of keys; " + start}}
	}
	if len(ps) > 0 {
		return nil, &Error{File: file, Problems: sortProblems(ps)}
	}
	m.File = file
	release(t, len(data))
	return m, nil
}

// releaseBytes is the input size from which a load hands its node tree back at once.
const releaseBytes = 1 << 20

// release drops a large document's node tree as soon as the manifest is typed. The
// tree is about 25 bytes per input byte, all garbage now, and the collector would
// otherwise reclaim it only once the analysis had allocated as much again: the run's
// peak would be the tree and the analysis together. One collection, while little else
// is live, costs far less than the parse did.
func release(t *tree, size int) {
	t.doc, t.root = nil, nil
	if size >= releaseBytes {
		runtime.GC()
	}
}

// isJSON is a file named *.json: it is read as strict JSON, not as YAML.
func isJSON(file string) bool {
	return strings.EqualFold(filepath.Ext(file), ".json")
}

// parse reads one YAML or JSON document into a tree, enforcing the limits. A nil tree
// comes with the problem that stopped the read; a tree may carry problems of its own
// (t.problems) that left the rest readable.
func parse(file string, data []byte, lim Limits, start string) (*tree, []Problem) {
	return parseAs(isJSON(file), data, lim, start)
}

// parseAs is parse with the syntax chosen by the caller: strict JSON, or YAML.
func parseAs(asJSON bool, data []byte, lim Limits, start string) (*tree, []Problem) {
	return parseTree(asJSON, data, lim, start, true)
}

// parseTree is parseAs that builds the values only when build is set; without them the
// tree is read through views (view.go).
func parseTree(asJSON bool, data []byte, lim Limits, start string, build bool) (*tree, []Problem) {
	fail := func(p Problem) (*tree, []Problem) {
		// A merge's leftover marker breaks the syntax somewhere at or after it; say why.
		if at, marker, ok := conflictMarker(data); ok && at.Line <= p.Pos.Line {
			p = Problem{Pos: at, Message: "merge conflict marker " + marker + "; resolve the conflict, then run again"}
		}
		return nil, []Problem{p}
	}
	if lim.MaxFileBytes > 0 && len(data) > lim.MaxFileBytes {
		return fail(Problem{Pos: Pos{1, 1}, Message: fmt.Sprintf("file is %d bytes, above the limit of %d; raise --max-file-size if it is meant to be this large", len(data), lim.MaxFileBytes)})
	}
	if p := encodingProblem(data); p != nil {
		return fail(*p)
	}
	var top *yaml.Node
	if asJSON {
		n, p := parseJSON(data, lim, start)
		if p != nil {
			return fail(*p)
		}
		top = n
	} else {
		n, p := parseYAML(data, start)
		if p != nil {
			return fail(*p)
		}
		top = n
	}
	t := &tree{doc: top, lim: lim, built: build}
	root, p := t.convert(top, 0)
	if p != nil {
		return fail(*p)
	}
	if build {
		t.root = root
	}
	return t, nil
}

// parseYAML reads the one YAML document of a file.
func parseYAML(data []byte, start string) (*yaml.Node, *Problem) {
	dec := yaml.NewDecoder(bytes.NewReader(data))
	var doc yaml.Node
	if err := dec.Decode(&doc); err != nil {
		if errors.Is(err, io.EOF) {
			return nil, &Problem{Pos: Pos{1, 1}, Message: "file is empty; " + start}
		}
		p := syntaxProblem(err, data)
		return nil, &p
	}
	var next yaml.Node
	if err := dec.Decode(&next); err == nil {
		return nil, &Problem{Pos: Pos{next.Line, next.Column}, Message: "file holds more than one YAML document; put each in a file of its own"}
	} else if !errors.Is(err, io.EOF) {
		p := syntaxProblem(err, data)
		return nil, &p
	}
	if len(doc.Content) == 0 || isEmptyDocument(doc.Content[0]) {
		return nil, &Problem{Pos: Pos{1, 1}, Message: "file is empty; " + start}
	}
	return doc.Content[0], nil
}

var yamlLine = regexp.MustCompile(`^yaml: (?:line (\d+): )?(.*)$`)

// syntaxProblem positions a parser error. The YAML parser reports a line but no column,
// so the column is the first tab on that line when tabs are the trouble, else the first
// non-blank character.
func syntaxProblem(err error, data []byte) Problem {
	msg := err.Error()
	line, reported := 1, false
	if m := yamlLine.FindStringSubmatch(msg); m != nil {
		if m[1] != "" {
			line, _ = strconv.Atoi(m[1])
			reported = true
		}
		msg = m[2]
	}
	// The parser (unlike the scanner) reports the 0-based line of the construct it was
	// reading; "did not find expected" is how its errors start.
	parserError := strings.HasPrefix(msg, "did not find expected")
	if parserError && reported {
		line++
	}
	// At the end of the input the parser points past the last line; name the last one.
	text := string(lineFeeds(data))
	last := strings.Count(text, "\n")
	if len(text) > 0 && text[len(text)-1] != '\n' {
		last++
	}
	line = max(1, min(line, last))
	lines := strings.Split(text, "\n")
	col := 1
	tabs := strings.Contains(msg, "tab")
	if line >= 1 && line <= len(lines) {
		text := lines[line-1]
		indent := text[:len(text)-len(strings.TrimLeft(text, " \t"))]
		if i := strings.IndexByte(indent, '\t'); i >= 0 {
			col, tabs = i+1, true
		} else if i := strings.IndexFunc(text, func(r rune) bool { return r != ' ' }); i >= 0 {
			col = i + 1
		}
	}
	if p, ok := keyProblem(msg, lines, line, reported); ok {
		return p
	}
	if p, ok := escapeProblem(msg, lines, line, reported); ok {
		return p
	}
	hint := "fix the YAML syntax"
	if strings.HasPrefix(msg, "did not find expected ',' or") {
		hint = "look on this line for a missing comma, colon or closing bracket"
	}
	if tabs {
		hint = "indent with spaces; YAML does not allow tabs for indentation"
	}
	return Problem{Pos: Pos{line, col}, Message: fmt.Sprintf("invalid YAML: %s; %s", msg, hint)}
}

// keyProblem words the parser's errors about a key that never reaches its ':'. A key
// longer than maxKeyLength is named with its length at its first character; otherwise
// the key is pointed at and the missing ':' named.
func keyProblem(msg string, lines []string, line int, reported bool) (Problem, bool) {
	missingColon := strings.HasPrefix(msg, "could not find expected ':'")
	if !missingColon && msg != "mapping values are not allowed in this context" && !strings.HasPrefix(msg, "did not find expected ',' or '}'") {
		return Problem{}, false
	}
	last := len(lines)
	if reported {
		last = min(line, len(lines))
	}
	for i := 0; i < last; i++ {
		if col, n := longKey(lines[i]); n > 0 {
			return Problem{Pos: Pos{i + 1, col}, Message: fmt.Sprintf("invalid YAML: the key that starts here is %s characters long, above YAML's limit of %s characters for a key; shorten it", group(int64(n)), group(maxKeyLength))}, true
		}
	}
	if !missingColon || line > len(lines) {
		return Problem{}, false
	}
	text := lines[line-1]
	col := 1 + utf8.RuneCountInString(text[:len(text)-len(strings.TrimLeft(text, " -"))])
	return Problem{Pos: Pos{line, col}, Message: "invalid YAML: the mapping is malformed at the key that starts here: no ':' follows it; write key: value on one line (a key is at most 1024 characters)"}, true
}

// longKey finds, on one line, a key longer than maxKeyLength before its ':': its 1-based
// column and length in characters, 0 for none. A key starts after the indentation, a
// "- " and the flow punctuation { [ ,.
func longKey(text string) (col, n int) {
	const before, inValue = -1, -2 // before a key; in a value, until flow punctuation
	start, runes := before, 0
	pos := 0
	for i, r := range text {
		pos++
		switch {
		case r == ',' || r == '{' || r == '[':
			start = before
		case start == inValue:
		case start == before && (r == ' ' || r == '-'):
		case start == before:
			start, runes = pos, 1
		case r == ':' && (i+1 == len(text) || text[i+1] == ' ' || text[i+1] == ','):
			if runes > maxKeyLength {
				return start, runes
			}
			start = inValue
		default:
			runes++
		}
	}
	return 0, 0
}

// escapeProblem points at the escape the YAML parser refused: a UTF-16 surrogate half
// or a code point past U+10FFFF.
func escapeProblem(msg string, lines []string, line int, reported bool) (Problem, bool) {
	if !strings.Contains(msg, "invalid Unicode character escape code") {
		return Problem{}, false
	}
	first, last := 0, len(lines)
	if reported && line <= len(lines) {
		first, last = line-1, line
	}
	for i := first; i < last; i++ {
		if col, esc := badEscape(lines[i]); col > 0 {
			return Problem{Pos: Pos{i + 1, col}, Message: fmt.Sprintf("invalid YAML: %s is not a character (an invalid surrogate or past U+10FFFF); YAML escapes name whole characters: write the character itself or its \\U escape, e.g. \\U0001F600", esc)}, true
		}
	}
	return Problem{}, false
}

// badEscape finds the first \uXXXX escape naming a surrogate half, or \UXXXXXXXX past
// U+10FFFF, on a line: its 1-based column and text.
func badEscape(text string) (int, string) {
	col := 0
	for i := 0; i < len(text); i++ {
		if text[i] < utf8.RuneSelf || utf8.RuneStart(text[i]) {
			col++
		}
		if text[i] != '\\' || i+1 == len(text) {
			continue
		}
		width := map[byte]int{'u': 4, 'U': 8}[text[i+1]]
		if width == 0 || i+2+width > len(text) {
			i++ // an escaped character, whatever it is
			col++
			continue
		}
		v, err := strconv.ParseUint(text[i+2:i+2+width], 16, 32)
		if err == nil && (v >= 0xD800 && v <= 0xDFFF || v > 0x10FFFF) {
			return col, text[i : i+2+width]
		}
		i++
		col++
	}
	return 0, ""
}

// encodingProblem refuses input that is not text before the parser sees it.
func encodingProblem(data []byte) *Problem {
	if bytes.HasPrefix(data, []byte{0xFF, 0xFE}) || bytes.HasPrefix(data, []byte{0xFE, 0xFF}) {
		return &Problem{Pos: Pos{1, 1}, Message: "file is UTF-16; save it as UTF-8"}
	}
	body := bytes.TrimPrefix(data, []byte{0xEF, 0xBB, 0xBF})
	// A second mark is not text the parser counts: it would drop the first character of
	// later lines and misplace every position, so the problems would name keys that are
	// not in the file.
	if bytes.HasPrefix(body, []byte{0xEF, 0xBB, 0xBF}) {
		return &Problem{Pos: Pos{1, 1}, Message: "file starts with more than one byte order mark; remove all but one (or save it as UTF-8 again)"}
	}
	if utf8.Valid(body) && bytes.IndexByte(body, 0) < 0 {
		return nil // the common case, checked a word at a time
	}
	// The first NUL or invalid byte, reported at its own line and column.
	for i := 0; i < len(body); {
		r, size := utf8.DecodeRune(body[i:])
		if r == 0 || (r == utf8.RuneError && size == 1) {
			before := lineFeeds(body[:i])
			line := 1 + bytes.Count(before, []byte{'\n'})
			col := 1 + utf8.RuneCount(before[bytes.LastIndexByte(before, '\n')+1:])
			return &Problem{Pos: Pos{line, col}, Message: "file is not UTF-8 text (binary data or another encoding); save it as UTF-8"}
		}
		i += size
	}
	return nil
}

// isEmptyDocument is a document with no content: "---" alone, or only comments.
func isEmptyDocument(n *yaml.Node) bool {
	return n.Kind == yaml.ScalarNode && n.ShortTag() == "!!null" && n.Value == "" && n.Style == 0
}

// lineFeeds turns every YAML line break (CR LF, a lone CR, LF) into LF, so lines are
// counted as the parser counts them: a file saved with CR alone is not one long line.
func lineFeeds(data []byte) []byte {
	if !bytes.ContainsRune(data, '\r') {
		return data
	}
	out := bytes.ReplaceAll(data, []byte("\r\n"), []byte("\n"))
	return bytes.ReplaceAll(out, []byte("\r"), []byte("\n"))
}

// conflictMarker finds the first line a merge left behind (<<<<<<<, =======, >>>>>>>),
// counting lines as YAML does (CR LF, a lone CR and LF each one break).
func conflictMarker(data []byte) (Pos, string, bool) {
	line := 1
	for off := 0; off < len(data); line++ {
		end := off
		for end < len(data) && data[end] != '\n' && data[end] != '\r' {
			end++
		}
		for _, m := range []string{"<<<<<<<", "=======", ">>>>>>>"} {
			if bytes.HasPrefix(data[off:end], []byte(m)) {
				return Pos{Line: line, Col: 1}, m, true
			}
		}
		if end+1 < len(data) && data[end] == '\r' && data[end+1] == '\n' {
			end++
		}
		off = end + 1
	}
	return Pos{}, "", false
}
