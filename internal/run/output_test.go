package run

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"

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
		{report.CheckReport, []string{"json=a", "sarif=./a"}, "", "already the target of another format"},
		{report.CheckReport, []string{"json", "text"}, "r", "name exactly one --format without =FILE"},
		{report.PlanReport, []string{"json"}, "", "use one of text, svg"},
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
