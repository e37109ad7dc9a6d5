package main

import (
	"bytes"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"slices"
	"strings"

	"github.com/scangate/scangate/internal/report"
)

// destination is one requested report: a format and where it goes ("" is stdout).
type destination struct {
	format string
	path   string
}

var writers = map[string]func(io.Writer, *report.Result) error{
	"json":     report.JSON,
	"sarif":    report.SARIF,
	"github":   report.GitHub,
	"markdown": report.Markdown,
	"junit":    report.JUnit,
}

// checkFormats are the formats check writes, in the order its help lists them.
var checkFormats = []string{"text", "json", "sarif", "github", "markdown", "junit"}

// parseOutputs reads check's --format and --output flags. Without --format the report
// is text, plus github annotations when running in a GitHub Actions job.
func parseOutputs(formats []string, output string, inActions bool) ([]destination, error) {
	defaults := []string{"text"}
	if inActions && output == "" {
		defaults = append(defaults, "github")
	}
	return parseFormats(formats, output, defaults, checkFormats)
}

// parseFormats reads --format NAME or NAME=FILE (repeatable) and --output for a command
// that knows the formats in known; defaults apply when no --format is given. check and
// diff share it, so both read the flags the same way.
func parseFormats(formats []string, output string, defaults, known []string) ([]destination, error) {
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
	var outs []destination
	seenPath := map[string]bool{}
	for _, f := range formats {
		name, path, _ := strings.Cut(f, "=")
		if !slices.Contains(known, name) {
			return nil, fmt.Errorf("--format %q: unknown format; use one of %s", f, strings.Join(known, ", "))
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
		outs = append(outs, destination{format: name, path: path})
	}
	return outs, nil
}

// printsTables reports whether any of the reports prints per-table figures, so check
// keeps every analysed table to the end only when one does: json, markdown and junit,
// and github when the job summary (Markdown) is written too.
func printsTables(outs []destination) bool {
	for _, o := range outs {
		switch o.format {
		case "json", "markdown", "junit":
			return true
		case "github":
			if os.Getenv("GITHUB_STEP_SUMMARY") != "" {
				return true
			}
		}
	}
	return false
}

// emit writes check's reports; see writeOutputs.
func emit(outs []destination, r *report.Result, stdout io.Writer, color bool) error {
	render := func(format string, w io.Writer, color bool) error {
		if format == "text" {
			return report.Text(w, r, color)
		}
		return writers[format](w, r)
	}
	after := func(o destination) error {
		if o.format == "github" {
			return appendStepSummary(r)
		}
		return nil
	}
	return writeOutputs(outs, render, stdout, color, after)
}

// writeOutputs renders every report first, then writes the files atomically, then
// stdout; a report that fails to render leaves nothing written. Only text to stdout is
// coloured. after, if set, runs for each destination once its bytes are out.
func writeOutputs(outs []destination, render func(format string, w io.Writer, color bool) error, stdout io.Writer, color bool, after func(destination) error) error {
	rendered := make([][]byte, len(outs))
	for i, o := range outs {
		var b bytes.Buffer
		if err := render(o.format, &b, color && o.path == ""); err != nil {
			return fmt.Errorf("writing the %s report: %v", o.format, err)
		}
		rendered[i] = b.Bytes()
	}
	for i, o := range outs {
		if o.path != "" {
			if err := writeFileAtomic(o.path, rendered[i]); err != nil {
				return err
			}
		}
	}
	for i, o := range outs {
		if o.path == "" {
			if _, err := stdout.Write(rendered[i]); err != nil {
				return err
			}
		}
		if after != nil {
			if err := after(o); err != nil {
				return err
			}
		}
	}
	return nil
}

// appendStepSummary adds the Markdown summary to the job page when the runner provides
// GITHUB_STEP_SUMMARY; the runner owns that file, so it is appended to, not replaced.
func appendStepSummary(r *report.Result) error {
	path := os.Getenv("GITHUB_STEP_SUMMARY")
	if path == "" {
		return nil
	}
	var b bytes.Buffer
	if err := report.Markdown(&b, r); err != nil {
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

// writeFileAtomic writes data to path through a temporary file in the same directory and
// a rename, creating parent directories; readers never see a half-written report.
func writeFileAtomic(path string, data []byte) error {
	dir := filepath.Dir(path)
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return fmt.Errorf("cannot create %s: %v", dir, unwrapPath(err))
	}
	tmp, err := os.CreateTemp(dir, "."+filepath.Base(path)+".*.tmp")
	if err != nil {
		return fmt.Errorf("cannot write %s: %v", path, unwrapPath(err))
	}
	defer os.Remove(tmp.Name()) // a no-op after the rename
	if _, err := tmp.Write(data); err != nil {
		tmp.Close()
		return fmt.Errorf("cannot write %s: %v", path, unwrapPath(err))
	}
	if err := tmp.Chmod(0o644); err != nil {
		tmp.Close()
		return fmt.Errorf("cannot write %s: %v", path, unwrapPath(err))
	}
	if err := tmp.Close(); err != nil {
		return fmt.Errorf("cannot write %s: %v", path, unwrapPath(err))
	}
	if err := os.Rename(tmp.Name(), path); err != nil {
		return fmt.Errorf("cannot write %s: %v", path, unwrapPath(err))
	}
	return nil
}

// repositoryRoot is the nearest directory at or above the working directory that holds
// .git; without one, the working directory. Report paths are relative to it.
func repositoryRoot() string {
	wd, err := os.Getwd()
	if err != nil {
		return ""
	}
	for dir := wd; ; dir = filepath.Dir(dir) {
		if _, err := os.Stat(filepath.Join(dir, ".git")); err == nil {
			return dir
		}
		if filepath.Dir(dir) == dir {
			return wd
		}
	}
}

// repositoryPath is name relative to root with forward slashes, as SARIF, annotations
// and fingerprints want it; a file outside the root keeps the path as given.
func repositoryPath(root, name string) string {
	if name == stdinName {
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
