// Package rules runs the checks of scangate over a validated manifest and returns
// graded findings. Each rule lives in a file of its own; registry.go lists them.
package rules

import (
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"fmt"
	"strings"

	"github.com/scangate/scangate/schema"
)

// Severity grades a finding. The order matters: a gate fails at or above a level.
type Severity int

// Severities from least to most severe.
const (
	Note Severity = iota + 1
	Warning
	Error
)

func (s Severity) String() string {
	switch s {
	case Note:
		return "note"
	case Warning:
		return "warning"
	case Error:
		return "error"
	}
	return fmt.Sprintf("severity(%d)", int(s))
}

// ParseSeverity reads "error", "warning" or "note".
func ParseSeverity(s string) (Severity, error) {
	switch strings.ToLower(s) {
	case "error":
		return Error, nil
	case "warning":
		return Warning, nil
	case "note":
		return Note, nil
	}
	return 0, fmt.Errorf("unknown severity %q; use error, warning or note", s)
}

// grade is the ladder of a budgeted figure: an error above the budget, a warning above
// warnShare of it, else 0 (no finding).
func grade(value, budget, warnShare float64) Severity {
	switch {
	case value > budget:
		return Error
	case value > warnShare*budget:
		return Warning
	}
	return 0
}

// ParseThreshold reads a gate's level, as the flag named flag gives it: the lowest
// severity that fails, or 0 for "never".
func ParseThreshold(flag, s string) (Severity, error) {
	if s == "never" {
		return 0, nil
	}
	sev, err := ParseSeverity(s)
	if err != nil {
		return 0, fmt.Errorf("%s %q: use error, warning, note or never", flag, s)
	}
	return sev, nil
}

// Finding is one graded result, at the node of the manifest it is about.
type Finding struct {
	Rule     string
	Severity Severity
	File     string
	Pos      schema.Pos
	Table    string // "" for findings about the file as a whole
	Subject  string // what within the table the finding is about, stable across line moves
	Message  string // one line, with the numbers
	Hints    []string
	// Advice is set when Hints[0] is the table's recommendation, shared by every finding
	// of the table: text output prints it once per table and points to it after.
	Advice bool
	// Numbers are the figures behind the message, for machine-readable reports.
	Numbers map[string]float64
	// Waiver is the manifest's waiver that accepts this finding, nil if none.
	Waiver *schema.Waiver
	// Baselined is set when the finding was already recorded in the baseline file.
	Baselined bool
}

// Accepted reports whether the finding is accepted debt (waived or baselined) and so
// never counts toward the exit code.
func (f Finding) Accepted() bool { return f.Waiver != nil || f.Baselined }

// Less orders findings by file, line, column, then rule, so output is deterministic.
func Less(a, b Finding) bool {
	if a.File != b.File {
		return a.File < b.File
	}
	if a.Pos.Line != b.Pos.Line {
		return a.Pos.Line < b.Pos.Line
	}
	if a.Pos.Col != b.Pos.Col {
		return a.Pos.Col < b.Pos.Col
	}
	if a.Rule != b.Rule {
		return a.Rule < b.Rule
	}
	return a.Message < b.Message
}

// SchemaFindings turns a loader error into findings of the schema rule, one per problem.
func SchemaFindings(e *schema.Error) []Finding {
	out := make([]Finding, 0, len(e.Problems))
	for _, p := range e.Problems {
		out = append(out, Finding{
			Rule:     Schema.ID,
			Severity: Schema.Default,
			File:     e.File,
			Pos:      p.Pos,
			Subject:  p.Path,
			Message:  p.Text(),
		})
	}
	return out
}

// Fingerprint identifies a finding across runs and edits: a hash of the rule, the file's
// path relative to the repository root, the table and the finding's subject. Line numbers
// are left out on purpose, so moving a table or editing elsewhere keeps it.
func Fingerprint(f Finding, uri string) string {
	h := sha256.New()
	for _, part := range []string{f.Rule, uri, f.Table, f.Subject} {
		// Length-prefixed, so no text moved between parts can give the same bytes.
		h.Write(binary.AppendUvarint(nil, uint64(len(part))))
		h.Write([]byte(part))
	}
	return hex.EncodeToString(h.Sum(nil)[:16])
}
