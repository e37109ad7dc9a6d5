package report

import (
	"bytes"
	"slices"
	"strings"
	"testing"

	"github.com/scangate/scangate/rules"
)

var allKinds = []Kind{CheckReport, DiffReport, PlanReport}

// docsByKind is one real document of every kind.
func docsByKind(t *testing.T) map[Kind]Doc {
	t.Helper()
	return map[Kind]Doc{
		CheckReport: handResult(),
		DiffReport:  diffDoc(t),
		PlanReport:  planDoc(t, "m.yaml", fixtureManifest),
	}
}

// The formats and the documents each renders, as help text and flag validation list
// them. A new format must be added here on purpose.
func TestRegisteredFormats(t *testing.T) {
	want := map[string]Kind{
		"text":     CheckReport | DiffReport | PlanReport,
		"json":     CheckReport | DiffReport | PlanReport,
		"markdown": CheckReport | DiffReport,
		"sarif":    CheckReport,
		"github":   CheckReport | DiffReport,
		"junit":    CheckReport,
		"svg":      PlanReport,
	}
	for name, f := range registry {
		tr := f.Traits()
		if tr.Name != name {
			t.Errorf("registered as %q but its traits name %q", name, tr.Name)
		}
		if k, ok := want[name]; !ok {
			t.Errorf("unexpected format %q", name)
		} else if tr.Kinds != k {
			t.Errorf("%s renders kinds %b, want %b", name, tr.Kinds, k)
		}
		// Only text colours; only github also writes the job summary.
		if tr.Colours != (name == "text") || tr.StepSummary != (name == "github") {
			t.Errorf("%s: Colours %v, StepSummary %v", name, tr.Colours, tr.StepSummary)
		}
	}
	for name := range want {
		if _, ok := registry[name]; !ok {
			t.Errorf("format %q is not registered", name)
		}
	}
}

// Render accepts exactly the kinds a format claims: the others are an error that names
// the format and the kind, and nothing is written.
func TestFormatsRenderExactlyTheirKinds(t *testing.T) {
	docs := docsByKind(t)
	for name, f := range registry {
		kinds := f.Traits().Kinds
		for _, k := range allKinds {
			claims := kinds&k != 0
			if _, ok := Lookup(name, k); ok != claims {
				t.Errorf("Lookup(%q, %s) = %v, but the format claims it: %v", name, k, ok, claims)
			}
			var b bytes.Buffer
			err := f.Render(&b, docs[k], false)
			switch {
			case claims && err != nil:
				t.Errorf("%s on a %s report: %v", name, k, err)
			case claims && b.Len() == 0:
				t.Errorf("%s wrote nothing for a %s report", name, k)
			case !claims && err == nil:
				t.Errorf("%s rendered a %s report it does not claim", name, k)
			case !claims && (!strings.Contains(err.Error(), name) || !strings.Contains(err.Error(), k.String())):
				t.Errorf("%s on a %s report: the error %q should name the format and the kind", name, k, err)
			case !claims && b.Len() > 0:
				t.Errorf("%s wrote %q before refusing a %s report", name, b.String(), k)
			}
		}
	}
	if _, ok := Lookup("pdf", CheckReport); ok {
		t.Error("Lookup found a format that does not exist")
	}
}

// Names lists text first, then the others by name, and exactly the formats Lookup finds.
func TestNamesTextFirstThenSorted(t *testing.T) {
	for _, k := range allKinds {
		names := Names(k)
		var found []string
		for name := range registry {
			if _, ok := Lookup(name, k); ok {
				found = append(found, name)
			}
		}
		slices.Sort(found)
		got := slices.Clone(names)
		slices.Sort(got)
		if !slices.Equal(got, found) {
			t.Errorf("Names(%s) = %v, but Lookup finds %v", k, names, found)
		}
		if len(names) == 0 || names[0] != "text" {
			t.Errorf("Names(%s) = %v: text renders every kind and comes first", k, names)
			continue
		}
		if !slices.IsSorted(names[1:]) || len(slices.Compact(slices.Clone(names))) != len(names) {
			t.Errorf("Names(%s) = %v: the others should follow once each, by name", k, names)
		}
		if NameList(k) != strings.Join(names, ", ") {
			t.Errorf("NameList(%s) = %q", k, NameList(k))
		}
	}
	if got := Names(CheckReport); !slices.Equal(got, []string{"text", "github", "json", "junit", "markdown", "sarif"}) {
		t.Errorf("Names(check) = %v", got)
	}
}

// NeedsTables is what lets check drop the analysed tables: it must be set for exactly
// the formats whose output changes when Files[i].Tables is dropped.
func TestNeedsTablesExactlyWhenTablesChangeTheOutput(t *testing.T) {
	kept := analysedResult(t, "m.yaml", "conf/m.yaml", fixtureManifest, rules.Error)
	dropped := withoutTables(kept)
	if len(kept.Files[0].Tables) != 4 || dropped.Files[0].Tables != nil || kept.Summary != dropped.Summary {
		t.Fatalf("fixture: kept %d tables, dropped %v, summaries %+v %+v", len(kept.Files[0].Tables), dropped.Files[0].Tables, kept.Summary, dropped.Summary)
	}
	for _, name := range Names(CheckReport) {
		differs := render(t, name, kept, false) != render(t, name, dropped, false)
		if needs := registry[name].Traits().NeedsTables; differs != needs {
			t.Errorf("%s: output changes without tables: %v; NeedsTables: %v", name, differs, needs)
		}
	}
}

// Charts is what lets check's sweeps be lean (no front): it must be set for exactly the
// formats whose output changes when the fronts are dropped, and imply NeedsTables.
func TestChartsExactlyWhenFrontsChangeTheOutput(t *testing.T) {
	kept := analysedResult(t, "m.yaml", "conf/m.yaml", fixtureManifest, rules.Error)
	lean := withoutFronts(kept)
	fronts := 0
	for _, r := range kept.Files[0].Tables {
		if r.Report.Layouts != nil {
			fronts += len(r.Report.Layouts.Front)
		}
	}
	if fronts == 0 {
		t.Fatal("fixture: no layout on any front; the test would show nothing")
	}
	for _, name := range Names(CheckReport) {
		tr := registry[name].Traits()
		differs := render(t, name, kept, false) != render(t, name, lean, false)
		if differs != tr.Charts || (tr.Charts && !tr.NeedsTables) {
			t.Errorf("%s: output changes without fronts: %v; Charts: %v, NeedsTables: %v", name, differs, tr.Charts, tr.NeedsTables)
		}
	}
}

// Colour escapes (SGR sequences, ECMA-48 CSI "ESC [") appear only in a format that
// colours and only when colour is asked for; a colouring format does colour then.
func TestColourOnlyWhenAskedAndSupported(t *testing.T) {
	docs := docsByKind(t)
	for name, f := range registry {
		tr := f.Traits()
		for _, k := range allKinds {
			if tr.Kinds&k == 0 {
				continue
			}
			for _, color := range []bool{false, true} {
				has := strings.Contains(render(t, name, docs[k], color), "\x1b[")
				if has && !(tr.Colours && color) {
					t.Errorf("%s %s report, color %v: colour escapes in the output (Colours: %v)", name, k, color, tr.Colours)
				}
				// Check and diff text carry severities and verdicts worth colouring.
				if !has && tr.Colours && color && k != PlanReport {
					t.Errorf("%s %s report: no colour although asked for and supported", name, k)
				}
			}
		}
	}
}
