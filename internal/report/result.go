package report

import (
	"slices"

	"github.com/scangate/scangate/internal/analysis"
	"github.com/scangate/scangate/rules"
)

// Result is everything one run produced, in the order reports show it. Every writer
// renders the same Result, so the formats never disagree.
type Result struct {
	Version  string         // scangate's version, as `scangate version` prints it
	FailOn   rules.Severity // the lowest severity that fails the run; 0 for never
	Files    []File         // in the order the inputs were given and walked
	Findings []rules.Finding
	Summary  Summary
	Baseline *BaselineUse // nil without --baseline

	uris map[string]string // Files' URIs by name, built on first use
}

// BaselineUse says which baseline a run was compared with and how many of its entries
// no longer match a finding (fixed since it was written).
type BaselineUse struct {
	File  string
	Fixed int
}

// File is one input and what was computed for it.
type File struct {
	Name    string // as reported: the path given or found, "<stdin>" for standard input
	URI     string // path relative to the repository root, with forward slashes
	Model   string
	Invalid bool // could not be read or broke the schema; its findings say why
	// Analysed counts the tables analysed. Tables holds them only when a report prints
	// per-table figures (json, markdown, junit, the job summary): a run over thousands
	// of files that prints only findings does not keep them all to the end.
	Analysed int
	Tables   []*analysis.Table
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
	if r.uris == nil {
		// Every finding asks: one look-up each, not a walk over the files.
		r.uris = make(map[string]string, len(r.Files))
		for _, f := range slices.Backward(r.Files) {
			r.uris[f.Name] = f.URI // the first file of a name wins, as a walk finds it
		}
	}
	if u, ok := r.uris[file]; ok {
		return u
	}
	return file
}

// Fingerprint is the stable identity of a finding in this run.
func (r *Result) Fingerprint(f rules.Finding) string {
	return rules.Fingerprint(f, r.URI(f.File))
}
