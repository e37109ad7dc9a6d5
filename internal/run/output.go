package run

import (
	"bytes"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"

	"github.com/mattn/go-isatty"

	"github.com/scangate/scangate/internal/report"
)

// Destination is one requested report: a format and where it goes ("" is stdout).
type Destination struct {
	Format report.Format
	Path   string
}

// ParseFormats reads --format NAME or NAME=FILE (repeatable) and --output for a command
// whose reports are of kind k; defaults apply when no --format is given. Every command
// reads the flags the same way, and the registry alone says which names are known.
func ParseFormats(k report.Kind, formats []string, output string, defaults []string) ([]Destination, error) {
	if len(formats) == 0 {
		formats = defaults
	}
	toStdout := 0
	for _, f := range formats {
		if !strings.Contains(f, "=") {
			toStdout++
		}
	}
	if output != "" && toStdout != 1 {
		return nil, fmt.Errorf("--output %s: name exactly one --format without =FILE to write there (got %d)", output, toStdout)
	}
	var outs []Destination
	seenPath := map[string]bool{}
	for _, f := range formats {
		name, path, _ := strings.Cut(f, "=")
		format, ok := report.Lookup(name, k)
		if !ok {
			return nil, fmt.Errorf("--format %q: unknown format; use one of %s", f, report.NameList(k))
		}
		if strings.Contains(f, "=") && path == "" {
			return nil, fmt.Errorf("--format %q: give a file after =, or drop the = to write to standard output", f)
		}
		if path == "" {
			path = output
		}
		if path != "" {
			clean := filepath.Clean(path)
			if seenPath[clean] {
				return nil, fmt.Errorf("--format %q: %s is already the target of another format", f, path)
			}
			seenPath[clean] = true
		}
		outs = append(outs, Destination{Format: format, Path: path})
	}
	return outs, nil
}

// NeedsTables reports whether any of the reports prints per-table figures, so check
// keeps every analysed table to the end only when one does (the job summary counts
// when the runner names its file).
func NeedsTables(outs []Destination) bool {
	for _, o := range outs {
		t := o.Format.Traits()
		if t.NeedsTables || (t.StepSummary && os.Getenv("GITHUB_STEP_SUMMARY") != "") {
			return true
		}
	}
	return false
}

// Write renders every report first, then writes the files atomically, then stdout; a
// report that fails to render leaves nothing written. Only stdout is coloured, and
// only with color. A format with a step summary appends the Markdown rendering of doc
// to the runner's summary file once its own bytes are out.
func Write(outs []Destination, doc report.Doc, stdout io.Writer, color bool) error {
	rendered := make([][]byte, len(outs))
	for i, o := range outs {
		var b bytes.Buffer
		if err := o.Format.Render(&b, doc, color && o.Path == ""); err != nil {
			return fmt.Errorf("writing the %s report: %v", o.Format.Traits().Name, err)
		}
		rendered[i] = b.Bytes()
	}
	for i, o := range outs {
		if o.Path != "" {
			if err := WriteFileAtomic(o.Path, rendered[i]); err != nil {
				return err
			}
		}
	}
	for i, o := range outs {
		if o.Path == "" {
			if _, err := stdout.Write(rendered[i]); err != nil {
				return err
			}
		}
		if o.Format.Traits().StepSummary {
			if err := appendStepSummary(doc); err != nil {
				return err
			}
		}
	}
	return nil
}

// appendStepSummary adds the Markdown rendering of doc to the job page when the runner
// provides GITHUB_STEP_SUMMARY; the runner owns that file, so it is appended to, not
// replaced.
func appendStepSummary(doc report.Doc) error {
	path := os.Getenv("GITHUB_STEP_SUMMARY")
	if path == "" {
		return nil
	}
	md, ok := report.Lookup("markdown", doc.Kind())
	if !ok {
		return nil
	}
	var b bytes.Buffer
	if err := md.Render(&b, doc, false); err != nil {
		return err
	}
	f, err := os.OpenFile(path, os.O_APPEND|os.O_CREATE|os.O_WRONLY, 0o644)
	if err != nil {
		return fmt.Errorf("GITHUB_STEP_SUMMARY: %v", err)
	}
	if _, err := f.Write(b.Bytes()); err != nil {
		f.Close()
		return fmt.Errorf("GITHUB_STEP_SUMMARY: %v", err)
	}
	return f.Close()
}

// UseColor colours only a terminal, and never with --no-color or NO_COLOR set.
// CLICOLOR_FORCE=1 colours any output (a common convention; tests use it).
func UseColor(w any, noColor bool) bool {
	if noColor || os.Getenv("NO_COLOR") != "" {
		return false
	}
	if v := os.Getenv("CLICOLOR_FORCE"); v != "" && v != "0" {
		return true
	}
	f, ok := w.(*os.File)
	return ok && (isatty.IsTerminal(f.Fd()) || isatty.IsCygwinTerminal(f.Fd()))
}

// WriteFileAtomic writes data to path through a temporary file in the same directory and
// a rename, creating parent directories; readers never see a half-written report.
func WriteFileAtomic(path string, data []byte) error {
	dir := filepath.Dir(path)
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return fmt.Errorf("cannot create %s: %v", dir, UnwrapPath(err))
	}
	tmp, err := os.CreateTemp(dir, "."+filepath.Base(path)+".*.tmp")
	if err != nil {
		return fmt.Errorf("cannot write %s: %v", path, UnwrapPath(err))
	}
	defer os.Remove(tmp.Name()) // a no-op after the rename
	if _, err := tmp.Write(data); err != nil {
		tmp.Close()
		return fmt.Errorf("cannot write %s: %v", path, UnwrapPath(err))
	}
	if err := tmp.Chmod(0o644); err != nil {
		tmp.Close()
		return fmt.Errorf("cannot write %s: %v", path, UnwrapPath(err))
	}
	if err := tmp.Close(); err != nil {
		return fmt.Errorf("cannot write %s: %v", path, UnwrapPath(err))
	}
	if err := os.Rename(tmp.Name(), path); err != nil {
		return fmt.Errorf("cannot write %s: %v", path, UnwrapPath(err))
	}
	return nil
}

// RepositoryRoot is the nearest directory at or above the working directory that holds
// .git; without one, the working directory. Report paths are relative to it.
func RepositoryRoot() string {
	wd, err := os.Getwd()
	if err != nil {
		return ""
	}
	if root := repositoryAbove(wd, nil); root != "" {
		return root
	}
	return wd
}

// repositoryAbove is the nearest directory at or above dir (absolute) that holds .git, ""
// for none. seen memoises the answer per directory, so files of one tree cost one walk.
func repositoryAbove(dir string, seen map[string]string) string {
	var walked []string
	root := ""
	for d := dir; ; d = filepath.Dir(d) {
		if r, ok := seen[d]; ok {
			root = r
			break
		}
		walked = append(walked, d)
		if _, err := os.Stat(filepath.Join(d, ".git")); err == nil {
			root = d
			break
		}
		if filepath.Dir(d) == d {
			break
		}
	}
	if seen != nil {
		for _, d := range walked {
			seen[d] = root
		}
	}
	return root
}

// fingerprintPaths picks the path hashed into an input's fingerprints so that it does not
// depend on where scangate runs: the report path when the working directory's repository
// holds the file (as it always was), else the path relative to the nearest repository
// above the file, else, outside any repository, relative to the directory named on the
// command line (a named file's own directory). Report paths stay relative to the working
// directory there, so annotations still find the file.
type fingerprintPaths struct {
	wdRepo string            // "" when the working directory is in no repository
	above  map[string]string // directory -> nearest repository root at or above it
}

func newFingerprintPaths() *fingerprintPaths {
	r := &fingerprintPaths{above: map[string]string{}}
	if wd, err := os.Getwd(); err == nil {
		r.wdRepo = repositoryAbove(wd, r.above)
	}
	return r
}

// key is the path hashed into the fingerprints of one input's findings.
func (r *fingerprintPaths) key(in Input) string {
	if in.name == StdinName {
		return RepositoryPath("", in.name)
	}
	abs, err := filepath.Abs(filepath.FromSlash(in.name))
	if err != nil {
		return RepositoryPath("", in.name)
	}
	if r.wdRepo != "" {
		if _, inside := relToRoot(r.wdRepo, abs); inside {
			return RepositoryPath(r.wdRepo, in.name)
		}
	}
	if root := repositoryAbove(filepath.Dir(abs), r.above); root != "" {
		return RepositoryPath(root, in.name)
	}
	base := filepath.Dir(abs)
	if in.root != "" {
		if b, err := filepath.Abs(in.root); err == nil {
			base = b
		}
	}
	return RepositoryPath(base, in.name)
}

// RepositoryPath is name relative to root with forward slashes, as SARIF, annotations
// and fingerprints want it; a file outside the root keeps the path as given.
func RepositoryPath(root, name string) string {
	if name == StdinName {
		return "stdin"
	}
	abs, err := filepath.Abs(name)
	if err != nil || root == "" {
		return filepath.ToSlash(name)
	}
	rel, err := filepath.Rel(root, abs)
	if err != nil || rel == ".." || strings.HasPrefix(rel, ".."+string(filepath.Separator)) {
		return filepath.ToSlash(name)
	}
	return filepath.ToSlash(rel)
}
