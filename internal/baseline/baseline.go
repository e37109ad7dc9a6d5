// Package baseline records the findings a repository already has, so a gate adopted on
// a noisy repository fails only on new ones. Entries are matched by the stable
// fingerprint (rule, repository path, table, subject), never by line. An entry absorbs
// its finding only while the finding is no more severe than when it was recorded and
// the entry has not expired.
package baseline

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"
	"time"

	"github.com/scangate/scangate/internal/escape"
	"github.com/scangate/scangate/internal/units"
	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

// SchemaVersion is the version of the baseline file's shape that Build writes. Version 2
// added the date written and each entry's severity, reason and expiry; version 1 files
// are still read (their entries have no severity, so escalation cannot be told, and
// never expire).
const SchemaVersion = 2

// dateLayout is how dates are written: ISO 8601, as waivers write them.
const dateLayout = "2006-01-02"

// DefaultFile is where `scangate baseline write` puts the baseline unless told otherwise.
const DefaultFile = ".scangate-baseline.json"

// File is a baseline file.
type File struct {
	SchemaVersion int     `json:"schema_version"`
	Written       string  `json:"written,omitempty"` // the date it was written, YYYY-MM-DD; "" in version 1
	Entries       []Entry `json:"entries"`
	name          string  // the file it was read from, for messages
}

// Entry is one accepted finding. Fingerprint matches; Severity caps what is accepted
// and Expires ends it; the rest helps reviewers.
type Entry struct {
	Fingerprint string `json:"fingerprint"`
	Rule        string `json:"rule"`
	Severity    string `json:"severity,omitempty"` // the finding's severity when recorded; "" in version 1
	File        string `json:"file"`
	Table       string `json:"table,omitempty"`
	Message     string `json:"message"`
	Reason      string `json:"reason,omitempty"`  // why it is accepted, if the writer said
	Expires     string `json:"expires,omitempty"` // the last day it absorbs its finding, YYYY-MM-DD
	line        int    // where the entry starts in the file read, for messages
}

// Build records findings (schema findings excluded: a broken file is never accepted),
// one entry per fingerprint, sorted so the file diffs cleanly in review. Findings that
// share a fingerprint differ only in their message and severity; the least message and
// the highest severity are kept, so the file does not depend on the order of the
// findings. Stamp adds the date, reason and expiry.
func Build(findings []rules.Finding, uri func(file string) string) File {
	at := map[string]int{}
	out := File{SchemaVersion: SchemaVersion, Entries: []Entry{}}
	for _, f := range findings {
		if f.Rule == rules.Schema.ID {
			continue
		}
		u := uri(f.File)
		fp := rules.Fingerprint(f, u)
		if i, seen := at[fp]; seen {
			e := &out.Entries[i]
			e.Message = min(e.Message, f.Message)
			if sev, _ := rules.ParseSeverity(e.Severity); f.Severity > sev {
				e.Severity = f.Severity.String()
			}
			continue
		}
		at[fp] = len(out.Entries)
		out.Entries = append(out.Entries, Entry{Fingerprint: fp, Rule: f.Rule, Severity: f.Severity.String(), File: u, Table: f.Table, Message: f.Message})
	}
	sort.Slice(out.Entries, func(i, j int) bool {
		a, b := out.Entries[i], out.Entries[j]
		if a.File != b.File {
			return a.File < b.File
		}
		if a.Table != b.Table {
			return a.Table < b.Table
		}
		if a.Rule != b.Rule {
			return a.Rule < b.Rule
		}
		return a.Fingerprint < b.Fingerprint
	})
	return out
}

// Stamp records the date the baseline is written on, and on every entry the reason
// and the last day it absorbs its finding (zero: no expiry), both optional.
func (b *File) Stamp(written time.Time, reason string, expires time.Time) {
	b.Written = written.Format(dateLayout)
	for i := range b.Entries {
		b.Entries[i].Reason = reason
		if !expires.IsZero() {
			b.Entries[i].Expires = expires.Format(dateLayout)
		}
	}
}

// Marshal writes the baseline as indented JSON with a final newline.
func (b File) Marshal() []byte {
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetIndent("", "  ")
	enc.SetEscapeHTML(false)
	_ = enc.Encode(b)               // plain strings and ints cannot fail to encode
	return escape.JSON(buf.Bytes()) // the same values, no hidden rune raw
}

// Parse reads a baseline file: strict JSON valid against the baseline schema, each
// entry's rule a rule of the registry, each fingerprint recorded once. Invalid input
// returns a *schema.Error listing every problem at its line and column.
func Parse(file string, data []byte, lim schema.Limits) (File, error) {
	doc, err := schema.LoadBaseline(file, data, lim)
	if err != nil {
		return File{}, err
	}
	b := decode(doc.Value)
	if ps := b.problems(doc); len(ps) > 0 {
		return File{}, &schema.Error{File: file, Problems: ps}
	}
	b.name = file
	for i := range b.Entries {
		b.Entries[i].line = doc.Pos("/entries/" + strconv.Itoa(i)).Line
	}
	return b, nil
}

// decode reads a document the schema has passed, so every field has its type.
func decode(v any) File {
	root, _ := v.(map[string]any)
	list, _ := root["entries"].([]any)
	number, _ := root["schema_version"].(json.Number)
	version, _ := number.Int64()
	written, _ := root["written"].(string)
	b := File{SchemaVersion: int(version), Written: written, Entries: make([]Entry, 0, len(list))}
	for _, raw := range list {
		e, _ := raw.(map[string]any)
		text := func(k string) string { s, _ := e[k].(string); return s }
		b.Entries = append(b.Entries, Entry{
			Fingerprint: text("fingerprint"), Rule: text("rule"), Severity: text("severity"), File: text("file"),
			Table: text("table"), Message: text("message"), Reason: text("reason"), Expires: text("expires"),
		})
	}
	return b
}

// problems are what the schema cannot say: rules of the registry, fingerprints once.
func (b File) problems(doc *schema.Document) []schema.Problem {
	var out []schema.Problem
	add := func(ptr, msg string) {
		out = append(out, schema.Problem{Pos: doc.Pos(ptr), Path: ptr, Message: msg})
	}
	if _, err := time.Parse(dateLayout, b.Written); b.Written != "" && err != nil {
		add("/written", fmt.Sprintf("%q is not a calendar date; write it as YYYY-MM-DD", b.Written))
	}
	first := make(map[string]int, len(b.Entries))
	for i, e := range b.Entries {
		at := "/entries/" + strconv.Itoa(i)
		if _, err := time.Parse(dateLayout, e.Expires); e.Expires != "" && err != nil {
			add(at+"/expires", fmt.Sprintf("%q is not a calendar date; write it as YYYY-MM-DD", e.Expires))
		}
		switch _, known := rules.Lookup(e.Rule); {
		case e.Rule == rules.Schema.ID:
			add(at+"/rule", "schema findings are never baselined (a broken manifest always fails); remove the entry")
		case !known:
			add(at+"/rule", fmt.Sprintf("unknown rule %q; use one of %s", e.Rule, ruleList()))
		}
		if j, dup := first[e.Fingerprint]; dup {
			line := doc.Pos("/entries/" + strconv.Itoa(j) + "/fingerprint").Line
			add(at+"/fingerprint", fmt.Sprintf("fingerprint %s is already recorded at line %d; remove one of the entries", e.Fingerprint, line))
			continue
		}
		first[e.Fingerprint] = i
	}
	return out
}

// ruleList names the rules a baseline may record: every rule but schema.
func ruleList() string {
	var ids []string
	for _, r := range rules.All() {
		if r.ID != rules.Schema.ID {
			ids = append(ids, r.ID)
		}
	}
	return strings.Join(ids, ", ")
}

// Outcome is what applying a baseline found.
type Outcome struct {
	Fixed     int // entries that match no finding: fixed since the baseline was written
	Escalated int // findings more severe than their entry recorded: they count again
	Expired   int // findings whose entry has expired: they count again
}

// Apply marks the findings the baseline holds, judged on today. An entry absorbs its
// finding (Baselined) unless the finding is now more severe than the entry recorded
// (escalated) or today is past the entry's expiry (expired); those findings count
// again, and their message says which entry and why. Every entry counts toward Fixed
// when it matches no finding, so two entries of one fingerprint (Parse refuses them; a
// File built in code may hold them) are two fixed entries.
func (b File) Apply(findings []rules.Finding, uri func(file string) string, today time.Time) Outcome {
	entry := make(map[string]*Entry, len(b.Entries))
	for i := range b.Entries {
		if e := &b.Entries[i]; entry[e.Fingerprint] == nil {
			entry[e.Fingerprint] = e
		}
	}
	var out Outcome
	matched := map[string]bool{}
	for i := range findings {
		f := &findings[i]
		if f.Rule == rules.Schema.ID {
			continue
		}
		fp := rules.Fingerprint(*f, uri(f.File))
		e := entry[fp]
		if e == nil {
			continue
		}
		matched[fp] = true
		if until, err := time.Parse(dateLayout, e.Expires); err == nil && today.After(until) {
			days := int64(math.Round(today.Sub(until).Hours() / 24))
			f.Message += fmt.Sprintf(" (baseline entry %s expired on %s, %s %s ago; it counts again)",
				b.where(e), e.Expires, units.Num(days), units.Plural(days, "day", "days"))
			out.Expired++
			continue
		}
		if was, err := rules.ParseSeverity(e.Severity); err == nil && f.Severity > was {
			f.Message += fmt.Sprintf(" (escalated: baselined as a %s in %s; it counts again)", was, b.where(e))
			out.Escalated++
			continue
		}
		f.Baselined = true
	}
	for _, e := range b.Entries {
		if !matched[e.Fingerprint] {
			out.Fixed++
		}
	}
	return out
}

// where names an entry for people: "FILE:LINE", or the file alone for an entry built
// in code.
func (b File) where(e *Entry) string {
	name := b.name
	if name == "" {
		name = "the baseline"
	}
	if e.line > 0 {
		return fmt.Sprintf("%s:%d", name, e.line)
	}
	return name
}

// Lapsed lists the findings a new baseline would absorb although an expiry said they
// must count again: those of a manifest waiver that has expired (the expired-waiver
// finding and every finding of its rule on its table), and those whose entry in prior
// (the baseline being written over; zero File for none) has expired by today.
// Recording them silently would undo the expiry, so baseline write asks first.
func Lapsed(findings []rules.Finding, uri func(file string) string, prior File, today time.Time) []rules.Finding {
	type waived struct{ file, table, rule string }
	lapsed := map[waived]bool{}
	for _, f := range findings {
		if rule, ok := strings.CutPrefix(f.Subject, "waiver:"); ok && f.Rule == rules.ExpiredWaiver.ID {
			lapsed[waived{f.File, f.Table, rule}] = true
		}
	}
	expired := map[string]bool{}
	for _, e := range prior.Entries {
		if until, err := time.Parse(dateLayout, e.Expires); err == nil && today.After(until) {
			expired[e.Fingerprint] = true
		}
	}
	var out []rules.Finding
	for _, f := range findings {
		switch {
		case f.Rule == rules.Schema.ID:
		case f.Rule == rules.ExpiredWaiver.ID, lapsed[waived{f.File, f.Table, f.Rule}]:
			out = append(out, f)
		case len(expired) > 0 && expired[rules.Fingerprint(f, uri(f.File))]:
			out = append(out, f)
		}
	}
	return out
}
