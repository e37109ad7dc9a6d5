package run

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/scangate/scangate/internal/advisor"
	"github.com/scangate/scangate/schema"
)

// Problems prints each problem at its file, line and column, every user string escaped
// for a terminal and a CI log, and hands back what to do; other errors pass untouched.
func TestProblems(t *testing.T) {
	se := &schema.Error{File: "a\x1b[2J.yaml", Problems: []schema.Problem{
		{Pos: schema.Pos{Line: 3, Col: 5}, Path: "/tables/0/rows", Message: "must be >= 0"},
		{Pos: schema.Pos{Line: 1, Col: 1}, Message: "::error::owned\nnext line"},
	}}
	var stderr strings.Builder
	err := Problems(&stderr, fmt.Errorf("reading: %w", se), "config", "fix it")
	want := `a\x1b[2J.yaml:3:5: error: /tables/0/rows: must be >= 0 [config]` + "\n" +
		`a\x1b[2J.yaml:1:1: error: \x3a:error::owned\nnext line [config]` + "\n"
	if err == nil || err.Error() != "fix it" || stderr.String() != want {
		t.Errorf("Problems = %v, printed\n%s\nwant\n%s", err, stderr.String(), want)
	}
	stderr.Reset()
	plain := errors.New("cannot read the config x.yaml: no such file")
	if err := Problems(&stderr, plain, "config", "fix it"); err != plain || stderr.Len() != 0 {
		t.Errorf("a plain error became %v, printed %q", err, stderr.String())
	}
	if err := Problems(&stderr, nil, "config", "fix it"); err != nil {
		t.Errorf("nil became %v", err)
	}
}

// diff looks for the project config from the new side of two paths, and from the
// working tree's paths with --base.
func TestDiffConfigPaths(t *testing.T) {
	for _, c := range []struct {
		base  string
		paths []string
		want  string
	}{
		{"", []string{"old", "new"}, "new"},
		{"main", []string{"old", "new"}, "old new"},
		{"main", nil, ""},
		{"", []string{"one"}, "one"}, // refused later by DiffSides
	} {
		if got := strings.Join(diffConfigPaths(c.base, c.paths), " "); got != c.want {
			t.Errorf("diffConfigPaths(%q, %q) = %q, want %q", c.base, c.paths, got, c.want)
		}
	}
}

// Without --base, diff needs exactly two paths; with two it reads them as PathSides does.
func TestDiffSides(t *testing.T) {
	for _, paths := range [][]string{nil, {"a"}, {"a", "b", "c"}} {
		want := fmt.Sprintf("diff compares two paths, OLD and NEW (got %d), or the working tree with a revision: scangate diff --base REV [PATH...]", len(paths))
		if _, err := DiffSides(context.Background(), "", paths, nil, 1<<20, nil); err == nil || err.Error() != want {
			t.Errorf("DiffSides(%q) error %v, want %q", paths, err, want)
		}
	}
	dir := writeFiles(t, map[string]string{"old.yaml": fmt.Sprintf(oneTable, "m", 1), "new.yaml": fmt.Sprintf(oneTable, "m", 2)})
	sides, err := DiffSides(context.Background(), "", []string{filepath.Join(dir, "old.yaml"), filepath.Join(dir, "new.yaml")}, nil, 1<<20, nil)
	if err != nil || len(sides[0].inputs) != 1 || len(sides[1].inputs) != 1 || sides[0].inputs[0].key != sides[1].inputs[0].key {
		t.Errorf("two files: %v, sides %+v", err, sides)
	}
}

// Diff's verdict: the gate at its limit passes and one segment under it fails; a file
// that breaks the schema is Invalid; flags are judged in the order diff always judged them.
func TestDiffVerdict(t *testing.T) {
	// 10k rows at 1,000 per segment: one partition holds 10 segments; 20 even
	// partitions of 500 rows hold 20, so the change adds 10 segments.
	dir := writeFiles(t, map[string]string{
		"old.yaml": fmt.Sprintf(oneTable, "m", 1), "new.yaml": fmt.Sprintf(oneTable, "m", 20),
		"bad.yaml": "format: 1\nmodel: m\nengine: {segment_rows: 1000}\ntables: [{name: orders, rows: -1, partitions: {scheme: none}}]\n",
	})
	diff := func(newFile string, segs int64) (Verdict, error) {
		o := DiffOptions{
			Paths: []string{filepath.Join(dir, "old.yaml"), filepath.Join(dir, newFile)}, MaxAddedSegments: &segs,
			FailOnNew: "never", FigureThreshold: 100, Formats: []string{"json"}, Today: "2026-01-15",
			Limits: schema.DefaultLimits, Stdout: io.Discard, Stderr: io.Discard,
		}
		return Diff(context.Background(), o)
	}
	for _, c := range []struct {
		file string
		segs int64
		want Verdict
	}{{"new.yaml", 10, Clean}, {"new.yaml", 9, Failed}, {"bad.yaml", 1000, Invalid}} {
		if v, err := diff(c.file, c.segs); err != nil || v != c.want {
			t.Errorf("%s against --max-added-segments %d: %v, %v; want %v", c.file, c.segs, v, err, c.want)
		}
	}
	ms := -1.0
	o := DiffOptions{MaxAddedMs: &ms, FigureThreshold: -5, FailOnNew: "loud", Limits: schema.DefaultLimits}
	if _, err := Diff(context.Background(), o); err == nil || !strings.HasPrefix(err.Error(), "--max-added-ms -1:") {
		t.Errorf("three bad flags: %v, want --max-added-ms's error first", err)
	}
	o.MaxAddedMs = nil
	if _, err := Diff(context.Background(), o); err == nil || !strings.HasPrefix(err.Error(), "--figure-threshold -5:") {
		t.Errorf("two bad flags: %v, want --figure-threshold's error first", err)
	}
}

// check's verdict on the demo (one error, see testdata/demo): Failed at --fail-on
// error, Clean at never; Invalid for a manifest that breaks the schema. A broken
// observed file has its problems printed, tagged [observed].
func TestCheckPathsVerdict(t *testing.T) {
	demo := filepath.Join("..", "..", "testdata", "demo")
	check := func(failOn string, paths ...string) (Verdict, error) {
		return CheckPaths(CheckOptions{Paths: paths, FailOn: failOn, Formats: []string{"json"}, Today: "2026-01-15",
			Limits: schema.DefaultLimits, Stdout: io.Discard, Stderr: io.Discard})
	}
	for _, c := range []struct {
		failOn string
		path   string
		want   Verdict
	}{
		{"error", demo, Failed},
		{"never", demo, Clean},
		{"never", filepath.Join("..", "..", "testdata", "bad", "duplicate-key.yaml"), Invalid},
	} {
		if v, err := check(c.failOn, c.path); err != nil || v != c.want {
			t.Errorf("check --fail-on %s %s: %v, %v; want %v", c.failOn, c.path, v, err, c.want)
		}
	}
	if _, err := check("sometimes", demo); err == nil || !strings.Contains(err.Error(), "--fail-on") {
		t.Errorf("--fail-on sometimes: %v", err)
	}
	observed := filepath.Join(writeFiles(t, map[string]string{"obs.json": `{"format": 1, "surprise": true}`}), "obs.json")
	var stderr strings.Builder
	_, err := CheckPaths(CheckOptions{Paths: []string{demo}, FailOn: "error", Observed: observed, Today: "2026-01-15",
		Limits: schema.DefaultLimits, Stdout: io.Discard, Stderr: &stderr})
	if err == nil || !strings.HasPrefix(err.Error(), "the observed file is invalid") || !strings.Contains(stderr.String(), "[observed]") {
		t.Errorf("broken observed file: %v, printed %q", err, stderr.String())
	}
}

// baseline write records every finding of valid manifests, atomically and never over an
// input; with an invalid manifest it prints check's text on stderr and writes nothing.
func TestWriteBaseline(t *testing.T) {
	dir := writeFiles(t, map[string]string{
		"good.yaml": fmt.Sprintf(oneTable, "m", 20),
		"bad.yaml":  "format: 1\nmodel: m\nengine: {segment_rows: 1000}\ntables: [{name: orders, rows: -1, partitions: {scheme: none}}]\n",
	})
	write := func(out string, paths ...string) (string, string, error) {
		var stdout, stderr strings.Builder
		err := WriteBaseline(BaselineOptions{Paths: paths, Out: out, Today: "2026-01-15", Reason: "accepted",
			Limits: schema.DefaultLimits, Stdout: &stdout, Stderr: &stderr})
		return stdout.String(), stderr.String(), err
	}
	good, bad := filepath.Join(dir, "good.yaml"), filepath.Join(dir, "bad.yaml")
	out := filepath.Join(dir, "bl\x1b.json")
	_, stderr, err := write(out, good, bad)
	if err == nil || err.Error() != "some manifests are invalid; fix them before writing a baseline" || !strings.Contains(stderr, "bad.yaml") {
		t.Errorf("an invalid manifest: %v, stderr %q", err, stderr)
	}
	if _, err := os.Stat(out); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("a baseline was written beside an invalid manifest: %v", err)
	}
	if _, _, err := write(good, good); err == nil || !strings.Contains(err.Error(), "--output") {
		t.Errorf("over its own input: %v", err)
	}
	stdout, _, err := write(out, good)
	data, rerr := os.ReadFile(out)
	if err != nil || rerr != nil || !strings.Contains(string(data), `"reason": "accepted"`) {
		t.Fatalf("write: %v, %v:\n%s", err, rerr, data)
	}
	if want := " files to " + strings.ReplaceAll(out, "\x1b", `\x1b`) + "\n"; !strings.HasPrefix(stdout, "wrote ") || !strings.HasSuffix(stdout, want) || strings.Contains(stdout, "\x1b") {
		t.Errorf("stdout %q, want the file named escaped", stdout)
	}
}

// plan's --segment-rows and --horizon: parsed counts, and the horizon only when given,
// from 1 to advisor.MaxHorizonMonths.
func TestPlanSettings(t *testing.T) {
	set, err := planSettings("8Mi,16Mi", true, nil)
	if err != nil || !set.FixedSegmentRows || len(set.Capacities) != 2 || set.Capacities[0] != 8<<20 || set.Capacities[1] != 16<<20 {
		t.Errorf("8Mi,16Mi: %+v, %v", set, err) // 8Mi = 8 x 1,048,576 (DESIGN.md §3)
	}
	if _, err := planSettings("8Mi,lots", false, nil); err == nil || !strings.HasPrefix(err.Error(), `--segment-rows "8Mi,lots": `) {
		t.Errorf("a bad capacity: %v", err)
	}
	most := advisor.MaxHorizonMonths
	for _, h := range []int{1, most} {
		if _, err := planSettings("", false, &h); err != nil {
			t.Errorf("--horizon %d: %v", h, err)
		}
	}
	for _, h := range []int{0, -3, most + 1} {
		want := fmt.Sprintf("--horizon %d: give a number of months from 1 to %d", h, most)
		if _, err := planSettings("", false, &h); err == nil || err.Error() != want {
			t.Errorf("--horizon %d: %v, want %q", h, err, want)
		}
	}
}
