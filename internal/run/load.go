package run

import (
	"errors"
	"fmt"
	"io"
	"strings"

	"github.com/scangate/scangate/internal/advisor"
	"github.com/scangate/scangate/internal/analysis"
	"github.com/scangate/scangate/internal/escape"
	"github.com/scangate/scangate/internal/report"
	"github.com/scangate/scangate/internal/units"
	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

// Loaded is one manifest plan read, with its repository-relative path.
type Loaded struct {
	Manifest *schema.Manifest
	URI      string
}

// LoadManifests reads and validates the manifests the paths name, as check collects
// them (files as given, directories walked for manifests with the project's include and
// exclude globs, - for standard input), with the project config's engine profiles and
// budgets (proj may be nil), within the run's partition budget. Schema problems of
// every invalid file are printed to stderr in check's style, each at its line and
// column, and end in an error that says what to do: nothing is planned then.
func LoadManifests(paths []string, stdin io.Reader, stderr io.Writer, limits schema.Limits, proj *schema.ProjectConfig, keep func(string) bool) ([]Loaded, error) {
	inputs, err := Collect(paths, stdin, limits.MaxFileBytes, keep)
	if err != nil {
		return nil, err
	}
	if len(inputs) == 0 {
		return nil, fmt.Errorf("no manifests found in %s", strings.Join(paths, ", "))
	}
	root := RepositoryRoot()
	var out []Loaded
	var bad []string
	var spent int64
	for _, in := range inputs {
		data, err := in.bytes()
		if err != nil {
			return nil, fmt.Errorf("cannot read %s: %v", in.name, err)
		}
		m, err := schema.LoadWith(in.name, data, schema.Options{Limits: limits, Project: proj})
		if err != nil {
			var se *schema.Error
			if !errors.As(err, &se) {
				return nil, fmt.Errorf("%s: %v", in.name, err)
			}
			printProblems(stderr, se)
			bad = append(bad, in.name)
			continue
		}
		if spent += m.Partitions(); spent > limits.MaxRunPartitions {
			return nil, fmt.Errorf("%s: its partitions would take the run past %s partitions; plan fewer files at once or raise --max-run-partitions",
				in.name, units.Num(limits.MaxRunPartitions))
		}
		out = append(out, Loaded{Manifest: m, URI: RepositoryPath(root, in.name)})
	}
	if len(bad) > 0 {
		verb := "break"
		if len(bad) == 1 {
			verb = "breaks"
		}
		return nil, fmt.Errorf("%s %s the manifest schema; fix the errors above and plan again", strings.Join(bad, ", "), verb)
	}
	return out, nil
}

// printProblems writes a loader error's problems in check's style.
func printProblems(stderr io.Writer, se *schema.Error) {
	for _, f := range rules.SchemaFindings(se) {
		loc := escape.Text(f.File)
		if f.Pos.Line > 0 {
			loc = fmt.Sprintf("%s:%d:%d", loc, f.Pos.Line, f.Pos.Col)
		}
		fmt.Fprint(stderr, escape.Log(fmt.Sprintf("%s: error: %s [%s]\n", loc, escape.Text(f.Message), escape.Text(f.Rule))))
	}
}

// PickTablesIn is, for each manifest, every table, or the tables name names; an error
// when name is given and no manifest has it.
func PickTablesIn(ms []Loaded, name string) ([][]int, error) {
	out := make([][]int, len(ms))
	found := 0
	for k, l := range ms {
		idx, err := PickTables(l.Manifest, name)
		if err != nil && len(ms) == 1 {
			return nil, err
		}
		out[k] = idx
		found += len(idx)
	}
	if found == 0 && name != "" {
		return nil, fmt.Errorf("--table %q: no manifest given has such a table", name)
	}
	return out, nil
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

// PlanDoc plans the tables picked of each loaded manifest (picked[k] for loaded[k];
// a manifest with none is left out) with the levels' warning thresholds, date and
// horizon, as check ranks layouts: with default settings each table's recommendation is
// the one check quotes.
func PlanDoc(loaded []Loaded, picked [][]int, set advisor.Settings, lv advisor.Levels) *report.Plan {
	doc := &report.Plan{Version: ModuleVersion(), Today: lv.Today, Horizon: lv.Horizon()}
	set.Levels = lv
	for k, l := range loaded {
		if len(picked[k]) == 0 {
			continue
		}
		md := analysis.Analyze(l.Manifest, lv)
		doc.Files = append(doc.Files, report.PlanFile{Manifest: l.Manifest, URI: l.URI, Plans: md.Plans(picked[k], set, doc.Horizon)})
	}
	return doc
}

// LoadedFiles are the paths the manifests were read from, for the output guards.
func LoadedFiles(loaded []Loaded) []string {
	out := make([]string, len(loaded))
	for i, l := range loaded {
		out[i] = l.Manifest.File
	}
	return out
}
