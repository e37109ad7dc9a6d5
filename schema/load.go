package schema

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"regexp"
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
	t, ps := parse(data, o.Limits, "a manifest starts with \"format: 1\"")
	if len(ps) == 0 {
		ps = t.validate(manifestDoc)
	}
	if len(ps) > 0 {
		return nil, &Error{File: file, Problems: ps}
	}
	m, ps := t.decode(o.Project)
	if len(ps) > 0 {
		sortProblems(ps)
		return nil, &Error{File: file, Problems: ps}
	}
	m.File = file
	return m, nil
}

// parse reads one YAML or JSON document into a tree, enforcing the limits.
func parse(data []byte, lim Limits, start string) (*tree, []Problem) {
	fail := func(p Problem) (*tree, []Problem) { return nil, []Problem{p} }
	if lim.MaxFileBytes > 0 && len(data) > lim.MaxFileBytes {
		return fail(Problem{Pos: Pos{1, 1}, Message: fmt.Sprintf("file is %d bytes, above the limit of %d; split it into several files", len(data), lim.MaxFileBytes)})
	}
	if p := encodingProblem(data); p != nil {
		return fail(*p)
	}
	dec := yaml.NewDecoder(bytes.NewReader(data))
	var doc yaml.Node
	if err := dec.Decode(&doc); err != nil {
		if errors.Is(err, io.EOF) {
			return fail(Problem{Pos: Pos{1, 1}, Message: "file is empty; " + start})
		}
		return fail(syntaxProblem(err, data))
	}
	var next yaml.Node
	if err := dec.Decode(&next); err == nil {
		return fail(Problem{Pos: Pos{next.Line, next.Column}, Message: "file holds more than one YAML document; put each in a file of its own"})
	} else if !errors.Is(err, io.EOF) {
		return fail(syntaxProblem(err, data))
	}
	if len(doc.Content) == 0 || isEmptyDocument(doc.Content[0]) {
		return fail(Problem{Pos: Pos{1, 1}, Message: "file is empty; " + start})
	}
	t := &tree{doc: doc.Content[0], lim: lim}
	root, p := t.convert(doc.Content[0], 0)
	if p != nil {
		return fail(*p)
	}
	t.root = root
	return t, nil
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
	hint := "fix the YAML syntax"
	if strings.HasPrefix(msg, "did not find expected ',' or") {
		hint = "look on this line for a missing comma, colon or closing bracket"
	}
	if tabs {
		hint = "indent with spaces; YAML does not allow tabs for indentation"
	}
	return Problem{Pos: Pos{line, col}, Message: fmt.Sprintf("invalid YAML: %s; %s", msg, hint)}
}

// encodingProblem refuses input that is not text before the parser sees it.
func encodingProblem(data []byte) *Problem {
	if bytes.HasPrefix(data, []byte{0xFF, 0xFE}) || bytes.HasPrefix(data, []byte{0xFE, 0xFF}) {
		return &Problem{Pos: Pos{1, 1}, Message: "file is UTF-16; save it as UTF-8"}
	}
	body := bytes.TrimPrefix(data, []byte{0xEF, 0xBB, 0xBF})
	// The first NUL or invalid byte, reported at its own line and column.
	for i := 0; i < len(body); {
		r, size := utf8.DecodeRune(body[i:])
		if r == 0 || (r == utf8.RuneError && size == 1) {
			before := lineFeeds(body[:i])
			line := 1 + bytes.Count(before, []byte{'\n'})
			col := 1 + utf8.RuneCount(before[bytes.LastIndexByte(before, '\n')+1:])
			return &Problem{Pos: Pos{line, col}, Message: "file is not UTF-8 text (binary data or another encoding); a manifest is YAML or JSON in UTF-8"}
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
