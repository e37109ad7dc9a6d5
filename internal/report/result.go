package report

import (
	"github.com/scangate/scangate/internal/analysis"
	"github.com/scangate/scangate/rules"
)

// Result is everything one run produced, in the order reports show it. Every writer
// renders the same Result, so the formats never disagree.
type Result struct {
	Version  string         // scangate's version, as `scangate version` prints it
	FailOn   rules.Severity // the lowest severity that fails the run; 0 for never
	Files    []File         // sorted by name, as the findings are
	Findings []rules.Finding
	Summary  Summary
	Baseline *BaselineUse // nil without --baseline

	byName      map[string]int // File.Name -> index of its first file, built on first use
	byNameFiles int            // len(Files) when byName was built
}

// BaselineUse says which baseline a run was compared with, how many of its entries no
// longer match a finding (fixed since it was written), how many findings it no longer
// absorbs (escalated past their recorded severity, or their entry expired), and whether
// the text log counts the baselined findings instead of listing them.
type BaselineUse struct {
	File               string
	Fixed              int
	Escalated, Expired int
	Hide               bool // --hide-baselined
}

// File is one input and what was computed for it.
type File struct {
	Name string // as reported: the path given or found, "<stdin>" for standard input
	URI  string // path relative to the repository root, with forward slashes
	// Key is the path its findings' fingerprints hash: URI, except for a file outside the
	// working directory's repository, where it does not depend on the working directory.
	// "" means URI.
	Key     string
	Model   string
	Invalid bool // could not be read or broke the schema; its findings say why
	// Analysed counts the tables analysed. Tables holds them in brief (analysis.Row) only
	// when a report prints per-table figures (json, markdown, junit, the job summary): a
	// run over thousands of files that prints only findings does not keep them to the end.
	Analysed int
	Tables   []analysis.Row
}

// Summary counts what a run looked at.
type Summary struct {
	Files   int // manifests read
	Invalid int // of which could not be checked (schema findings)
	Tables  int // tables analysed
}

// Summarize counts the files and tables of r.
func Summarize(files []File) Summary {
	s := Summary{Files: len(files)}
	for _, f := range files {
		if f.Invalid {
			s.Invalid++
		}
		s.Tables += f.Analysed
	}
	return s
}

// Counts tallies the findings that are not accepted debt, by severity.
func (r *Result) Counts() map[rules.Severity]int {
	n := map[rules.Severity]int{}
	for _, f := range r.Findings {
		if !f.Accepted() {
			n[f.Severity]++
		}
	}
	return n
}

// Accepted counts waived and baselined findings.
func (r *Result) Accepted() (waived, baselined int) {
	for _, f := range r.Findings {
		switch {
		case f.Waiver != nil:
			waived++
		case f.Baselined:
			baselined++
		}
	}
	return waived, baselined
}

// Failed reports whether the run fails: an invalid input, or a finding at or above FailOn.
func (r *Result) Failed() bool {
	if r.Summary.Invalid > 0 {
		return true
	}
	for _, f := range r.Findings {
		if r.Fails(f) {
			return true
		}
	}
	return false
}

// Fails reports whether one finding counts toward failing the run: schema problems
// always do, accepted debt (waived or baselined) never does.
func (r *Result) Fails(f rules.Finding) bool {
	if f.Rule == rules.Schema.ID {
		return true
	}
	return !f.Accepted() && r.FailOn != 0 && f.Severity >= r.FailOn
}

// URI is the repository-relative path of a finding's file.
func (r *Result) URI(file string) string {
	if f := r.file(file); f != nil {
		return f.URI
	}
	return file
}

// Key is the path the fingerprints of a finding's file hash (see File.Key).
func (r *Result) Key(file string) string {
	if f := r.file(file); f != nil && f.Key != "" {
		return f.Key
	}
	return r.URI(file)
}

// file finds the first file of a name. Every finding asks, so the files are indexed once
// rather than searched each time (a run of thousands of files). Not safe for concurrent
// first use; reports are rendered one after another.
func (r *Result) file(name string) *File {
	if r.byName == nil || r.byNameFiles != len(r.Files) {
		r.byName = make(map[string]int, len(r.Files))
		for i := len(r.Files) - 1; i >= 0; i-- {
			r.byName[r.Files[i].Name] = i
		}
		r.byNameFiles = len(r.Files)
	}
	if i, ok := r.byName[name]; ok {
		return &r.Files[i]
	}
	return nil
}

// Fingerprint is the stable identity of a finding in this run.
func (r *Result) Fingerprint(f rules.Finding) string {
	return rules.Fingerprint(f, r.Key(f.File))
}
