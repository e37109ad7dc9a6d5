package run

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"

	"github.com/mattn/go-isatty"

	"github.com/scangate/scangate/internal/report"
	"github.com/scangate/scangate/internal/suggest"
)

// Destination is one requested report: a format and where it goes ("" is stdout).
type Destination struct {
	Format report.Format
	Path   string
	Flag   string // how the user asked for it: --format NAME=FILE or --output FILE
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
	// Two reports bound for one file are refused with the inputs, by GuardOutputs.
	var outs []Destination
	for _, f := range formats {
		name, path, _ := strings.Cut(f, "=")
		format, ok := report.Lookup(name, k)
		if !ok {
			if near, ok := suggest.Nearest(name, report.Names(k)); ok {
				return nil, fmt.Errorf("--format %q: unknown format; did you mean %s? Use one of %s", f, near, report.NameList(k))
			}
			return nil, fmt.Errorf("--format %q: unknown format; use one of %s", f, report.NameList(k))
		}
		if strings.Contains(f, "=") && path == "" {
			return nil, fmt.Errorf("--format %q: give a file after =, or drop the = to write to standard output", f)
		}
		flag := "--format " + f
		if path == "" {
			path, flag = output, "--output "+output
		}
		outs = append(outs, Destination{Format: format, Path: path, Flag: flag})
	}
	return outs, nil
}

// PlanFormats are plan's reports: --format (text when none is given) and --svg FILE,
// which is --format svg=FILE under a name of its own.
func PlanFormats(formats []string, output, svg string) ([]Destination, error) {
	if len(formats) == 0 {
		formats = []string{"text"}
	}
	if svg != "" {
		formats = append(formats, "svg="+svg)
	}
	outs, err := ParseFormats(report.PlanReport, formats, output, nil)
	if err == nil && svg != "" {
		outs[len(outs)-1].Flag = "--svg " + svg
	}
	return outs, err
}

// DefaultFormats are check's and diff's reports without --format: text, plus annotations
// when running in a GitHub Actions job (not with --output, which takes exactly one
// report).
func DefaultFormats(output string) []string {
	if os.Getenv("GITHUB_ACTIONS") == "true" && output == "" {
		return []string{"text", "github"}
	}
	return []string{"text"}
}

// NeedsCharts reports whether any of the reports charts each sweep's front, so check's
// sweeps mark it (rules.Config.Charts); the job summary counts as for NeedsTables.
func NeedsCharts(outs []Destination) bool {
	return anyNeeds(outs, func(t report.Traits) bool { return t.Charts })
}

// NeedsTables reports whether any of the reports prints per-table figures, so check
// keeps every analysed table to the end only when one does (the job summary counts
// when the runner names its file).
func NeedsTables(outs []Destination) bool {
	return anyNeeds(outs, func(t report.Traits) bool { return t.NeedsTables })
}

// anyNeeds reports whether a report's traits say it needs something, the Markdown job
// summary a step-summary format appends included when the runner names its file.
func anyNeeds(outs []Destination, needs func(report.Traits) bool) bool {
	summary := os.Getenv("GITHUB_STEP_SUMMARY") != ""
	for _, o := range outs {
		if t := o.Format.Traits(); needs(t) || (t.StepSummary && summary) {
			return true
		}
	}
	return false
}

// Write renders every report file into a temporary file as it goes (nothing is held
// whole in memory), renames them all into place once every one is complete, then
// renders the reports bound for stdout straight into it; a report that fails to render
// leaves no file written. Only stdout is coloured, and only with color. A report bound
// for the runner's step summary file is appended to it instead (the runner owns that
// file and earlier steps' text must stay). A format with a step summary appends the
// Markdown rendering of doc there once the reports are out, unless a markdown report
// already went there.
func Write(outs []Destination, doc report.Doc, stdout io.Writer, color bool) error {
	summary := os.Getenv("GITHUB_STEP_SUMMARY")
	wantSummary, markdownThere := false, false
	var spools []*spool
	defer func() {
		for _, s := range spools {
			s.discard()
		}
	}()
	for _, o := range outs {
		wantSummary = wantSummary || o.Format.Traits().StepSummary
		if o.Path == "" {
			continue
		}
		toSummary := summary != "" && SamePath(o.Path, summary)
		markdownThere = markdownThere || toSummary && o.Format.Traits().Name == "markdown"
		s, err := newSpool(o.Path, toSummary)
		if err != nil {
			return err
		}
		spools = append(spools, s)
		if err := render(o, doc, s, false); err != nil {
			return err
		}
	}
	for _, s := range spools {
		if err := s.commit(); err != nil {
			return err
		}
	}
	for _, o := range outs {
		if o.Path != "" {
			continue
		}
		watched := Watch(stdout)
		w := bufio.NewWriterSize(watched, 64<<10)
		err := render(o, doc, w, color)
		if err == nil {
			err = w.Flush()
		}
		if watched.Err() != nil {
			return watched.Err() // as stdout said it
		}
		if err != nil {
			return err
		}
	}
	if wantSummary && !markdownThere {
		return appendStepSummary(doc)
	}
	return nil
}

// render writes one report; an error that is not its target's names the format.
func render(o Destination, doc report.Doc, w io.Writer, color bool) error {
	err := o.Format.Render(w, doc, color && o.Path == "")
	if s, ok := w.(*spool); ok && s.err != nil {
		return s.err
	}
	if err != nil {
		return fmt.Errorf("writing the %s report: %v", o.Format.Traits().Name, err)
	}
	return nil
}

// SamePath reports whether a and b name one file: the same clean absolute path, or, when
// both exist, the same file by device and inode (symbolic and hard links followed).
func SamePath(a, b string) bool {
	ca, errA := filepath.Abs(a)
	cb, errB := filepath.Abs(b)
	if errA == nil && errB == nil && ca == cb {
		return true
	}
	ia, errA := os.Stat(a)
	ib, errB := os.Stat(b)
	return errA == nil && errB == nil && os.SameFile(ia, ib)
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
	s, err := newSpool(path, true)
	if err != nil {
		return err
	}
	defer s.discard()
	if err := md.Render(s, doc, false); err != nil {
		return err
	}
	if err := s.commit(); err != nil {
		var te *targetError
		if errors.As(err, &te) {
			err = te.err
		}
		return fmt.Errorf("cannot append to the step summary %s (GITHUB_STEP_SUMMARY): %v", path, err)
	}
	return nil
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
	return isTerminal(w)
}

// isTerminal reports whether w is a terminal.
func isTerminal(w any) bool {
	f, ok := w.(interface{ Fd() uintptr })
	return ok && (isatty.IsTerminal(f.Fd()) || isatty.IsCygwinTerminal(f.Fd()))
}

// WriteFileAtomic writes data to path through a temporary file in the same directory and
// a rename, creating parent directories; readers never see a half-written report.
//
// A path that names a device or a FIFO is written in place, never renamed over: the
// special file stays what it is (/dev/null discards the report, a FIFO passes it on).
func WriteFileAtomic(path string, data []byte) error {
	s, err := newSpool(path, false)
	if err != nil {
		return err
	}
	defer s.discard()
	if _, err := s.Write(data); err != nil {
		return err
	}
	return s.commit()
}

// GuardTargets refuses, before anything is written, a report path that would write
// over one of the run's inputs or over another report of the run: the same file by
// device and inode (symbolic links followed) or the same clean path. flags names each
// target as the user wrote it (e.g. "--format json=a.json"); inputs are the paths the
// run reads (files that do not exist, such as git blobs, are skipped). Checking every
// input once against the few targets keeps it linear in inputs.
func GuardTargets(targets, flags []string, inputs []string) error {
	type target struct {
		path, flag string
		info       os.FileInfo
	}
	var ts []target
	seen := map[string]string{}
	for i, p := range targets {
		if p == "" {
			continue
		}
		clean, _ := filepath.Abs(p)
		if other, ok := seen[clean]; ok {
			return fmt.Errorf("%s: %s is already the target of %s; give each report its own file", flags[i], p, other)
		}
		seen[clean] = flags[i]
		t := target{path: p, flag: flags[i]}
		t.info, _ = os.Stat(p)
		for _, o := range ts {
			if t.info != nil && o.info != nil && t.info.Mode().IsRegular() && os.SameFile(t.info, o.info) {
				return fmt.Errorf("%s: %s is the same file as the target of %s; give each report its own file", t.flag, p, o.flag)
			}
		}
		ts = append(ts, t)
	}
	if len(ts) == 0 {
		return nil
	}
	for _, in := range inputs {
		info, err := os.Stat(in)
		if err != nil {
			continue
		}
		for _, t := range ts {
			if t.info != nil && os.SameFile(info, t.info) {
				return fmt.Errorf("%s: %s is one of the inputs (%s); scangate never writes over what it reads: write the report elsewhere", t.flag, t.path, in)
			}
		}
	}
	return nil
}

// GuardOutputs is GuardTargets for the report files of outs.
func GuardOutputs(outs []Destination, inputs []string) error {
	var paths, flags []string
	for _, o := range outs {
		if o.Path != "" {
			paths = append(paths, o.Path)
			flags = append(flags, o.Flag)
		}
	}
	return GuardTargets(paths, flags, inputs)
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

// Watched passes writes on and keeps the first error, so no command can lose its
// output silently.
type Watched struct {
	w   io.Writer
	err error
}

func (o *Watched) Write(p []byte) (int, error) {
	if o.err != nil {
		return 0, o.err
	}
	n, err := o.w.Write(p)
	if err != nil {
		o.err = err
	}
	return n, err
}

// Fd is the file descriptor beneath, so terminal detection sees through the wrapper.
func (o *Watched) Fd() uintptr {
	if f, ok := o.w.(interface{ Fd() uintptr }); ok {
		return f.Fd()
	}
	return ^uintptr(0)
}

// Watch wraps w.
func Watch(w io.Writer) *Watched { return &Watched{w: w} }

// Err is the first write error, nil if every write went through.
func (o *Watched) Err() error { return o.err }
