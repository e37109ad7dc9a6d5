package run

import (
	"bytes"
	"errors"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/scangate/scangate/internal/change"
	"github.com/scangate/scangate/internal/report"
)

// --format and --output read alike for every command; the registry decides the names.
func TestParseFormats(t *testing.T) {
	outs, err := ParseFormats(report.CheckReport, []string{"text", "sarif=out/a.sarif"}, "", nil)
	if err != nil || len(outs) != 2 || outs[0].Format.Traits().Name != "text" || outs[0].Path != "" ||
		outs[1].Format.Traits().Name != "sarif" || outs[1].Path != "out/a.sarif" {
		t.Fatalf("got %+v, %v", outs, err)
	}
	if outs, _ := ParseFormats(report.DiffReport, nil, "", []string{"text"}); len(outs) != 1 || outs[0].Format.Traits().Name != "text" {
		t.Errorf("the defaults apply without --format: %+v", outs)
	}
	if outs, _ := ParseFormats(report.CheckReport, []string{"json"}, "r.json", nil); len(outs) != 1 || outs[0].Path != "r.json" {
		t.Errorf("--output takes the one report bound for stdout: %+v", outs)
	}
	for _, c := range []struct {
		kind    report.Kind
		formats []string
		output  string
		want    string
	}{
		{report.DiffReport, []string{"sarif"}, "", `--format "sarif": unknown format; use one of text, github, json, markdown`},
		{report.CheckReport, []string{"json="}, "", "give a file after ="},
		{report.CheckReport, []string{"json", "text"}, "r", "name exactly one --format without =FILE"},
		{report.PlanReport, []string{"markdown"}, "", "use one of text, json, svg"},
		// A typo one or two letters off names the format meant (internal/suggest).
		{report.CheckReport, []string{"jsn"}, "", `--format "jsn": unknown format; did you mean json? Use one of text, github, json, junit, markdown, sarif`},
		{report.CheckReport, []string{"makdown=r.md"}, "", `--format "makdown=r.md": unknown format; did you mean markdown?`},
		{report.CheckReport, []string{"pdf"}, "", `--format "pdf": unknown format; use one of`},
	} {
		if _, err := ParseFormats(c.kind, c.formats, c.output, nil); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%v %v %q: err %v, want %q", c.kind, c.formats, c.output, err, c.want)
		}
	}
}

// A report file appears whole or not at all: written through a temporary file in the
// same directory, parents created, no temporary file left behind.
func TestWriteFileAtomic(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "a", "b", "r.json")
	if err := WriteFileAtomic(p, []byte("one")); err != nil {
		t.Fatal(err)
	}
	if err := WriteFileAtomic(p, []byte("two")); err != nil {
		t.Fatal(err)
	}
	if data, _ := os.ReadFile(p); string(data) != "two" {
		t.Errorf("read %q, want two", data)
	}
	entries, _ := os.ReadDir(filepath.Dir(p))
	if len(entries) != 1 {
		t.Errorf("left %d entries in the directory, want only the report", len(entries))
	}
	if info, _ := os.Stat(p); info.Mode().Perm() != 0o644 {
		t.Errorf("mode %v, want 0644", info.Mode().Perm())
	}
}

// Reports name files relative to the repository root with forward slashes; a file
// outside the root keeps its path as given, standard input is "stdin".
func TestRepositoryPath(t *testing.T) {
	root := t.TempDir()
	for _, c := range []struct{ name, want string }{
		{filepath.Join(root, "models", "a.yaml"), "models/a.yaml"},
		{StdinName, "stdin"},
		{filepath.Join(filepath.Dir(root), "elsewhere.yaml"), filepath.ToSlash(filepath.Join(filepath.Dir(root), "elsewhere.yaml"))},
	} {
		if got := RepositoryPath(root, c.name); got != c.want {
			t.Errorf("RepositoryPath(%q) = %q, want %q", c.name, got, c.want)
		}
	}
}

// Write renders every report before writing any: a format that cannot render the
// document leaves no file behind.
func TestWriteIsAllOrNothing(t *testing.T) {
	dir := t.TempDir()
	text, _ := report.Lookup("text", report.CheckReport)
	sarif, _ := report.Lookup("sarif", report.CheckReport)
	outs := []Destination{{Format: text, Path: filepath.Join(dir, "r.txt")}, {Format: sarif, Path: filepath.Join(dir, "r.sarif")}}
	var stdout bytes.Buffer
	// A plan is no document sarif renders.
	if err := Write(outs, &report.Plan{}, &stdout, false); err == nil {
		t.Fatal("want an error for a document sarif does not render")
	}
	if entries, _ := os.ReadDir(dir); len(entries) != 0 || stdout.Len() != 0 {
		t.Errorf("wrote %d files and %d bytes to stdout after a failed render", len(entries), stdout.Len())
	}
}

// SamePath: the same clean absolute path, or the same file through a link.
func TestSamePath(t *testing.T) {
	dir := t.TempDir()
	t.Chdir(dir)
	p := filepath.Join(dir, "summary.md")
	os.WriteFile(p, []byte("x"), 0o644)
	os.Symlink(p, filepath.Join(dir, "link.md"))
	os.Link(p, filepath.Join(dir, "hard.md"))
	for _, c := range []struct {
		a    string
		same bool
	}{
		{p, true}, {"summary.md", true}, {"./sub/../summary.md", true}, {"link.md", true}, {"hard.md", true},
		{"other.md", false}, {filepath.Join(dir, "missing", "..", "other.md"), false},
	} {
		if got := SamePath(c.a, p); got != c.same {
			t.Errorf("SamePath(%q, %q) = %v, want %v", c.a, p, got, c.same)
		}
	}
	// A summary file the runner has not created yet is still matched by its path.
	if !SamePath("./later.md", filepath.Join(dir, "later.md")) {
		t.Error("a missing file is not matched by its clean path")
	}
}

// A report bound for the step summary file is appended, never renamed over it, so
// earlier steps' text stays; two runs keep both. Other files are still replaced.
func TestWriteAppendsToTheStepSummary(t *testing.T) {
	dir := t.TempDir()
	summary := filepath.Join(dir, "summary.md")
	os.WriteFile(summary, []byte("earlier step\n"), 0o644)
	before, _ := os.Stat(summary)
	t.Setenv("GITHUB_STEP_SUMMARY", summary)
	os.Symlink(summary, filepath.Join(dir, "link.md"))
	md, _ := report.Lookup("markdown", report.CheckReport)
	text, _ := report.Lookup("text", report.CheckReport)
	doc := &report.Result{Summary: report.Summary{Files: 1}}
	var one bytes.Buffer
	md.Render(&one, doc, false)
	other := filepath.Join(dir, "r.txt")
	for _, path := range []string{summary, filepath.Join(dir, "link.md")} {
		outs := []Destination{{Format: md, Path: path}, {Format: text, Path: other}}
		if err := Write(outs, doc, &bytes.Buffer{}, false); err != nil {
			t.Fatal(err)
		}
	}
	if got, _ := os.ReadFile(summary); string(got) != "earlier step\n"+one.String()+one.String() {
		t.Errorf("summary:\n%s", got)
	}
	if after, _ := os.Stat(summary); !os.SameFile(before, after) {
		t.Error("the summary file was replaced, not appended to")
	}
	if info, _ := os.Lstat(filepath.Join(dir, "link.md")); info.Mode()&os.ModeSymlink == 0 {
		t.Error("the link to the summary was replaced")
	}
	var txt bytes.Buffer
	text.Render(&txt, doc, false)
	if got, _ := os.ReadFile(other); string(got) != txt.String() {
		t.Errorf("another report file is written whole once, got:\n%s", got)
	}
}

// github's step summary trait appends the Markdown once, even when a markdown report
// is also bound for the summary file.
func TestWriteStepSummaryOnce(t *testing.T) {
	summary := filepath.Join(t.TempDir(), "summary.md")
	t.Setenv("GITHUB_STEP_SUMMARY", summary)
	md, _ := report.Lookup("markdown", report.DiffReport)
	gh, _ := report.Lookup("github", report.DiffReport)
	doc := report.NewDiffResult("test", &change.Diff{Base: "a", Head: "b"}, change.Gate{})
	var one bytes.Buffer
	md.Render(&one, doc, false)
	for _, outs := range [][]Destination{{{Format: gh}}, {{Format: gh}, {Format: md, Path: summary}}} {
		os.Remove(summary)
		if err := Write(outs, doc, &bytes.Buffer{}, false); err != nil {
			t.Fatal(err)
		}
		if got, _ := os.ReadFile(summary); string(got) != one.String() {
			t.Errorf("%d reports: summary:\n%s\nwant the Markdown once:\n%s", len(outs), got, one.String())
		}
	}
}

// Two reports bound for one file, by the same clean path or through a link, are refused
// before anything is written, naming both flags.
func TestGuardTargetsOneFileOneReport(t *testing.T) {
	dir := t.TempDir()
	a := filepath.Join(dir, "a.json")
	outs, err := ParseFormats(report.CheckReport, []string{"json=" + a, "sarif=" + dir + "/./a.json"}, "", nil)
	if err != nil {
		t.Fatal(err)
	}
	if err := GuardOutputs(outs, nil); err == nil || !strings.Contains(err.Error(), "is already the target of --format json="+a) {
		t.Errorf("same clean path: %v", err)
	}
	if err := os.WriteFile(a, nil, 0o644); err != nil {
		t.Fatal(err)
	}
	link := filepath.Join(dir, "link.json")
	if err := os.Symlink(a, link); err != nil {
		t.Fatal(err)
	}
	err = GuardTargets([]string{a, link}, []string{"--format json=" + a, "--format sarif=" + link}, nil)
	if err == nil || !strings.Contains(err.Error(), "is the same file as the target of --format json=") {
		t.Errorf("through a link: %v", err)
	}
	if entries, _ := os.ReadDir(dir); len(entries) != 2 {
		t.Errorf("the guard wrote something: %d entries", len(entries))
	}
}

// bulky is a format that writes size bytes and reports, at the end of its rendering, how
// many of them had already reached a temporary file beside its target.
type bulky struct {
	size   int
	dir    string
	onDisk *int64
	fail   bool
}

func (b bulky) Traits() report.Traits {
	return report.Traits{Name: "bulky", Kinds: report.CheckReport}
}

func (b bulky) Render(w io.Writer, _ report.Doc, _ bool) error {
	if b.fail {
		return errors.New("refused")
	}
	line := bytes.Repeat([]byte("x"), 1023)
	for written := 0; written < b.size; written += 1024 {
		if _, err := w.Write(append(line, '\n')); err != nil {
			return err
		}
	}
	entries, _ := os.ReadDir(b.dir)
	for _, e := range entries {
		if info, err := e.Info(); err == nil && strings.HasSuffix(e.Name(), ".tmp") {
			*b.onDisk = info.Size()
		}
	}
	return nil
}

// A report streams into its temporary file as it renders (it is never held whole), and
// is still all or nothing: a later report's failure leaves neither it nor its temporary
// file behind.
func TestWriteStreamsToTheTemporaryFile(t *testing.T) {
	dir := t.TempDir()
	var onDisk int64
	big := bulky{size: 4 << 20, dir: dir, onDisk: &onDisk}
	target := filepath.Join(dir, "r.txt")
	if err := Write([]Destination{{Format: big, Path: target}}, &report.Result{}, &bytes.Buffer{}, false); err != nil {
		t.Fatal(err)
	}
	if onDisk < 4<<20-64<<10 {
		t.Errorf("%d bytes on disk at the end of the rendering, want all but a buffer's worth of %d", onDisk, 4<<20)
	}
	if info, err := os.Stat(target); err != nil || info.Size() != 4<<20 {
		t.Fatalf("target: %v %v", info, err)
	}
	os.Remove(target)
	failing := bulky{fail: true}
	err := Write([]Destination{{Format: big, Path: target}, {Format: failing, Path: filepath.Join(dir, "other.txt")}}, &report.Result{}, &bytes.Buffer{}, false)
	if err == nil || !strings.Contains(err.Error(), "writing the bulky report: refused") {
		t.Fatalf("err = %v", err)
	}
	if entries, _ := os.ReadDir(dir); len(entries) != 0 {
		t.Errorf("left %v after a failed report", entries)
	}
}

// A device is written in place once the report is complete, never renamed over.
func TestWriteToADevice(t *testing.T) {
	text, _ := report.Lookup("text", report.CheckReport)
	if err := Write([]Destination{{Format: text, Path: os.DevNull}}, &report.Result{}, &bytes.Buffer{}, false); err != nil {
		t.Fatal(err)
	}
	if info, err := os.Stat(os.DevNull); err != nil || info.Mode().IsRegular() {
		t.Fatalf("%s: %v %v", os.DevNull, info, err)
	}
	if err := Write([]Destination{{Format: text, Path: t.TempDir()}}, &report.Result{}, &bytes.Buffer{}, false); err == nil || !strings.Contains(err.Error(), "it is a directory") {
		t.Errorf("a directory as target: %v", err)
	}
}
