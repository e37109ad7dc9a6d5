package main

import (
	"crypto/sha256"
	"io/fs"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"sort"
	"strings"
	"testing"
)

// The toy rule DEVELOPERS.md's "Adding a rule" walks through: one file in rules/.
const toyRule = `package rules

import (
	"fmt"

	"github.com/scangate/scangate/internal/analysis"
)

// ToyRule fires on a table named toy_table, and nowhere else.
var ToyRule = Rule{
	ID:      "toy-rule",
	Default: Note,
	Title:   "A table is named toy_table",
	Why:     "The name shows the table is a placeholder.",
	Fix:     "Rename the table.",
	How:     "The table's name against toy_table.",
	Bad:     "  - {name: toy_table, rows: 10, partitions: {scheme: none}}",
	Good:    "  - {name: meters, rows: 10, partitions: {scheme: none}}",
	Check:   checkToyRule,
}

func init() { register(ToyRule) }

func checkToyRule(t *analysis.Table, _ Config) []Finding {
	if t.Spec.Name != "toy_table" {
		return nil
	}
	return []Finding{finding(t, Note, t.Spec.Pos, "name", fmt.Sprintf("%d rows in a placeholder", t.Spec.Rows),
		[]string{"rename the table"}, map[string]float64{})}
}
`

// Its testdata: a manifest where it fires and a quiet one.
var toyCases = map[string]string{
	"testdata/rules/toy-rule/note.yaml": "format: 1\nmodel: cases\nengine: {segment_rows: 8Mi}\ntables:\n" +
		"  - name: toy_table # want: toy-rule/note \"10 rows in a placeholder\"\n    rows: 10\n    partitions: {scheme: none}\n",
	"testdata/rules/toy-rule/quiet.yaml": "format: 1\nmodel: cases\nengine: {segment_rows: 8Mi}\ntables:\n" +
		"  - name: meters\n    rows: 10\n    partitions: {scheme: none}\n",
}

// DEVELOPERS.md's "Adding a rule" is complete: in a copy of the repository, one rule
// file and its annotated testdata, then the one regenerate command (go generate ./...),
// and the suite passes with the rule in every generated artefact. Nothing else is
// edited by hand.
func TestAddingARule(t *testing.T) {
	if testing.Short() {
		t.Skip("copies the repository and runs the suite in it; skipped with -short")
	}
	if os.Getenv("SCANGATE_RULE_COPY") != "" {
		t.Skip("this is the copy's own run")
	}
	guide, err := os.ReadFile(filepath.Join(root(t), "DEVELOPERS.md"))
	if err != nil {
		t.Fatal(err)
	}
	for _, step := range []string{"rules/<rule-id>.go", "register(", "testdata/rules/<rule-id>/", "quiet-", "go generate ./..."} {
		if !strings.Contains(string(guide), step) {
			t.Errorf("DEVELOPERS.md's steps no longer say %q; this test follows them", step)
		}
	}
	dir := t.TempDir()
	copyTree(t, root(t), dir)
	// The copy is a repository root as the checkout is (reports and fingerprints name
	// files relative to it); it has no history, so builds stamp no revision.
	if err := os.Mkdir(filepath.Join(dir, ".git"), 0o755); err != nil {
		t.Fatal(err)
	}
	before := hashTree(t, dir)
	write := func(rel, body string) {
		p := filepath.Join(dir, filepath.FromSlash(rel))
		if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(p, []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	write("rules/toy_rule.go", toyRule)
	for rel, body := range toyCases {
		write(rel, body)
	}
	goCmd := func(args ...string) {
		t.Helper()
		cmd := exec.Command("go", args...)
		cmd.Dir = dir
		cmd.Env = append(os.Environ(), "SCANGATE_RULE_COPY=1", "GOFLAGS=-buildvcs=false")
		if out, err := cmd.CombinedOutput(); err != nil {
			t.Fatalf("go %s in the copy: %v\n%s", strings.Join(args, " "), err, out)
		}
	}
	goCmd("generate", "./...")
	goCmd("vet", "./...")
	// The suite, without the action's packaging tests (they neither read nor list rules).
	goCmd("test", "-count=1", "./schema/...", "./rules/...", "./internal/...", "./cmd/...")

	after := hashTree(t, dir)
	var changed []string
	for p, h := range after {
		if before[p] != h {
			changed = append(changed, p)
		}
	}
	sort.Strings(changed)
	byHand := []string{"rules/toy_rule.go", "testdata/rules/toy-rule/note.yaml", "testdata/rules/toy-rule/quiet.yaml"}
	generated := []string{"README.md", "docs/rules.md", "schema/config.schema.json", "schema/manifest.schema.json", "testdata/golden/demo.sarif"}
	want := append(slices.Clone(byHand), generated...)
	sort.Strings(want)
	if !slices.Equal(changed, want) {
		t.Errorf("adding a rule changed %v; want the files written by hand %v and the generated %v", changed, byHand, generated)
	}
	for _, p := range generated {
		data, _ := os.ReadFile(filepath.Join(dir, p))
		if !strings.Contains(string(data), "toy-rule") {
			t.Errorf("%s does not name toy-rule after go generate", p)
		}
	}
}

// copyTree copies the repository's files, without .git, into dst.
func copyTree(t *testing.T, src, dst string) {
	t.Helper()
	err := filepath.WalkDir(src, func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		rel, _ := filepath.Rel(src, p)
		if d.Name() == ".git" {
			if d.IsDir() {
				return filepath.SkipDir
			}
			return nil
		}
		if d.IsDir() {
			return os.MkdirAll(filepath.Join(dst, rel), 0o755)
		}
		if !d.Type().IsRegular() {
			return nil
		}
		data, err := os.ReadFile(p)
		if err != nil {
			return err
		}
		info, err := d.Info()
		if err != nil {
			return err
		}
		return os.WriteFile(filepath.Join(dst, rel), data, info.Mode().Perm())
	})
	if err != nil {
		t.Fatal(err)
	}
}

// hashTree maps every file below dir (slash-separated, relative) to its SHA-256.
func hashTree(t *testing.T, dir string) map[string][32]byte {
	t.Helper()
	out := map[string][32]byte{}
	err := filepath.WalkDir(dir, func(p string, d fs.DirEntry, err error) error {
		if err != nil || d.IsDir() {
			return err
		}
		data, err := os.ReadFile(p)
		if err != nil {
			return err
		}
		rel, _ := filepath.Rel(dir, p)
		out[filepath.ToSlash(rel)] = sha256.Sum256(data)
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	return out
}
