package rules_test

import (
	"errors"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

// want is one expected finding, read from a "# want:" comment on the line it is about:
//
//	# want: RULE[/SEVERITY][@COLUMN] ["message fragment"][; more...]
type want struct {
	line     int
	rule     string
	severity string
	col      int
	fragment string
	waived   bool
}

var wantEntry = regexp.MustCompile(`^\s*([a-z-]+)(?:/(error|warning|note))?(?:@(\d+))?(\s+waived)?\s*(?:("(?:[^"\\]|\\.)*"))?\s*$`)

func readWants(t *testing.T, path string, data []byte) []want {
	var out []want
	var err error
	for i, line := range strings.Split(string(data), "\n") {
		_, ann, ok := strings.Cut(line, "# want:")
		if !ok {
			continue
		}
		for _, e := range splitWants(ann) {
			m := wantEntry.FindStringSubmatch(e)
			if m == nil {
				t.Fatalf("%s:%d: bad want annotation %q", path, i+1, e)
			}
			col, _ := strconv.Atoi(m[3])
			frag := ""
			if m[5] != "" {
				if frag, err = strconv.Unquote(m[5]); err != nil {
					t.Fatalf("%s:%d: bad fragment %s: %v", path, i+1, m[5], err)
				}
			}
			out = append(out, want{line: i + 1, rule: m[1], severity: m[2], col: col, fragment: frag, waived: m[4] != ""})
		}
	}
	return out
}

// splitWants splits an annotation at the semicolons outside quoted fragments.
func splitWants(s string) []string {
	var out []string
	quoted, start := false, 0
	for i := 0; i < len(s); i++ {
		switch s[i] {
		case '\\':
			i++
		case '"':
			quoted = !quoted
		case ';':
			if !quoted {
				out = append(out, s[start:i])
				start = i + 1
			}
		}
	}
	return append(out, s[start:])
}

// runCase checks one annotated manifest: every finding must be wanted and every want found.
func runCase(t *testing.T, path string) {
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	wants := readWants(t, path, data)
	var got []rules.Finding
	m, err := schema.Load(path, data, schema.DefaultLimits)
	if err != nil {
		var se *schema.Error
		ok := errors.As(err, &se)
		if !ok {
			t.Fatalf("Load: %v", err)
		}
		got = rules.SchemaFindings(se)
	} else {
		got = rules.Run(m, rules.Config{Today: caseToday, Observed: observedBeside(t, path)})
	}
	matched := make([]bool, len(got))
	for _, w := range wants {
		found := false
		for i, f := range got {
			if matched[i] || f.Pos.Line != w.line || f.Rule != w.rule ||
				(w.severity != "" && f.Severity.String() != w.severity) ||
				(w.col != 0 && f.Pos.Col != w.col) || w.waived != (f.Waiver != nil) ||
				!strings.Contains(f.Message, w.fragment) {
				continue
			}
			matched[i], found = true, true
			break
		}
		if !found {
			t.Errorf("%s:%d: want %s%s%s not raised", path, w.line, w.rule, ifSet("/", w.severity), ifSet(" ", strconv.Quote(w.fragment)))
		}
	}
	for i, f := range got {
		if !matched[i] {
			t.Errorf("%s:%d:%d: unexpected %s %s: %s %v", path, f.Pos.Line, f.Pos.Col, f.Severity, f.Rule, f.Message, f.Hints)
		}
	}
	// A finding without a hint leaves the reader without a way to act on it.
	for _, f := range got {
		if f.Rule != rules.Schema.ID && len(f.Hints) == 0 {
			t.Errorf("%s:%d: %s finding has no hint: %s", path, f.Pos.Line, f.Rule, f.Message)
		}
	}
}

// observedBeside loads CASE.observed.json, the survey a case is checked with
// (check --observed), when it lies beside the case.
func observedBeside(t *testing.T, path string) *schema.Survey {
	p := strings.TrimSuffix(path, filepath.Ext(path)) + ".observed.json"
	data, err := os.ReadFile(p)
	if err != nil {
		return nil
	}
	s, err := schema.LoadSurvey(p, data, schema.DefaultLimits)
	if err != nil {
		t.Fatalf("%s: %v", p, err)
	}
	return s
}

func ifSet(prefix, s string) string {
	if s == "" || s == `""` {
		return ""
	}
	return prefix + s
}

// caseToday is the date every case is judged on, so waivers and forecasts do not
// depend on the day the tests run.
var caseToday = time.Date(2026, 1, 1, 0, 0, 0, 0, time.UTC)

// TestRuleCases runs every annotated manifest under testdata/rules, bad, valid, hostile and loads.
func TestRuleCases(t *testing.T) {
	var files []string
	for _, dir := range []string{"../testdata/rules", "../testdata/bad", "../testdata/valid", "../testdata/hostile", "../testdata/loads"} {
		found, _ := filepath.Glob(filepath.Join(dir, "*", "*.yaml"))
		top, _ := filepath.Glob(filepath.Join(dir, "*.yaml"))
		files = append(files, found...)
		files = append(files, top...)
	}
	slices.Sort(files)
	if len(files) < 10 {
		t.Fatalf("only %d case files found", len(files))
	}
	for _, f := range files {
		t.Run(filepath.ToSlash(f), func(t *testing.T) { runCase(t, f) })
	}
}

// TestEveryRuleHasCases makes sure each rule is exercised, firing and quiet.
func TestEveryRuleHasCases(t *testing.T) {
	for _, r := range rules.All() {
		dir := filepath.Join("../testdata/rules", r.ID)
		if r.ID == rules.Schema.ID {
			dir = "../testdata/bad"
		}
		files, _ := filepath.Glob(filepath.Join(dir, "*.yaml"))
		fires, quiet := false, false
		for _, f := range files {
			data, _ := os.ReadFile(f)
			if strings.Contains(string(data), "# want: "+r.ID) || strings.Contains(string(data), "; "+r.ID) {
				fires = true
			}
			if strings.HasPrefix(filepath.Base(f), "quiet") {
				quiet = true
			}
		}
		if !fires || (!quiet && r.ID != rules.Schema.ID) {
			t.Errorf("rule %s: want a firing case and a quiet-*.yaml case in %s (fires %v, quiet %v)", r.ID, dir, fires, quiet)
		}
	}
}

// TestRuleDocs makes sure every rule documents itself.
func TestRuleDocs(t *testing.T) {
	seen := map[string]bool{}
	for _, r := range rules.All() {
		if seen[r.ID] {
			t.Errorf("duplicate rule ID %s", r.ID)
		}
		seen[r.ID] = true
		if !regexp.MustCompile(`^[a-z]+(-[a-z]+)*$`).MatchString(r.ID) || r.Title == "" || r.Why == "" || r.Fix == "" || r.Default == 0 ||
			r.How == "" || r.Bad == "" || r.Good == "" {
			t.Errorf("rule %q is missing its ID form, title, why, fix, how, bad or good snippet, or default severity", r.ID)
		}
	}
}
