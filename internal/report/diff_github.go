package report

import (
	"io"
	"strings"

	"github.com/scangate/scangate/internal/change"
	"github.com/scangate/scangate/internal/escape"
	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

// writeDiffGitHub writes workflow commands for what the change does, so the runner
// annotates the head's lines: each new finding at its severity, each worsened finding
// at its new one with what moved (improved ones are not annotated), a notice per changed table with its segments and fixed ms
// per scan before -> after, and an error per gate breach. A file that cannot be compared
// gets its schema errors instead. Escaping is check's (command).
func writeDiffGitHub(w io.Writer, r *DiffResult, _ bool) error {
	d := r.Diff
	keys := fileKeys(d)
	var b strings.Builder
	if len(d.Invalid) > 0 {
		for _, inv := range d.Invalid {
			for _, f := range inv.Findings {
				msg, pos := findingLines(f, ""), f.Pos
				if inv.Side == "base" {
					// The base's lines are not the head's: the file alone, the side named.
					msg, pos = "in the base ("+escape.Text(d.Base)+"): "+msg, schema.Pos{}
				}
				command(&b, "error", keys.of(f.File), pos, "scangate "+f.Rule, msg)
			}
		}
		_, err := io.WriteString(w, b.String())
		return err
	}
	finding := func(f rules.Finding, suffix string) {
		if !f.Accepted() { // accepted debt is not annotated, as in check
			command(&b, commandLevel(f.Severity), keys.of(f.File), f.Pos, "scangate "+f.Rule, findingLines(f, suffix))
		}
	}
	for _, f := range d.Introduced {
		finding(f.Finding, "")
	}
	for _, f := range d.Worsened {
		finding(f.Finding, " ("+f.Moved()+")")
	}
	label := d.Labeler()
	heads := map[[2]string]change.TableChange{} // the head's tables, for the breaches
	for _, t := range r.changedTables() {
		file, pos := keys.of(t.HeadFile), t.HeadPos
		if t.HeadFile == "" {
			file = keys.of(t.BaseFile) // removed: the base's line is not the head's
		} else {
			heads[[2]string{t.Model, t.Name}] = t
		}
		command(&b, "notice", file, pos, "scangate diff", tableWords(label(t), t))
	}
	for _, br := range r.Breaches {
		file, pos := breachPlace(heads, keys, br)
		command(&b, "error", file, pos, "scangate gate", escape.Text(br.Message))
	}
	_, err := io.WriteString(w, b.String())
	return err
}

// tableWords is a changed table in one line: "pumps changed: segments 4 -> 1 (-3),
// fixed ms per scan 6.0 -> 1.5 (-4.5)", a missing side written –.
func tableWords(label string, t change.TableChange) string {
	parts := []string{}
	for _, x := range tableMetrics(t) {
		if x.name == "segments" || x.name == "fixed ms per scan" {
			parts = append(parts, x.name+" "+x.before+" -> "+x.after+" ("+x.delta+")")
		}
	}
	return escape.Text(label) + " " + string(t.Status) + ": " + strings.Join(parts, ", ")
}

// breachPlace is where a breach is annotated: a new finding at its own line, a limit
// at the line of the table that crosses it (a changed table of the head: only those
// add segments or ms).
func breachPlace(heads map[[2]string]change.TableChange, keys fileKeyMap, br change.Breach) (string, schema.Pos) {
	if br.Finding != nil {
		return keys.of(br.Finding.Finding.File), br.Finding.Finding.Pos
	}
	t := heads[[2]string{br.Model, br.Table}]
	return keys.of(t.HeadFile), t.HeadPos
}

// fileKeyMap maps a file's reported name (a path, or REV:path) to its repository path,
// the path annotations need.
type fileKeyMap map[string]string

func fileKeys(d *change.Diff) fileKeyMap {
	m := fileKeyMap{}
	add := func(f *change.File) {
		if f != nil && f.Key != "" {
			m[f.Name] = f.Key
		}
	}
	for _, fc := range d.Files {
		add(fc.Base)
		add(fc.Head)
	}
	for i := range d.Invalid {
		add(&d.Invalid[i].File)
	}
	return m
}

// of is the repository path of a file, the name itself when it has none.
func (m fileKeyMap) of(name string) string {
	if k, ok := m[name]; ok {
		return k
	}
	return name
}
