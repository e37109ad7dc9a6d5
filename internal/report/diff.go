package report

import (
	"strings"

	"github.com/scangate/scangate/internal/units"

	"github.com/scangate/scangate/internal/change"
)

// DiffResult is everything one run of scangate diff produced. Every diff writer renders
// the same DiffResult, so the formats never disagree.
type DiffResult struct {
	Version  string // scangate's version
	Diff     *change.Diff
	Gate     change.Gate
	Breaches []change.Breach // Gate.Check(Diff)
}

// NewDiffResult judges d against g.
func NewDiffResult(version string, d *change.Diff, g change.Gate) *DiffResult {
	return &DiffResult{Version: version, Diff: d, Gate: g, Breaches: g.Check(d)}
}

// Failed reports whether the change fails the gate or could not be compared.
func (r *DiffResult) Failed() bool { return len(r.Diff.Invalid) > 0 || len(r.Breaches) > 0 }

// breaking is the set of findings (elements of the Diff's finding lists) that fail the
// gate, built once: a change of thousands of findings asks for each.
func (r *DiffResult) breaking() map[*change.FindingChange]bool {
	out := map[*change.FindingChange]bool{}
	for _, b := range r.Breaches {
		if b.Finding != nil {
			out[b.Finding] = true
		}
	}
	return out
}

// changedTables are the tables whose figures differ, with added and removed ones.
func (r *DiffResult) changedTables() []change.TableChange {
	var out []change.TableChange
	for _, t := range r.Diff.Tables() {
		if t.Status != change.Unchanged {
			out = append(out, t)
		}
	}
	return out
}

// counts tallies the tables of the change by status.
func (r *DiffResult) counts() (tables, changed int) {
	for _, t := range r.Diff.Tables() {
		tables++
		if t.Status != change.Unchanged {
			changed++
		}
	}
	return tables, changed
}

// diffSummary is one line: what was compared and what changed.
func (r *DiffResult) diffSummary() string {
	d := r.Diff
	if len(d.Invalid) > 0 {
		return d.Verdict()
	}
	tables, changed := r.counts()
	models := 0
	for _, m := range d.Models {
		if m.Status != change.Unchanged {
			models++
		}
	}
	return plural(len(d.Models), "model") + ", " + plural(tables, "table") + ": " +
		units.Num(int64(changed)) + " changed; findings: " + units.Num(int64(len(d.Introduced))) + " new, " +
		units.Num(int64(len(d.Resolved))) + " resolved, " + units.Num(int64(len(d.Worsened))) + " worsened, " +
		units.Num(int64(len(d.Improved))) + " improved, " + units.Num(int64(len(d.Unchanged))) + " unchanged"
}

// crossed lists the limits the change crosses as flags, in gateFlags' order: only
// those with a breach.
func (r *DiffResult) crossed() []string {
	kinds := map[string]bool{}
	for _, b := range r.Breaches {
		kinds[b.Kind] = true
	}
	g := r.Gate
	var parts []string
	if g.MaxAddedMs != nil && kinds["added-ms"] {
		parts = append(parts, "--max-added-ms "+change.Limit(*g.MaxAddedMs))
	}
	if g.MaxAddedSegments != nil && kinds["added-segments"] {
		parts = append(parts, "--max-added-segments "+change.Limit(float64(*g.MaxAddedSegments)))
	}
	if g.FailOnNew != 0 && kinds["new-finding"] {
		parts = append(parts, "--fail-on-new "+g.FailOnNew.String())
	}
	return parts
}

// gateFlags lists the limits the gate checks as flags: "--max-added-ms 500"; empty
// when none is set.
func (r *DiffResult) gateFlags() []string {
	g := r.Gate
	var parts []string
	if g.MaxAddedMs != nil {
		parts = append(parts, "--max-added-ms "+change.Limit(*g.MaxAddedMs))
	}
	if g.MaxAddedSegments != nil {
		parts = append(parts, "--max-added-segments "+change.Limit(float64(*g.MaxAddedSegments)))
	}
	if g.FailOnNew != 0 {
		parts = append(parts, "--fail-on-new "+g.FailOnNew.String())
	}
	return parts
}

// gateWords says what the gate checks: "--max-added-ms 500, --fail-on-new error", or
// "no limits set".
func (r *DiffResult) gateWords(wrap func(string) string) string {
	parts := r.gateFlags()
	if len(parts) == 0 {
		return "no limits set"
	}
	for i := range parts {
		parts[i] = wrap(parts[i])
	}
	return strings.Join(parts, ", ")
}
