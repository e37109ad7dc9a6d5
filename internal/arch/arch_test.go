package arch

import (
	"fmt"
	"go/parser"
	"go/token"
	"io/fs"
	"os"
	"path/filepath"
	"slices"
	"sort"
	"strings"
	"testing"
)

// imports lists every package of the module (its non-test files, read from disk so the
// test cache sees any change) with the packages it imports.
func imports(t *testing.T) map[string][]string {
	t.Helper()
	root := filepath.Join("..", "..")
	graph := map[string][]string{}
	err := filepath.WalkDir(root, func(path string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		name := d.Name()
		if d.IsDir() {
			if path != root && (name == "testdata" || strings.HasPrefix(name, ".") || strings.HasPrefix(name, "_")) {
				return filepath.SkipDir
			}
			return nil
		}
		if !strings.HasSuffix(name, ".go") || strings.HasSuffix(name, "_test.go") {
			return nil
		}
		f, err := parser.ParseFile(token.NewFileSet(), path, nil, parser.ImportsOnly)
		if err != nil {
			return err
		}
		rel, err := filepath.Rel(root, filepath.Dir(path))
		if err != nil {
			return err
		}
		pkg := Module + "/" + filepath.ToSlash(rel)
		imps := graph[pkg]
		for _, imp := range f.Imports {
			if p := strings.Trim(imp.Path.Value, `"`); !slices.Contains(imps, p) {
				imps = append(imps, p)
			}
		}
		graph[pkg] = imps
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	return graph
}

// violations checks a graph (import path -> imports) against the layers and returns
// every import that breaks them, sorted.
func violations(graph map[string][]string, layers [][]string, offline int) []string {
	layer := map[string]int{}
	for i, l := range layers {
		for _, p := range l {
			layer[Module+"/"+p] = i
		}
	}
	var out []string
	for pkg, imps := range graph {
		from, ok := layer[pkg]
		if !ok {
			out = append(out, fmt.Sprintf("%s is in no layer: place it in arch.Layers", pkg))
			continue
		}
		for _, imp := range imps {
			if from < offline && (imp == "net" || strings.HasPrefix(imp, "net/") || imp == "os/exec") {
				out = append(out, fmt.Sprintf("%s (layer %d) imports %s: only the driver and the commands reach out of the process", pkg, from, imp))
			}
			if !strings.HasPrefix(imp, Module+"/") {
				continue
			}
			if strings.HasPrefix(imp, pkg+"/") {
				out = append(out, fmt.Sprintf("%s imports %s, nested beneath it", pkg, imp))
			}
			to, ok := layer[imp]
			switch {
			case !ok:
				out = append(out, fmt.Sprintf("%s imports %s, which is in no layer", pkg, imp))
			case to >= from:
				out = append(out, fmt.Sprintf("%s (layer %d) imports %s (layer %d): a package imports only lower layers", pkg, from, imp, to))
			}
		}
	}
	sort.Strings(out)
	return out
}

// Every import of the module follows the layers.
func TestLayers(t *testing.T) {
	for _, v := range violations(imports(t), Layers, Offline) {
		t.Error(v)
	}
}

// Every layer names packages that exist, so the table cannot rot.
func TestLayersNameRealPackages(t *testing.T) {
	graph := imports(t)
	for _, l := range Layers {
		for _, p := range l {
			if _, ok := graph[Module+"/"+p]; !ok {
				t.Errorf("arch.Layers names %s, which is not a package of the module", p)
			}
		}
	}
}

// The checker itself catches a back-import, an import within a layer, a child import,
// an unplaced package and the network below the driver.
func TestViolationsCatchPlantedImports(t *testing.T) {
	m := func(p string) string { return Module + "/" + p }
	layers := [][]string{{"schema"}, {"internal/layout"}, {"rules", "rules/extra"}, {"internal/run"}}
	graph := map[string][]string{
		m("schema"):          {"fmt"},
		m("internal/layout"): {m("schema"), m("rules")},       // back-import
		m("rules"):           {m("rules/extra"), m("schema")}, // child, same layer
		m("rules/extra"):     {"os/exec"},                     // runs programs below the driver
		m("internal/run"):    {"os/exec", m("rules")},         // allowed
		m("internal/new"):    nil,                             // unplaced
	}
	got := violations(graph, layers, 3)
	want := []string{
		m("internal/layout") + " (layer 1) imports " + m("rules") + " (layer 2): a package imports only lower layers",
		m("internal/new") + " is in no layer: place it in arch.Layers",
		m("rules") + " (layer 2) imports " + m("rules/extra") + " (layer 2): a package imports only lower layers",
		m("rules") + " imports " + m("rules/extra") + ", nested beneath it",
		m("rules/extra") + " (layer 2) imports os/exec: only the driver and the commands reach out of the process",
	}
	if !slices.Equal(got, want) {
		t.Errorf("violations:\n%s\nwant:\n%s", strings.Join(got, "\n"), strings.Join(want, "\n"))
	}
}

// The command layer parses flags and wires packages: it stays small, and logic that
// grows there belongs in the driver or below.
func TestCommandStaysThin(t *testing.T) {
	const most = 700 // DESIGN.md: cobra wiring only: flags, help text, exit code
	paths, _ := filepath.Glob(filepath.Join("..", "..", "cmd", "scangate", "*.go"))
	lines := 0
	for _, p := range paths {
		if strings.HasSuffix(p, "_test.go") {
			continue
		}
		data, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		lines += strings.Count(string(data), "\n")
	}
	if lines == 0 || lines > most {
		t.Errorf("cmd/scangate holds %d non-test lines; keep it at %d or fewer by moving logic into internal/run or below", lines, most)
	}
}
