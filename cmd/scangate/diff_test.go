package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/santhosh-tekuri/jsonschema/v6"
	"github.com/yuin/goldmark"
	"github.com/yuin/goldmark/ast"
	"github.com/yuin/goldmark/extension"
	east "github.com/yuin/goldmark/extension/ast"
	"github.com/yuin/goldmark/text"

	"github.com/scangate/scangate/schema"
)

// Manifests with segments of 1,000 rows and 1.5 ms per segment, so every figure below
// can be worked out by hand.
const (
	diffHeader = "format: 1\nmodel: sales\nengine: {segment_rows: 1000, segment_overhead_ms: 1.5}\nbudgets: {scan_overhead_ms: 100}\ntables:\n"
	// orders: 10,000 rows in one partition: 10 segments, 15 ms. stores: 500 rows, 1 segment, 1.5 ms.
	salesBase = diffHeader +
		"  - name: orders\n    rows: 10k\n    partitions: {scheme: none}\n" +
		"  - name: stores\n    rows: 500\n    partitions: {scheme: none}\n"
	// orders in 4 even partitions of 2,500 rows: 4 x ceil(2.5) = 12 segments, 18 ms: it
	// adds 2 segments and 3.0 ms, and 2 excess segments raise a truncated-segments note.
	salesEven4 = diffHeader +
		"  - name: orders\n    rows: 10k\n    partitions: {scheme: even, count: 4}\n" +
		"  - name: stores\n    rows: 500\n    partitions: {scheme: none}\n"
	// Another model: one table of 500 rows, 1 segment, 1.5 ms.
	stock = "format: 1\nmodel: stock\nengine: {segment_rows: 1000}\ntables:\n  - name: bins\n    rows: 500\n    partitions: {scheme: none}\n"
)

// requireGit skips a test that needs git when it is not installed.
func requireGit(t *testing.T) {
	t.Helper()
	if _, err := exec.LookPath("git"); err != nil {
		t.Skip("git is not on PATH: skipping the git-backed diff tests")
	}
}

// git runs git in dir with a fixed identity and no signing, so commits work on any machine.
func git(t *testing.T, dir string, args ...string) string {
	t.Helper()
	cmd := exec.Command("git", append([]string{"-c", "commit.gpgsign=false", "-c", "init.defaultBranch=main"}, args...)...)
	cmd.Dir = dir
	cmd.Env = append(os.Environ(),
		"GIT_AUTHOR_NAME=scangate test", "GIT_AUTHOR_EMAIL=test@example.invalid",
		"GIT_COMMITTER_NAME=scangate test", "GIT_COMMITTER_EMAIL=test@example.invalid",
		"GIT_CONFIG_NOSYSTEM=1", "HOME="+dir)
	out, err := cmd.CombinedOutput()
	if err != nil {
		t.Fatalf("git %s: %v\n%s", strings.Join(args, " "), err, out)
	}
	return string(out)
}

func writeTree(t *testing.T, dir string, files map[string]string) {
	t.Helper()
	for name, body := range files {
		p := filepath.Join(dir, name)
		if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(p, []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
	}
}

// newRepo makes a repository with files committed as its first commit.
func newRepo(t *testing.T, files map[string]string) string {
	t.Helper()
	requireGit(t)
	dir := t.TempDir()
	git(t, dir, "init", "-q")
	writeTree(t, dir, files)
	git(t, dir, "add", "-A")
	git(t, dir, "commit", "-q", "-m", "base")
	return dir
}

// repoState is what diff must never change: the status, HEAD and the index bytes.
func repoState(t *testing.T, dir string) string {
	t.Helper()
	index, err := os.ReadFile(filepath.Join(dir, ".git", "index"))
	if err != nil {
		t.Fatal(err)
	}
	return git(t, dir, "status", "--porcelain") + git(t, dir, "rev-parse", "HEAD") + string(index)
}

var diffSchema = func() func(t *testing.T) *jsonschema.Schema {
	var sch *jsonschema.Schema
	return func(t *testing.T) *jsonschema.Schema {
		t.Helper()
		if sch != nil {
			return sch
		}
		doc, err := jsonschema.UnmarshalJSON(bytes.NewReader(schema.DiffSchema()))
		if err != nil {
			t.Fatal(err)
		}
		c := jsonschema.NewCompiler()
		if err := c.AddResource("diff.schema.json", doc); err != nil {
			t.Fatal(err)
		}
		if sch, err = c.Compile("diff.schema.json"); err != nil {
			t.Fatal(err)
		}
		return sch
	}
}()

// diffDoc is the part of the JSON diff the tests read.
type diffDoc struct {
	Base, Head, Verdict string
	Valid, Failed       bool
	Gate                struct {
		Breaches []struct{ Kind, Table, Message string }
	}
	Summary struct {
		ChangedTables int     `json:"changed_tables"`
		AddedSegments int64   `json:"added_segments"`
		AddedMs       float64 `json:"added_fixed_overhead_ms"`
	}
	Invalid []struct {
		Side, Path string
		Problems   []struct {
			Line, Column int
			Message      string
		}
	}
	Files []struct {
		Status, Model string
		BasePath      *string `json:"base_path"`
		HeadPath      *string `json:"head_path"`
		URI           string
	}
	Models []struct {
		Name, Status string
		Tables       []struct {
			Name, Status string
			Delta        struct {
				Segments int64
				Fixed    float64 `json:"fixed_overhead_ms"`
			}
		}
	}
	Findings struct {
		Introduced, Resolved, Unchanged []struct {
			Rule, Severity, Table, File string
			BaseSeverity                string `json:"base_severity"`
			Fails                       bool
		}
	}
}

// diffJSON checks a JSON diff against schema/diff.schema.json and decodes it.
func diffJSON(t *testing.T, out string) diffDoc {
	t.Helper()
	inst, err := jsonschema.UnmarshalJSON(strings.NewReader(out))
	if err != nil {
		t.Fatalf("not JSON: %v\n%s", err, out)
	}
	if err := diffSchema(t).Validate(inst); err != nil {
		t.Errorf("JSON diff breaks schema/diff.schema.json: %v\n%s", err, out)
	}
	var d diffDoc
	if err := json.Unmarshal([]byte(out), &d); err != nil {
		t.Fatal(err)
	}
	return d
}

func statuses(d diffDoc) string {
	var s []string
	for _, f := range d.Files {
		s = append(s, f.Status+":"+f.URI)
	}
	for _, m := range d.Models {
		for _, tb := range m.Tables {
			s = append(s, m.Name+"/"+tb.Name+":"+tb.Status)
		}
	}
	return strings.Join(s, " ")
}

// The working tree against its last commit: a changed table, an added file, the gate
// at its boundary, and the repository left exactly as it was.
func TestDiffRevision(t *testing.T) {
	dir := newRepo(t, map[string]string{"models/sales.yaml": salesBase, "README.md": "format: not a manifest\n"})
	writeTree(t, dir, map[string]string{"models/sales.yaml": salesEven4, "models/stock.yaml": stock})
	before := repoState(t, dir)

	r := scangate(t, dir, "", nil, "diff", "--base", "HEAD", "--format", "json", "models")
	wantCode(t, r, 0)
	d := diffJSON(t, r.stdout)
	// orders adds 2 segments and 3.0 ms (salesEven4); the new stock model adds bins, 1
	// segment and 1.5 ms: 3 segments and 4.5 ms in all.
	if d.Base != "HEAD" || d.Head != "working tree" || !d.Valid || d.Failed ||
		d.Summary.AddedSegments != 3 || d.Summary.AddedMs != 4.5 || d.Summary.ChangedTables != 2 {
		t.Errorf("summary: %+v", d)
	}
	if got := statuses(d); got != "kept:models/sales.yaml added:models/stock.yaml sales/orders:changed sales/stores:unchanged stock/bins:added" {
		t.Errorf("statuses %q", got)
	}
	if d.Verdict != "adds 3.0 ms per scan to orders and 1.5 ms to bins" {
		t.Errorf("verdict %q", d.Verdict)
	}
	if len(d.Findings.Introduced) != 1 || d.Findings.Introduced[0].Rule != "truncated-segments" || d.Findings.Introduced[0].File != "models/sales.yaml" {
		t.Errorf("introduced %+v", d.Findings.Introduced)
	}
	// Overlapping paths select each file once.
	r = scangate(t, dir, "", nil, "diff", "--base", "HEAD", "--format", "json", "models", "models/sales.yaml", "./models/")
	if again := diffJSON(t, r.stdout); statuses(again) != statuses(d) {
		t.Errorf("overlapping paths: %q", statuses(again))
	}

	// Exactly 3 ms added passes; 2.999 fails. 2 added segments pass a limit of 2, not of 1.
	for _, c := range []struct {
		args []string
		code int
	}{
		{[]string{"--max-added-ms", "3"}, 0},
		{[]string{"--max-added-ms", "2.999"}, 1},
		{[]string{"--max-added-segments", "2"}, 0},
		{[]string{"--max-added-segments", "1"}, 1},
		{[]string{"--fail-on-new", "warning"}, 0}, // the new finding is a note
		{[]string{"--fail-on-new", "note"}, 1},
		{[]string{"--max-added-ms", "-1"}, 2},
		{[]string{"--max-added-ms", "NaN"}, 2},
		{[]string{"--fail-on-new", "fatal"}, 2},
	} {
		args := append([]string{"diff", "--base", "HEAD", "--format", "json"}, c.args...)
		r := scangate(t, dir, "", nil, args...)
		if r.code != c.code {
			t.Errorf("%v: exit %d, want %d\n%s%s", c.args, r.code, c.code, r.stdout, r.stderr)
		}
		if c.code != 2 {
			if d := diffJSON(t, r.stdout); d.Failed != (c.code == 1) {
				t.Errorf("%v: failed %v", c.args, d.Failed)
			}
		}
	}

	r = scangate(t, filepath.Join(dir, "models"), "", nil, "diff", "--base", "HEAD", "--max-added-ms", "2.999")
	wantCode(t, r, 1)
	for _, s := range []string{
		"scangate diff: HEAD -> working tree\n",
		"\nsales: orders (changed, in sales.yaml)\n",
		"                     before  after   delta\n", // as wide as the widest cell, "-17 pp"
		"  segments               10     12      +2\n",
		"  fixed ms per scan    15.0   18.0    +3.0\n",
		"  fill                 100%    83%  -17 pp\n", // 10,000 / 12,000 = 83.3%
		"\nstock: bins (added, in stock.yaml)\n",
		// The note points at orders' partitions key: line 8 (format, model, engine,
		// budgets, tables, - name, rows, partitions), column 5.
		"\nnew findings (1):\nsales.yaml:8:5: note: orders: 2 excess segments",
		"gate failed: --max-added-ms 2.999\n  orders adds 3.0 ms per scan, more than the 2.999 ms allowed (--max-added-ms)\n",
		"adds 3.0 ms per scan to orders and 1.5 ms to bins\n2 models, 3 tables: 2 changed; findings: 1 new, 0 resolved, 0 worsened, 0 improved, 0 unchanged\n",
	} {
		if !strings.Contains(r.stdout, s) {
			t.Errorf("text from a subdirectory lacks %q:\n%s", s, r.stdout)
		}
	}
	if after := repoState(t, dir); after != before {
		t.Error("diff changed the repository (status, HEAD or index)")
	}
}

// A renamed file keeps its tables and findings; a deleted one removes its tables, also
// when it is named on the command line.
func TestDiffRevisionRenameAndDelete(t *testing.T) {
	dir := newRepo(t, map[string]string{"a.yaml": salesEven4, "b.yaml": stock})
	if err := os.Rename(filepath.Join(dir, "a.yaml"), filepath.Join(dir, "renamed.yaml")); err != nil {
		t.Fatal(err)
	}
	os.Remove(filepath.Join(dir, "b.yaml"))
	r := scangate(t, dir, "", nil, "diff", "--base", "HEAD", "--format", "json", "--fail-on-new", "note", "--max-added-ms", "0")
	wantCode(t, r, 0)
	d := diffJSON(t, r.stdout)
	// Files are sorted by path (the head's, else the base's).
	if got := statuses(d); got != "removed:b.yaml renamed:renamed.yaml sales/orders:unchanged sales/stores:unchanged stock/bins:removed" {
		t.Errorf("statuses %q", got)
	}
	if *d.Files[1].BasePath != "HEAD:a.yaml" || *d.Files[1].HeadPath != "renamed.yaml" || d.Files[0].HeadPath != nil {
		t.Errorf("paths %+v", d.Files)
	}
	// The truncated-segments note of orders moved with its file: unchanged, not new.
	if len(d.Findings.Introduced) != 0 || len(d.Findings.Resolved) != 0 || len(d.Findings.Unchanged) != 1 {
		t.Errorf("findings %+v", d.Findings)
	}
	// bins: 1 segment, 1.5 ms removed.
	if d.Verdict != "saves 1.5 ms per scan on bins" || d.Summary.AddedSegments != -1 {
		t.Errorf("verdict %q, segments %d", d.Verdict, d.Summary.AddedSegments)
	}

	r = scangate(t, dir, "", nil, "diff", "--base", "HEAD")
	wantCode(t, r, 0)
	if !strings.Contains(r.stdout, "\nfile removed: b.yaml (model stock)\nfile renamed: a.yaml -> renamed.yaml (model sales)\n") {
		t.Errorf("text should name the removed and renamed files:\n%s", r.stdout)
	}

	r = scangate(t, dir, "", nil, "diff", "--base", "HEAD", "b.yaml")
	wantCode(t, r, 0)
	if !strings.Contains(r.stdout, "stock: bins (removed, was in HEAD:b.yaml)") || !strings.Contains(r.stdout, "saves 1.5 ms per scan on bins\n") {
		t.Errorf("a deleted file named on the command line:\n%s", r.stdout)
	}
	r = scangate(t, dir, "", nil, "diff", "--base", "HEAD", "nothing.yaml")
	wantCode(t, r, 2)
	if !strings.Contains(r.stderr, "cannot read nothing.yaml: no such file or directory in the working tree or in HEAD") {
		t.Errorf("stderr %q", r.stderr)
	}
}

// Reordering keys and tables, reflowing mappings and adding comments changes nothing.
func TestDiffRevisionMovedLinesOnly(t *testing.T) {
	dir := newRepo(t, map[string]string{"m.yaml": salesEven4})
	moved := "# reformatted\nformat: 1\nmodel: sales\n\nbudgets:\n  scan_overhead_ms: 100\nengine:\n  segment_overhead_ms: 1.5\n  segment_rows: 1000\ntables:\n" +
		"  - name: stores\n    partitions: {scheme: none}\n    rows: 500\n\n" +
		"  - name: orders   # the big one\n    partitions:\n      count: 4\n      scheme: even\n    rows: 10000\n"
	writeTree(t, dir, map[string]string{"m.yaml": moved})
	gates := []string{"--max-added-ms", "0", "--max-added-segments", "0", "--fail-on-new", "note"}
	r := scangate(t, dir, "", nil, append([]string{"diff", "--base", "HEAD", "--format", "json"}, gates...)...)
	wantCode(t, r, 0)
	d := diffJSON(t, r.stdout)
	if d.Verdict != "no change in segments or ms per scan" || d.Summary.ChangedTables != 0 ||
		len(d.Findings.Introduced) != 0 || len(d.Findings.Resolved) != 0 || len(d.Findings.Unchanged) != 1 {
		t.Errorf("a reformat should change nothing: %+v", d)
	}
	r = scangate(t, dir, "", nil, append([]string{"diff", "--base", "HEAD", "--format", "markdown"}, gates...)...)
	wantCode(t, r, 0)
	if !strings.HasPrefix(r.stdout, "### scangate diff passed\n\n**No change in segments or ms per scan**\n") || strings.Contains(r.stdout, "| model |") {
		t.Errorf("markdown:\n%s", r.stdout)
	}
}

// An invalid manifest on the base side is reported at its line and column, exit 2.
func TestDiffRevisionInvalidBase(t *testing.T) {
	broken := strings.Replace(salesBase, "rows: 10k", "rows: -1", 1)
	dir := newRepo(t, map[string]string{"m.yaml": broken})
	writeTree(t, dir, map[string]string{"m.yaml": salesBase})
	r := scangate(t, dir, "", nil, "diff", "--base", "HEAD")
	wantCode(t, r, 2)
	// rows is on line 7 (format, model, engine, budgets, tables, - name, rows), its value
	// at column 11.
	for _, s := range []string{
		"HEAD:m.yaml:7:11: error: /tables/0/rows: must be >= 0 [schema]",
		"cannot compare: 1 file of the base (HEAD) breaks the schema or cannot be read; fix the errors above and run again",
	} {
		if !strings.Contains(r.stdout, s) {
			t.Errorf("output lacks %q:\n%s", s, r.stdout)
		}
	}
	r = scangate(t, dir, "", nil, "diff", "--base", "HEAD", "--format", "json")
	wantCode(t, r, 2)
	d := diffJSON(t, r.stdout)
	if d.Valid || !d.Failed || len(d.Invalid) != 1 || d.Invalid[0].Side != "base" || d.Invalid[0].Problems[0].Line != 7 || d.Invalid[0].Problems[0].Column != 11 {
		t.Errorf("invalid %+v", d.Invalid)
	}
	r = scangate(t, dir, "", nil, "diff", "--base", "HEAD", "--format", "markdown")
	wantCode(t, r, 2)
	if !strings.Contains(r.stdout, "- `HEAD:m.yaml:7:11` **schema**: /tables/0/rows: must be \\>= 0\n") {
		t.Errorf("markdown:\n%s", r.stdout)
	}
}

func TestDiffRevisionErrors(t *testing.T) {
	dir := newRepo(t, map[string]string{"m.yaml": salesBase})
	for _, c := range []struct {
		dir  string
		env  []string
		args []string
		want string
	}{
		{dir, nil, []string{"--base", "no-such-branch"}, "--base no-such-branch: no such commit in this repository; check the name, or fetch it first"},
		{dir, nil, []string{"--base", "--max-added-ms"}, "--base \"--max-added-ms\": not a revision"},
		{dir, nil, []string{"--base", "HEAD", "-"}, "- (standard input) has no base revision"},
		{dir, nil, []string{"--base", "HEAD", os.TempDir()}, "is outside the repository"},
		{t.TempDir(), nil, []string{"--base", "HEAD"}, "is not inside a git repository"},
		{dir, []string{"PATH=" + t.TempDir()}, []string{"--base", "HEAD"}, "--base needs git, which is not on PATH"},
		{dir, nil, []string{"m.yaml"}, "diff compares two paths, OLD and NEW (got 1)"},
		{dir, nil, []string{"--format", "sarif", "--base", "HEAD"}, "unknown format; use one of text, github, json, markdown"},
	} {
		r := scangate(t, c.dir, "", c.env, append([]string{"diff"}, c.args...)...)
		if r.code != 2 || !strings.Contains(r.stderr, c.want) {
			t.Errorf("%v: exit %d, stderr %q, want 2 and %q", c.args, r.code, r.stderr, c.want)
		}
	}
}

// In a shallow clone the base works once it is fetched, and is named clearly before.
func TestDiffShallowClone(t *testing.T) {
	origin := newRepo(t, map[string]string{"m.yaml": salesBase})
	git(t, origin, "branch", "base")
	writeTree(t, origin, map[string]string{"m.yaml": salesEven4})
	git(t, origin, "commit", "-q", "-am", "split orders")
	clone := filepath.Join(t.TempDir(), "clone")
	git(t, origin, "clone", "-q", "--depth=1", "file://"+origin, clone)

	r := scangate(t, clone, "", nil, "diff", "--base", "origin/base")
	wantCode(t, r, 2)
	if !strings.Contains(r.stderr, "no such commit in this repository") {
		t.Errorf("unfetched base: %q", r.stderr)
	}
	git(t, clone, "fetch", "-q", "--depth=1", "origin", "base:refs/remotes/origin/base")
	r = scangate(t, clone, "", nil, "diff", "--base", "origin/base", "--max-added-ms", "2")
	wantCode(t, r, 1) // orders adds 3.0 ms (salesEven4)
	if !strings.Contains(r.stdout, "adds 3.0 ms per scan to orders\n") {
		t.Errorf("shallow diff:\n%s", r.stdout)
	}
}

// Two files, two directories, and the formats the demo pair prints.
func TestDiffPaths(t *testing.T) {
	dir := t.TempDir()
	writeTree(t, dir, map[string]string{"old.yaml": salesBase, "new.yaml": salesEven4})
	r := scangate(t, dir, "", nil, "diff", "--format", "json", "old.yaml", "new.yaml")
	wantCode(t, r, 0)
	d := diffJSON(t, r.stdout)
	// Two files are the same file: kept, and orders adds 2 segments, 3.0 ms.
	if got := statuses(d); got != "kept:new.yaml sales/orders:changed sales/stores:unchanged" || d.Verdict != "adds 3.0 ms per scan to orders" {
		t.Errorf("statuses %q verdict %q", got, d.Verdict)
	}
	r = scangate(t, dir, salesBase, nil, "diff", "--max-added-ms", "3", "-", "new.yaml")
	wantCode(t, r, 0)
	if !strings.Contains(r.stdout, "scangate diff: - -> new.yaml") || !strings.Contains(r.stdout, "adds 3.0 ms per scan to orders\n") {
		t.Errorf("stdin as the old side:\n%s", r.stdout)
	}
	for _, args := range [][]string{{"old.yaml", "."}, {"old.yaml", "missing.yaml"}, {"-", "-"}} {
		if r := scangate(t, dir, "", nil, append([]string{"diff"}, args...)...); r.code != 2 || r.stderr == "" {
			t.Errorf("%v: exit %d, stderr %q", args, r.code, r.stderr)
		}
	}

	r = scangate(t, root(t), "", nil, "diff", "--format", "json", "testdata/diff/before", "testdata/diff/after")
	wantCode(t, r, 0)
	d = diffJSON(t, r.stdout)
	if got := statuses(d); got != "kept:testdata/diff/after/pump-telemetry.yaml kept:testdata/diff/after/reservoirs.yaml "+
		"pump-telemetry/pump_readings:changed pump-telemetry/pumps:changed reservoir-levels/level_readings:unchanged reservoir-levels/reservoirs:unchanged" {
		t.Errorf("demo statuses %q", got)
	}
	if !strings.HasPrefix(d.Verdict, "adds ") || !strings.Contains(d.Verdict, " ms per scan to pump_readings") {
		t.Errorf("demo verdict %q", d.Verdict)
	}
}

// The demo pair as a pull-request comment; run with -update after a deliberate change.
func TestDiffMarkdownGolden(t *testing.T) {
	args := []string{"diff", "--format", "markdown", "--max-added-ms", "200", "--fail-on-new", "error", "testdata/diff/before", "testdata/diff/after"}
	r := scangate(t, root(t), "", nil, args...)
	wantCode(t, r, 1)
	checkGolden(t, "diff.md", r.stdout)
	if again := scangate(t, root(t), "", nil, args...); again.stdout != r.stdout {
		t.Error("two runs printed different markdown")
	}
	// It renders as intended (goldmark: CommonMark with the GFM table extension): one
	// table with a header, the two changed tables and the model total; one item per
	// breach, new, worsened and resolved finding.
	doc := goldmark.New(goldmark.WithExtensions(extension.Table)).Parser().Parse(text.NewReader([]byte(r.stdout)))
	var tables, rows, items int
	ast.Walk(doc, func(n ast.Node, entering bool) (ast.WalkStatus, error) {
		if entering {
			switch n.Kind() {
			case east.KindTable:
				tables++
			case east.KindTableRow:
				rows++
			case ast.KindListItem:
				if n.Parent().Parent().Kind() == ast.KindDocument {
					items++
				}
			}
		}
		return ast.WalkContinue, nil
	})
	// Items: 2 breaches (added ms, the new scan-overhead error), 1 new, 1 worsened,
	// 2 resolved findings.
	if tables != 1 || rows != 3 || items != 6 {
		t.Errorf("tables %d (want 1), rows %d (want 3), items %d (want 6)\n%s", tables, rows, items, r.stdout)
	}
}

// Reports go to files atomically as check's do; text keeps its colour rules.
func TestDiffOutputs(t *testing.T) {
	out := filepath.Join(t.TempDir(), "deep", "diff.md")
	args := []string{"diff", "--format", "text", "--format", "markdown=" + out, "--format", "json=" + out + ".json", "testdata/diff/before", "testdata/diff/after"}
	r := scangate(t, root(t), "", []string{"CLICOLOR_FORCE=1"}, args...)
	wantCode(t, r, 0)
	md, err := os.ReadFile(out)
	if err != nil || !strings.HasPrefix(string(md), "### scangate diff passed\n") || strings.Contains(string(md), "\x1b[") {
		t.Errorf("markdown file: %v\n%s", err, md)
	}
	js, err := os.ReadFile(out + ".json")
	if err != nil {
		t.Fatal(err)
	}
	diffJSON(t, string(js))
	if !strings.Contains(r.stdout, "\x1b[") || strings.Contains(r.stdout, "### scangate") {
		t.Errorf("only the coloured text goes to stdout:\n%s", r.stdout)
	}
	if r := scangate(t, root(t), "", nil, args[len(args)-2:]...); strings.Contains(r.stdout, "\x1b[") {
		t.Error("text to a pipe must not be coloured")
	}
}

// The README's "Gate a change" excerpts reproduce with the commands they show: every
// fenced block of the section whose first line is "$ scangate ..." is run as written
// (from the repository root), and its other lines must be the output's, in order;
// a "..." line stands for lines left out. The published schema is the one diff
// validates against.
func TestDiffREADMEAndSchema(t *testing.T) {
	readme, err := os.ReadFile(filepath.Join(root(t), "README.md"))
	if err != nil {
		t.Fatal(err)
	}
	_, sec, ok := strings.Cut(string(readme), "\n## Gate a change\n")
	if !ok {
		t.Fatal("README.md lacks the section \"Gate a change\"")
	}
	sec, _, _ = strings.Cut(sec, "\n## ")
	excerpts := 0
	for _, block := range strings.Split(sec, "```")[1:] {
		lang, body, _ := strings.Cut(block, "\n")
		cmd, body, _ := strings.Cut(body, "\n")
		command, ok := strings.CutPrefix(cmd, "$ scangate ")
		if !ok || lang == "" {
			continue
		}
		excerpts++
		r := scangate(t, root(t), "", nil, strings.Fields(command)...)
		if msg := followsInOrder(strings.TrimSuffix(body, "\n"), r.stdout); msg != "" {
			t.Errorf("README %s excerpt of `scangate %s`: %s\noutput:\n%s", lang, command, msg, r.stdout)
		}
	}
	if excerpts < 3 {
		t.Errorf("the section shows %d excerpts with their command, want the text, markdown and github ones", excerpts)
	}
	file, err := os.ReadFile(filepath.Join(root(t), "schema", "diff.schema.json"))
	if err != nil {
		t.Fatal(err)
	}
	if r := scangate(t, root(t), "", nil, "schema", "diff"); r.code != 0 || r.stdout != string(file) {
		t.Errorf("scangate schema diff: exit %d, %d bytes, want schema/diff.schema.json", r.code, len(r.stdout))
	}
}

// followsInOrder says why excerpt is not out with some lines left out: every run of
// lines between "..." lines must be consecutive lines of out, the runs in order; the
// first run starts out and the last ends it unless a "..." stands before or after
// them. "" when it is.
func followsInOrder(excerpt, out string) string {
	lines := strings.Split(strings.TrimSuffix(out, "\n"), "\n")
	parts := strings.Split(excerpt, "\n...\n")
	at := 0
	for i, part := range parts {
		free := i > 0 || strings.HasPrefix(part, "...\n")
		part = strings.TrimPrefix(part, "...\n")
		last := i == len(parts)-1
		openEnd := last && strings.HasSuffix(part, "\n...")
		part = strings.TrimSuffix(part, "\n...")
		want := strings.Split(part, "\n")
		found := -1
		for j := at; j+len(want) <= len(lines); j++ {
			if slices.Equal(lines[j:j+len(want)], want) {
				found = j
				break
			}
			if !free {
				break
			}
		}
		if found < 0 {
			return fmt.Sprintf("lines %q are not next in the output", want)
		}
		at = found + len(want)
		if last && !openEnd && at != len(lines) {
			return fmt.Sprintf("the output goes on after %q", want[len(want)-1])
		}
	}
	return ""
}

// The demo pair as workflow commands; run with -update after a deliberate change.
func TestDiffGitHubGolden(t *testing.T) {
	args := []string{"diff", "--format", "github", "--max-added-ms", "200", "--fail-on-new", "error", "testdata/diff/before", "testdata/diff/after"}
	r := scangate(t, root(t), "", nil, args...)
	wantCode(t, r, 1)
	checkGolden(t, "diff.github", r.stdout)
	// Worked out from the text report of the same pair: one command per new and
	// escalated finding, changed table and breach, each at the head's line.
	lines := strings.Split(strings.TrimSuffix(r.stdout, "\n"), "\n")
	for i, want := range []string{
		"::error file=testdata/diff/after/pump-telemetry.yaml,line=14,col=5,title=scangate scan-overhead::pump_readings: a full scan pays 744 ms",
		"::warning file=testdata/diff/after/pump-telemetry.yaml,line=17,col=5,title=scangate truncated-segments::pump_readings: 233 excess segments",
		"::notice file=testdata/diff/after/pump-telemetry.yaml,line=14,col=5,title=scangate diff::pump_readings changed: segments 274 -> 496 (+222), fixed ms per scan 411 -> 744 (+333)",
		"::notice file=testdata/diff/after/pump-telemetry.yaml,line=26,col=5,title=scangate diff::pumps changed: segments 4 -> 1 (-3), fixed ms per scan 6.0 -> 1.5 (-4.5)",
		"::error file=testdata/diff/after/pump-telemetry.yaml,line=14,col=5,title=scangate gate::pump_readings adds 333 ms per scan, more than the 200 ms allowed (--max-added-ms)",
		"::error file=testdata/diff/after/pump-telemetry.yaml,line=14,col=5,title=scangate gate::new error scan-overhead on pump_readings at testdata/diff/after/pump-telemetry.yaml:14:5 (--fail-on-new error)",
	} {
		if i >= len(lines) || !strings.HasPrefix(lines[i], want) {
			t.Errorf("line %d: want it to start %q\n%s", i+1, want, r.stdout)
		}
	}
	// 24 partitions of 274 segments held 11 excess, 377 of 496 hold 233.
	if len(lines) != 6 || !strings.Contains(lines[1], "(was note; excess segments 11 -> 233)%0Ahint: ") {
		t.Errorf("%d lines, want 6, the escalated one saying what it was:\n%s", len(lines), r.stdout)
	}
}

// In a CI job without --format, diff writes text plus annotations, as check does, and
// appends its Markdown to the step summary after what earlier steps wrote; outside one
// nothing changes.
func TestDiffInCIJob(t *testing.T) {
	pair := []string{"testdata/diff/before", "testdata/diff/after"}
	text := scangate(t, root(t), "", nil, append([]string{"diff"}, pair...)...)
	gh := scangate(t, root(t), "", nil, append([]string{"diff", "--format", "github"}, pair...)...)
	md := scangate(t, root(t), "", nil, append([]string{"diff", "--format", "markdown"}, pair...)...)
	if gh.stdout == "" || !strings.HasPrefix(md.stdout, "### scangate diff passed") {
		t.Fatalf("the demo pair gives no annotations or no Markdown:\n%s\n%s", gh.stdout, md.stdout)
	}
	summary := filepath.Join(t.TempDir(), "summary.md")
	os.WriteFile(summary, []byte("earlier step\n"), 0o644)
	ci := []string{"GITHUB_ACTIONS=true", "GITHUB_STEP_SUMMARY=" + summary}
	for range 2 {
		r := scangate(t, root(t), "", ci, append([]string{"diff"}, pair...)...)
		wantCode(t, r, 0)
		if r.stdout != text.stdout+gh.stdout {
			t.Errorf("in a CI job the default is text plus github:\n%s", r.stdout)
		}
	}
	if got, _ := os.ReadFile(summary); string(got) != "earlier step\n"+md.stdout+md.stdout {
		t.Errorf("the summary keeps the earlier step and both runs:\n%s", got)
	}
	// Outside a CI job: text alone, and a summary file named by the environment is left alone.
	os.WriteFile(summary, []byte("earlier step\n"), 0o644)
	r := scangate(t, root(t), "", []string{"GITHUB_STEP_SUMMARY=" + summary}, append([]string{"diff"}, pair...)...)
	if r.stdout != text.stdout {
		t.Errorf("without GITHUB_ACTIONS diff prints text alone:\n%s", r.stdout)
	}
	if got, _ := os.ReadFile(summary); string(got) != "earlier step\n" {
		t.Errorf("without GITHUB_ACTIONS the summary is untouched:\n%s", got)
	}
	// --output takes one report, so the CI default is text alone there, as for check.
	out := filepath.Join(t.TempDir(), "diff.txt")
	if r := scangate(t, root(t), "", ci, append([]string{"diff", "--output", out}, pair...)...); r.code != 0 || r.stdout != "" {
		t.Errorf("--output in a CI job: exit %d\n%s%s", r.code, r.stdout, r.stderr)
	}
	if got, _ := os.ReadFile(out); string(got) != text.stdout {
		t.Errorf("--output in a CI job writes the text report:\n%s", got)
	}
}

// A report named to the step summary file, by --format NAME=FILE or --output and by any
// spelling of its path, is appended: the runner owns the file and earlier steps' text
// stays. Check and diff alike; two runs keep both.
func TestReportsAppendToTheStepSummary(t *testing.T) {
	dir := t.TempDir()
	summary := filepath.Join(dir, "summary.md")
	os.Symlink(summary, filepath.Join(dir, "link.md"))
	env := []string{"GITHUB_STEP_SUMMARY=" + summary}
	for _, c := range []struct {
		cmd    []string
		target func(path string) []string
	}{
		{[]string{"check", "testdata/demo"}, func(p string) []string { return []string{"--format", "markdown=" + p} }},
		{[]string{"check", "testdata/demo"}, func(p string) []string { return []string{"--format", "markdown", "--output", p} }},
		{[]string{"diff", "testdata/diff/before", "testdata/diff/after"}, func(p string) []string { return []string{"--format", "markdown=" + p} }},
		{[]string{"diff", "testdata/diff/before", "testdata/diff/after"}, func(p string) []string { return []string{"--format", "markdown", "--output", p} }},
	} {
		md := scangate(t, root(t), "", nil, append(append([]string{c.cmd[0]}, "--format", "markdown"), c.cmd[1:]...)...).stdout
		os.WriteFile(summary, []byte("earlier step\n"), 0o644)
		// The summary's own path, then one through a link and an unclean one.
		for _, p := range []string{summary, filepath.Join(dir, "link.md"), filepath.Join(dir, "sub", "..", "summary.md")} {
			args := append(append([]string{c.cmd[0]}, c.target(p)...), c.cmd[1:]...)
			if r := scangate(t, root(t), "", env, args...); r.code == 2 {
				t.Fatalf("%v: exit 2\n%s", args, r.stderr)
			}
		}
		if got, _ := os.ReadFile(summary); string(got) != "earlier step\n"+md+md+md {
			t.Errorf("%s %v: the summary should hold the earlier step and three reports:\n%s", c.cmd[0], c.target("S"), got)
		}
		if info, err := os.Lstat(filepath.Join(dir, "link.md")); err != nil || info.Mode()&os.ModeSymlink == 0 {
			t.Errorf("the link to the summary was replaced: %v", err)
		}
	}
}

// The excerpt matcher itself: gaps only where "..." stands.
func TestFollowsInOrder(t *testing.T) {
	out := "a\nb\nc\nd\n"
	for _, c := range []struct {
		excerpt string
		ok      bool
	}{
		{"a\nb\nc\nd", true}, {"a\n...\nd", true}, {"...\nc\nd", true}, {"a\nb\n...", true},
		{"b\nc\nd", false}, {"a\nb", false}, {"a\nc\n...", false}, {"...\nd\nc", false}, {"a\n...\nb\nd", false},
	} {
		if got := followsInOrder(c.excerpt, out) == ""; got != c.ok {
			t.Errorf("%q in %q: %v, want %v", c.excerpt, out, got, c.ok)
		}
	}
}

// diff reads the project config as check does: the nearest .scangate.yaml from the new
// side up to the repository root, or --config. salesEven4 raises a truncated-segments
// note on both sides; a config that turns the rule off leaves no finding to match.
func TestDiffReadsProjectConfig(t *testing.T) {
	off := "rules:\n  truncated-segments: {severity: off}\n"
	dir := repo(t, map[string]string{"before/m.yaml": salesEven4, "after/m.yaml": salesEven4, "other.yaml": off})
	summary := func(r result) string {
		t.Helper()
		var d struct{ Summary map[string]any }
		if err := json.Unmarshal([]byte(r.stdout), &d); err != nil {
			t.Fatalf("%v\n%s%s", err, r.stdout, r.stderr)
		}
		return fmt.Sprint(d.Summary["unchanged"])
	}
	args := []string{"diff", "--format", "json", "before", "after"}
	if got := summary(scangate(t, dir, "", nil, args...)); got != "1" {
		t.Errorf("without a config: %s unchanged findings, want 1", got)
	}
	if got := summary(scangate(t, dir, "", nil, append(args, "--config", "other.yaml")...)); got != "0" {
		t.Errorf("with --config other.yaml: %s unchanged findings, want 0", got)
	}
	if err := os.WriteFile(filepath.Join(dir, ".scangate.yaml"), []byte(off), 0o644); err != nil {
		t.Fatal(err)
	}
	if got := summary(scangate(t, dir, "", nil, args...)); got != "0" {
		t.Errorf("with the nearest .scangate.yaml: %s unchanged findings, want 0", got)
	}
	// A broken config stops the diff as it stops check: exit 2, the problem at its line.
	if err := os.WriteFile(filepath.Join(dir, ".scangate.yaml"), []byte("rules:\n  truncated-segments: {severity: loud}\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	r := scangate(t, dir, "", nil, args...)
	wantCode(t, r, 2)
	if !strings.Contains(r.stderr, ".scangate.yaml:2:") {
		t.Errorf("stderr lacks the config problem:\n%s", r.stderr)
	}
}

// Two directories: the rename line names the file where it was and where it is, each
// on its own side (the old directory's path, not the new one's twice).
func TestDiffRenameLinePaths(t *testing.T) {
	dir := repo(t, map[string]string{"old/a.yaml": salesBase, "new/b.yaml": salesBase, "old/gone.yaml": stock})
	r := scangate(t, dir, "", nil, "diff", "old", "new")
	wantCode(t, r, 0)
	for _, want := range []string{"file renamed: old/a.yaml -> new/b.yaml (model sales)\n", "file removed: old/gone.yaml (model stock)\n"} {
		if !strings.Contains(r.stdout, want) {
			t.Errorf("output lacks %q:\n%s", want, r.stdout)
		}
	}
}

// The case the states were made for: 100,000 rows over segments of 1,000 need 100
// segments; 49 even partitions of about 2,041 rows take 3 segments each (147, 47 excess)
// and 297 partitions of about 337 rows one each (297, 197 excess). Both are warnings
// (47 >= max(8, 14.7) and 197 >= max(8, 29.7)): the same severity, four times the
// excess, so worsened; the other way round improved.
func TestDiffExcessSegmentsWorsened(t *testing.T) {
	m := func(n string) string {
		return "format: 1\nmodel: m\nengine: {segment_rows: 1000}\ntables:\n  - name: orders\n    rows: 100k\n    partitions: {scheme: even, count: " + n + "}\n"
	}
	dir := repo(t, map[string]string{"old/m.yaml": m("49"), "new/m.yaml": m("297")})
	r := scangate(t, dir, "", nil, "diff", "old", "new")
	wantCode(t, r, 0)
	if !strings.Contains(r.stdout, "\nworsened findings (1):\nnew/m.yaml:7:5: warning: orders: 197 excess segments") ||
		!strings.Contains(r.stdout, "[truncated-segments] (excess segments 47 -> 197)\n") ||
		!strings.Contains(r.stdout, "findings: 0 new, 0 resolved, 1 worsened, 0 improved, 0 unchanged") {
		t.Errorf("47 -> 197 excess segments:\n%s", r.stdout)
	}
	r = scangate(t, dir, "", nil, "diff", "new", "old")
	if !strings.Contains(r.stdout, "\nimproved findings (1):\n") || !strings.Contains(r.stdout, "(excess segments 197 -> 47)") {
		t.Errorf("197 -> 47 excess segments:\n%s", r.stdout)
	}
	// A threshold above the move (+319%) keeps it unchanged.
	r = scangate(t, dir, "", nil, "diff", "--figure-threshold", "320", "old", "new")
	if !strings.Contains(r.stdout, "findings: 0 new, 0 resolved, 0 worsened, 0 improved, 1 unchanged") {
		t.Errorf("--figure-threshold 320:\n%s", r.stdout)
	}
}
