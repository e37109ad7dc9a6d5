package report

import (
	"regexp"
	"strings"
	"testing"

	"github.com/scangate/scangate/internal/change"
	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

// The fixture diff (quiet split into 20 partitions, gate --max-added-ms 1 --fail-on-new
// warning) as workflow commands: the new warning at its line, a notice at the table's
// line with segments and ms before -> after, and both breaches as errors; the base
// path is the repository path (the file's key), not the reported REV:path.
func TestDiffGitHubFixture(t *testing.T) {
	want := "::warning file=m.yaml,line=14,col=5,title=scangate truncated-segments::quiet: 15 excess segments: partitions hold 20 segments where 5 would do (fill 25%25), 22.5 ms of fixed CPU per scan%0Ahint: use count: 5: 20 -> 5 partitions, 20 -> 5 segments, -22.5 ms per scan\n" +
		"::notice file=m.yaml,line=12,col=5,title=scangate diff::quiet changed: segments 5 -> 20 (+15), fixed ms per scan 7.5 -> 30.0 (+22.5)\n" +
		"::error file=m.yaml,line=12,col=5,title=scangate gate::quiet adds 22.5 ms per scan, more than the 1 ms allowed (--max-added-ms)\n" +
		"::error file=m.yaml,line=14,col=5,title=scangate gate::new warning truncated-segments on quiet at head:m.yaml:14:5 (--fail-on-new warning)\n"
	if got := render(t, "github", diffDoc(t), false); got != want {
		t.Errorf("got:\n%s\nwant:\n%s", got, want)
	}
}

// hostileDiff is built by hand: a kept file whose repository path holds : , and %, a
// table whose name holds a line break and a percent sign, an added and a removed table,
// an unchanged one, a new finding, a waived new finding and one that rose from note
// to warning.
func hostileDiff() *DiffResult {
	base := &change.File{Name: "REV:m,1.yaml", Key: "dir:a,b/100%.yaml", Model: "m"}
	head := &change.File{Name: "m,1.yaml", Key: "dir:a,b/100%.yaml", Model: "m"}
	odd := "or%ders\r\n::error::x"
	tables := []change.TableChange{
		{Model: "m", Name: odd, Status: change.Changed, BaseFile: base.Name, HeadFile: head.Name,
			BasePos: schema.Pos{Line: 5, Col: 5}, HeadPos: schema.Pos{Line: 6, Col: 5},
			Before: &change.Figures{Segments: 10, FixedMs: 15}, After: &change.Figures{Segments: 12, FixedMs: 18}},
		{Model: "m", Name: "fresh", Status: change.Added, HeadFile: head.Name, HeadPos: schema.Pos{Line: 9, Col: 5},
			After: &change.Figures{Segments: 2, FixedMs: 3}},
		{Model: "m", Name: "kept", Status: change.Unchanged, BaseFile: base.Name, HeadFile: head.Name,
			Before: &change.Figures{Segments: 1, FixedMs: 1.5}, After: &change.Figures{Segments: 1, FixedMs: 1.5}},
		{Model: "m", Name: "gone", Status: change.Removed, BaseFile: base.Name, BasePos: schema.Pos{Line: 12, Col: 5},
			Before: &change.Figures{Segments: 4, FixedMs: 6}},
	}
	waiver := &schema.Waiver{Rule: "scan-overhead", Reason: "later"}
	d := &change.Diff{
		Base: "REV", Head: "working tree",
		Files:  []change.FileChange{{Status: change.FileKept, Model: "m", Base: base, Head: head}},
		Models: []change.ModelChange{change.NewModelChange("m", change.Changed, tables, &change.Totals{}, &change.Totals{})},
		Introduced: []change.FindingChange{
			{Finding: rules.Finding{Rule: "scan-overhead", Severity: rules.Error, File: head.Name, Pos: schema.Pos{Line: 6, Col: 5}, Table: odd,
				Message: odd + ": 18 ms, 90% of the budget", Hints: []string{"raise segment_rows: 2M, or merge"}}},
			{Finding: rules.Finding{Rule: "scan-overhead", Severity: rules.Error, File: head.Name, Pos: schema.Pos{Line: 9, Col: 5}, Table: "fresh",
				Message: "fresh: waived", Waiver: waiver}},
		},
		Worsened: []change.FindingChange{
			{Finding: rules.Finding{Rule: "truncated-segments", Severity: rules.Warning, File: head.Name, Pos: schema.Pos{Line: 7, Col: 5}, Table: odd,
				Message: "2 excess segments"}, Was: rules.Note},
		},
		Unchanged: []change.FindingChange{
			{Finding: rules.Finding{Rule: "needless-partitioning", Severity: rules.Note, File: head.Name, Pos: schema.Pos{Line: 10, Col: 5}, Table: "fresh",
				Message: "still there"}, Was: rules.Note},
		},
	}
	limit := 2.0
	return NewDiffResult("v0.0.0-test", d, change.Gate{MaxAddedMs: &limit, FailOnNew: rules.Error})
}

// oneCommand is a workflow command whose property values hold no raw : or , and whose
// message holds no raw CR.
var oneCommand = regexp.MustCompile(`^::(error|warning|notice) file=[^:,]*(,line=[0-9]+,col=[0-9]+)?,title=[^:,]*::[^\r]*$`)

// Every kind of annotation, escaped as check's are (escape.CommandData, CommandProperty):
// the table name's line break is shown, not kept, so each annotation is one line and
// no data starts a command; % , : in the path are encoded; the removed table is
// annotated on its file without a line (the base's line is not the head's); the
// unchanged table, the waived finding and the finding that kept its severity are not.
func TestDiffGitHubHostile(t *testing.T) {
	got := render(t, "github", hostileDiff(), false)
	file := "file=dir%3Aa%2Cb/100%25.yaml"
	name := `or%25ders\r\n::error::x`
	want := "::error " + file + ",line=6,col=5,title=scangate scan-overhead::" + name + ": 18 ms, 90%25 of the budget%0Ahint: raise segment_rows: 2M, or merge\n" +
		"::warning " + file + ",line=7,col=5,title=scangate truncated-segments::2 excess segments (was note)\n" +
		"::notice " + file + ",line=6,col=5,title=scangate diff::" + name + " changed: segments 10 -> 12 (+2), fixed ms per scan 15.0 -> 18.0 (+3.0)\n" +
		"::notice " + file + ",line=9,col=5,title=scangate diff::fresh added: segments – -> 2 (+2), fixed ms per scan – -> 3.0 (+3.0)\n" +
		"::notice " + file + ",title=scangate diff::gone removed: segments 4 -> – (-4), fixed ms per scan 6.0 -> – (-6.0)\n" +
		"::error " + file + ",line=6,col=5,title=scangate gate::" + name + " adds 3.0 ms per scan, more than the 2 ms allowed (--max-added-ms)\n" +
		"::error " + file + ",line=9,col=5,title=scangate gate::fresh adds 3.0 ms per scan, more than the 2 ms allowed (--max-added-ms)\n" +
		"::error " + file + ",line=6,col=5,title=scangate gate::new error scan-overhead on " + name + " at m,1.yaml:6:5 (--fail-on-new error)\n"
	if got != want {
		t.Errorf("got:\n%s\nwant:\n%s", got, want)
	}
	for i, line := range strings.Split(strings.TrimSuffix(got, "\n"), "\n") {
		if !oneCommand.MatchString(line) {
			t.Errorf("line %d is not one command: %q", i+1, line)
		}
	}
}

// A diff that cannot be compared annotates the schema errors instead: the head's at
// their lines, the base's on the file alone with the side named.
func TestDiffGitHubInvalid(t *testing.T) {
	bad := func(side, name, key string) change.Invalid {
		return change.Invalid{Side: side, File: change.File{Name: name, Key: key, Invalid: true}, Findings: []rules.Finding{
			{Rule: "schema", Severity: rules.Error, File: name, Pos: schema.Pos{Line: 3, Col: 9}, Message: "tables: expected a list"}}}
	}
	d := &change.Diff{Base: "origin/main", Head: "working tree", Invalid: []change.Invalid{
		bad("base", "origin/main:m.yaml", "models/m.yaml"), bad("head", "models/n.yaml", "models/n.yaml")}}
	got := render(t, "github", NewDiffResult("v0.0.0-test", d, change.Gate{}), false)
	want := "::error file=models/m.yaml,title=scangate schema::in the base (origin/main): tables: expected a list\n" +
		"::error file=models/n.yaml,line=3,col=9,title=scangate schema::tables: expected a list\n"
	if got != want {
		t.Errorf("got:\n%s\nwant:\n%s", got, want)
	}
}

// A change that touches no figure and raises no finding annotates nothing.
func TestDiffGitHubQuiet(t *testing.T) {
	d := &change.Diff{Base: "a", Head: "b", Models: []change.ModelChange{change.NewModelChange("m", change.Unchanged,
		[]change.TableChange{{Model: "m", Name: "t", Status: change.Unchanged}}, nil, nil)}}
	if got := render(t, "github", NewDiffResult("v0.0.0-test", d, change.Gate{}), false); got != "" {
		t.Errorf("a quiet change annotates: %q", got)
	}
}
