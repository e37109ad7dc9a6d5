package run

import (
	"errors"
	"fmt"
	"io"
	"os"
	"strings"

	"github.com/scangate/scangate/internal/escape"
	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

// LoadOne reads and validates one manifest, a path or - for standard input, with the
// project config's engine profiles and budgets (proj may be nil). Schema
// problems are printed to stderr in check's style, each at its line and column, and
// end in an error that says what to do.
func LoadOne(path string, stdin io.Reader, stderr io.Writer, limits schema.Limits, proj *schema.ProjectConfig) (*schema.Manifest, error) {
	var in Input
	if path == "-" {
		data, err := ReadLimited(stdin, limits.MaxFileBytes)
		in = Input{name: StdinName, data: data, err: err}
	} else {
		info, err := os.Stat(path)
		if err != nil {
			return nil, fmt.Errorf("cannot read %s: %v", path, UnwrapPath(err))
		}
		if info.IsDir() {
			return nil, fmt.Errorf("%s is a directory; plan reads one manifest file", path)
		}
		in = readFile(path, limits.MaxFileBytes)
	}
	if in.err != nil {
		return nil, fmt.Errorf("cannot read %s: %v", in.name, in.err)
	}
	m, err := schema.LoadWith(in.name, in.data, schema.Options{Limits: limits, Project: proj})
	if err == nil {
		return m, nil
	}
	var se *schema.Error
	if !errors.As(err, &se) {
		return nil, fmt.Errorf("%s: %v", in.name, err)
	}
	for _, f := range rules.SchemaFindings(se) {
		loc := escape.Text(f.File)
		if f.Pos.Line > 0 {
			loc = fmt.Sprintf("%s:%d:%d", loc, f.Pos.Line, f.Pos.Col)
		}
		fmt.Fprint(stderr, escape.Log(fmt.Sprintf("%s: error: %s [%s]\n", loc, escape.Text(f.Message), escape.Text(f.Rule))))
	}
	return nil, fmt.Errorf("%s breaks the manifest schema; fix the errors above and plan again", in.name)
}

// PickTables is every table of m, or the one name names.
func PickTables(m *schema.Manifest, name string) ([]int, error) {
	var idx, all []int
	var names []string
	for i, t := range m.Tables {
		all = append(all, i)
		names = append(names, t.Name)
		if t.Name == name {
			idx = append(idx, i)
		}
	}
	if name == "" {
		return all, nil
	}
	if len(idx) == 0 {
		return nil, fmt.Errorf("--table %q: %s has no such table; it has %s", name, m.File, strings.Join(names, ", "))
	}
	return idx, nil
}
