package main

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"syscall"
	"testing"
	"time"
)

// fingerprints runs check --format json in dir and returns the findings' fingerprints
// and uris, each sorted.
func fingerprints(t *testing.T, dir string, args ...string) (fps, uris []string) {
	t.Helper()
	r := scangate(t, dir, "", nil, append([]string{"check", "--format", "json", "--fail-on", "never"}, args...)...)
	wantCode(t, r, 0)
	var doc struct {
		Findings []struct{ URI, Fingerprint string }
	}
	if err := json.Unmarshal([]byte(r.stdout), &doc); err != nil {
		t.Fatalf("%v\n%s", err, r.stdout)
	}
	for _, f := range doc.Findings {
		fps = append(fps, f.Fingerprint)
		uris = append(uris, f.URI)
	}
	sort.Strings(fps)
	sort.Strings(uris)
	if len(fps) == 0 {
		t.Fatalf("no findings in %s", r.stdout)
	}
	return fps, uris
}

func same(a, b []string) bool { return strings.Join(a, "\n") == strings.Join(b, "\n") }

func demoManifest(t *testing.T) string {
	t.Helper()
	src, err := os.ReadFile(filepath.Join(root(t), "testdata/demo/meter-telemetry.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	return string(src)
}

// hasRepositoryAbove reports whether dir or a directory above it holds .git.
func hasRepositoryAbove(dir string) bool {
	for d := dir; ; d = filepath.Dir(d) {
		if _, err := os.Stat(filepath.Join(d, ".git")); err == nil {
			return true
		}
		if filepath.Dir(d) == d {
			return false
		}
	}
}

// Outside any repository the path hashed into a fingerprint is taken from the input's own
// location, so where scangate runs from does not change it; reports still name the file
// relative to the working directory, so annotations find it.
func TestFingerprintsIndependentOfWorkingDirectory(t *testing.T) {
	dir := t.TempDir()
	if hasRepositoryAbove(dir) {
		t.Skipf("%s is inside a repository", dir)
	}
	for _, d := range []string{"models/sub", "other"} {
		os.MkdirAll(filepath.Join(dir, d), 0o755)
	}
	os.WriteFile(filepath.Join(dir, "models/sub/m.yaml"), []byte(demoManifest(t)), 0o644)

	// A named file, from four working directories.
	want, uris := fingerprints(t, dir, "models/sub/m.yaml")
	if uris[0] != "models/sub/m.yaml" {
		t.Errorf("report path %q, want models/sub/m.yaml (relative to the working directory)", uris[0])
	}
	for wd, arg := range map[string]string{"models/sub": "m.yaml", "models": "sub/m.yaml", "other": "../models/sub/m.yaml", "/": filepath.Join(dir, "models/sub/m.yaml")} {
		if wd != "/" {
			wd = filepath.Join(dir, wd)
		}
		if got, _ := fingerprints(t, wd, arg); !same(got, want) {
			t.Errorf("from %s with %s: fingerprints\n%s\nwant\n%s", wd, arg, strings.Join(got, "\n"), strings.Join(want, "\n"))
		}
	}

	// A named directory, from two working directories.
	walked, _ := fingerprints(t, dir, "models")
	if got, _ := fingerprints(t, filepath.Join(dir, "other"), "../models"); !same(got, walked) {
		t.Errorf("walk from other/: fingerprints\n%s\nwant\n%s", strings.Join(got, "\n"), strings.Join(walked, "\n"))
	}

	// So a baseline written in one place holds the findings seen from another.
	wantCode(t, scangate(t, dir, "", nil, "baseline", "write", "-o", "base.json", "models/sub/m.yaml"), 0)
	r := scangate(t, filepath.Join(dir, "other"), "", nil, "check", "--format", "json", "--baseline", "../base.json", "../models/sub/m.yaml")
	wantCode(t, r, 0)
	if d := parseJSON(t, r); d.Summary.Baselined != len(want) || *d.Summary.BaselineFixed != 0 {
		t.Errorf("baseline from another directory: %+v", d.Summary)
	}
}

// Inside a repository paths stay relative to its root, from wherever in it scangate runs;
// a file of another repository hashes its path in that repository.
func TestFingerprintsInsideRepositories(t *testing.T) {
	src := demoManifest(t)
	a := repo(t, map[string]string{"models/m.yaml": src, "docs/.keep": ""})
	want, uris := fingerprints(t, a, "models/m.yaml")
	if uris[0] != "models/m.yaml" {
		t.Errorf("uri %q, want models/m.yaml", uris[0])
	}
	if got, uris := fingerprints(t, filepath.Join(a, "docs"), "../models/m.yaml"); !same(got, want) || uris[0] != "models/m.yaml" {
		t.Errorf("from docs/: %v %v, want %v", got, uris, want)
	}
	b := repo(t, map[string]string{"models/m.yaml": src})
	if got, _ := fingerprints(t, b, filepath.Join(a, "models/m.yaml")); !same(got, want) {
		t.Errorf("from another repository: %v, want %v", got, want)
	}
}

// A baseline that is not a regular file is refused at once, never read without a bound:
// a device named directly or through a committed symlink, and a FIFO (a read would block).
func TestBaselineSpecialFiles(t *testing.T) {
	dir := repo(t, map[string]string{"models/m.yaml": demoManifest(t)})
	cases := map[string]string{}
	if _, err := os.Stat("/dev/zero"); err == nil {
		cases["/dev/zero"] = "it is a device, not a regular file"
		os.Symlink("/dev/zero", filepath.Join(dir, ".scangate-baseline.json"))
		cases[".scangate-baseline.json"] = "it is a device, not a regular file"
	}
	if err := syscall.Mkfifo(filepath.Join(dir, "pipe.json"), 0o644); err == nil {
		cases["pipe.json"] = "it is a FIFO, not a regular file"
	}
	cases["models"] = "it is a directory, not a regular file"
	for file, want := range cases {
		start := time.Now()
		r := scangate(t, dir, "", nil, "check", "--baseline", file, "models")
		took := time.Since(start)
		wantCode(t, r, 2)
		if !strings.Contains(r.stderr, "--baseline: cannot read "+file+": "+want) {
			t.Errorf("%s: %s", file, r.stderr)
		}
		if took > 10*time.Second {
			t.Errorf("%s: took %v to refuse", file, took)
		}
	}
}

// Baselines are bounded like manifests (--max-file-size), and written only when check
// would read them back.
func TestBaselineSizeAndWrite(t *testing.T) {
	dir := repo(t, map[string]string{
		"models/m.yaml": demoManifest(t),
		"small/m.yaml":  "format: 1\nmodel: m\nengine: {segment_rows: 1000}\ntables: [{name: t, rows: 10, partitions: {scheme: none}}]\n",
	})
	wantCode(t, scangate(t, dir, "", nil, "baseline", "write", "models"), 0)
	info, err := os.Stat(filepath.Join(dir, ".scangate-baseline.json"))
	if err != nil {
		t.Fatal(err)
	}
	wantCode(t, scangate(t, dir, "", nil, "check", "--baseline", ".scangate-baseline.json", "models"), 0)
	r := scangate(t, dir, "", nil, "check", "--max-file-size", "100KiB", "--baseline", ".scangate-baseline.json", "models")
	wantCode(t, r, 0) // the demo's baseline is well below 100 KiB
	// The small manifest fits in 200 bytes, the demo's baseline does not.
	if info.Size() <= 200 {
		t.Fatalf("baseline of %d bytes is too small for the test", info.Size())
	}
	r = scangate(t, dir, "", nil, "check", "--max-file-size", "200B", "--baseline", ".scangate-baseline.json", "small")
	if r.code != 2 || !strings.Contains(r.stderr, ".scangate-baseline.json:1:1: error: file is") || !strings.Contains(r.stderr, "above the limit of 200; raise --max-file-size if it is meant to be this large [baseline]") {
		t.Errorf("a baseline above --max-file-size: exit %d\n%s", r.code, r.stderr)
	}

	// A manifest path a baseline cannot hold (a backslash): nothing is written.
	os.Remove(filepath.Join(dir, ".scangate-baseline.json"))
	os.WriteFile(filepath.Join(dir, "models", `back\slash.yaml`), []byte(demoManifest(t)), 0o644)
	r = scangate(t, dir, "", nil, "baseline", "write", "models")
	wantCode(t, r, 2)
	if !strings.Contains(r.stderr, "not writing .scangate-baseline.json: check --baseline would refuse it") || !strings.Contains(r.stderr, `"models/back\\slash.yaml" is not a repository path`) {
		t.Errorf("baseline write of an unrecordable path:\n%s", r.stderr)
	}
	if _, err := os.Stat(filepath.Join(dir, ".scangate-baseline.json")); err == nil {
		t.Error("a baseline was written anyway")
	}
}

// An invalid baseline is reported like an invalid manifest: every problem at its line and
// column, then exit 2; the schema it breaks is printed by `scangate schema baseline`.
func TestBaselineInvalid(t *testing.T) {
	dir := repo(t, map[string]string{"models/m.yaml": demoManifest(t)})
	bad := filepath.Join(root(t), "testdata", "baselines", "bad-unknown-rule.json")
	r := scangate(t, dir, "", nil, "check", "--baseline", bad, "models")
	wantCode(t, r, 2)
	if !strings.Contains(r.stderr, bad+`:6:15: error: /entries/0/rule: unknown rule "scan-tme"; use one of`) ||
		!strings.Contains(r.stderr, "scangate: the baseline file is invalid; fix it, or write it again with `scangate baseline write`") {
		t.Errorf("stderr:\n%s", r.stderr)
	}
	if r.stdout != "" {
		t.Errorf("an invalid baseline must not leave a partial report:\n%s", r.stdout)
	}

	r = scangate(t, dir, "", nil, "schema", "baseline")
	wantCode(t, r, 0)
	var v map[string]any
	if err := json.Unmarshal([]byte(r.stdout), &v); err != nil || v["$id"] != "https://github.com/scangate/scangate/schema/baseline.schema.json" {
		t.Errorf("schema baseline: %v %v", err, v["$id"])
	}
}

// The baseline's dates and severities as a user meets them: write with --today,
// --reason and --expires; check absorbs the findings until the expiry day, then they
// fail again saying which entry expired; a finding that became more severe fails and
// says it escalated; --hide-baselined counts instead of listing.
func TestBaselineDatesAndSeverity(t *testing.T) {
	dir := repo(t, map[string]string{"models/m.yaml": demoManifest(t)})
	r := scangate(t, dir, "", nil, "baseline", "write", "--today", "2026-12-02", "--reason", "known since the move", "--expires", "2027-01-31", "models")
	wantCode(t, r, 0)
	data, err := os.ReadFile(filepath.Join(dir, ".scangate-baseline.json"))
	if err != nil {
		t.Fatal(err)
	}
	var b struct {
		SchemaVersion int `json:"schema_version"`
		Written       string
		Entries       []struct{ Severity, Reason, Expires string }
	}
	if err := json.Unmarshal(data, &b); err != nil || b.SchemaVersion != 2 || b.Written != "2026-12-02" || len(b.Entries) == 0 {
		t.Fatalf("%v: %s", err, data)
	}
	for _, e := range b.Entries {
		if e.Severity == "" || e.Reason != "known since the move" || e.Expires != "2027-01-31" {
			t.Errorf("entry %+v", e)
		}
	}
	// The same input, the same bytes: the date comes from --today.
	again := scangate(t, dir, "", nil, "baseline", "write", "--today", "2026-12-02", "--reason", "known since the move", "--expires", "2027-01-31", "-o", "again.json", "models")
	wantCode(t, again, 0)
	if other, _ := os.ReadFile(filepath.Join(dir, "again.json")); string(other) != string(data) {
		t.Error("two writes on one --today differ")
	}
	check := func(today string, extra ...string) result {
		return scangate(t, dir, "", nil, append([]string{"check", "--today", today, "--baseline", ".scangate-baseline.json"}, append(extra, "models")...)...)
	}
	n := len(b.Entries)
	for _, today := range []string{"2026-12-10", "2027-01-31"} {
		r := check(today)
		wantCode(t, r, 0)
		if !strings.Contains(r.stdout, "baselined in .scangate-baseline.json, not failing the run:\n") || !strings.Contains(r.stdout, " baselined)\n") {
			t.Errorf("%s:\n%s", today, r.stdout)
		}
	}
	r = check("2026-12-10", "--hide-baselined")
	wantCode(t, r, 0)
	if want := fmt.Sprintf("%d baselined findings of .scangate-baseline.json not listed (--hide-baselined); they do not fail the run\n", n); !strings.Contains(r.stdout, want) ||
		strings.Contains(r.stdout, "hint:") || !strings.Contains(r.stdout, fmt.Sprintf("(0 waived, %d baselined)", n)) {
		t.Errorf("--hide-baselined:\n%s", r.stdout)
	}
	r = check("2027-02-01")
	wantCode(t, r, 1)
	// The first entry starts on line 5: {, "schema_version", "written", "entries": [, {.
	if !strings.Contains(r.stdout, "(baseline entry .scangate-baseline.json:5 expired on 2027-01-31, 1 day ago; it counts again)") ||
		!strings.Contains(r.stdout, fmt.Sprintf("%d findings of .scangate-baseline.json no longer absorbed: 0 escalated past the severity recorded, %d of expired entries", n, n)) {
		t.Errorf("after the expiry:\n%s", r.stdout)
	}
	// The JSON report counts them, and stays valid against its schema.
	r = check("2027-02-01", "--format", "json")
	validateJSONReport(t, []byte(r.stdout))
	var doc struct{ Summary map[string]int }
	if err := json.Unmarshal([]byte(r.stdout), &doc); err != nil || doc.Summary["baseline_expired"] != n || doc.Summary["baseline_escalated"] != 0 || doc.Summary["baselined"] != 0 {
		t.Errorf("JSON summary %v (%v)", doc.Summary, err)
	}
	// Writing over the expired entries needs --absorb-expired.
	r = scangate(t, dir, "", nil, "baseline", "write", "--today", "2027-02-01", "models")
	wantCode(t, r, 2)
	if !strings.Contains(r.stderr, "would be absorbed again") || !strings.Contains(r.stderr, "--absorb-expired") {
		t.Errorf("write over expired entries:\n%s", r.stderr)
	}
	if now, _ := os.ReadFile(filepath.Join(dir, ".scangate-baseline.json")); string(now) != string(data) {
		t.Error("the refused write changed the file")
	}
	wantCode(t, scangate(t, dir, "", nil, "baseline", "write", "--today", "2027-02-01", "--absorb-expired", "models"), 0)

	// Escalation: record every entry one step less severe than found (an error as a
	// warning, a warning as a note); the errors and warnings then fail again.
	data, _ = os.ReadFile(filepath.Join(dir, ".scangate-baseline.json"))
	lowered := strings.ReplaceAll(strings.ReplaceAll(string(data), `"severity": "warning"`, `"severity": "note"`), `"severity": "error"`, `"severity": "warning"`)
	os.WriteFile(filepath.Join(dir, "lowered.json"), []byte(lowered), 0o644)
	r = scangate(t, dir, "", nil, "check", "--today", "2027-02-01", "--baseline", "lowered.json", "models")
	wantCode(t, r, 1)
	if !strings.Contains(r.stdout, "(escalated: baselined as a warning in lowered.json:") || !strings.Contains(r.stdout, "(escalated: baselined as a note in lowered.json:") {
		t.Errorf("escalated:\n%s", r.stdout)
	}
	r = scangate(t, dir, "", nil, "check", "--hide-baselined", "models")
	if r.code != 2 || !strings.Contains(r.stderr, "--hide-baselined needs --baseline FILE") {
		t.Errorf("--hide-baselined alone: exit %d %s", r.code, r.stderr)
	}
}

// A manifest waiver that expired: its findings count again, and baseline write refuses
// to absorb them unless told to (testdata/rules/expired-waiver/expired.yaml, judged on
// 2026-01-01: the waiver's last day was 2025-12-31).
func TestBaselineOverExpiredWaiver(t *testing.T) {
	src, err := os.ReadFile(filepath.Join(root(t), "testdata/rules/expired-waiver/expired.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	dir := repo(t, map[string]string{"m.yaml": string(src)})
	r := scangate(t, dir, "", nil, "baseline", "write", "--today", "2026-01-01", ".")
	wantCode(t, r, 2)
	for _, want := range []string{
		"m.yaml:9:5: error: events: a full scan pays 1,500 ms of fixed CPU", "[scan-overhead]",
		"warning: events: waiver for scan-overhead expired on 2025-12-31", "[expired-waiver]",
		"scangate: not writing .scangate-baseline.json: 2 findings of an expired waiver or baseline entry would be absorbed again",
	} {
		if !strings.Contains(r.stderr, want) {
			t.Errorf("stderr lacks %q:\n%s", want, r.stderr)
		}
	}
	if _, err := os.Stat(filepath.Join(dir, ".scangate-baseline.json")); err == nil {
		t.Error("written anyway")
	}
	// On the waiver's last day nothing has lapsed.
	wantCode(t, scangate(t, dir, "", nil, "baseline", "write", "--today", "2025-12-31", "-o", "before.json", "."), 0)
	r = scangate(t, dir, "", nil, "baseline", "write", "--today", "2026-01-01", "--absorb-expired", ".")
	wantCode(t, r, 0)
	if !strings.Contains(r.stdout, "wrote 2 findings of 1 files") {
		t.Errorf("stdout: %s", r.stdout)
	}
}
