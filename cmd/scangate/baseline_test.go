package main

import (
	"encoding/json"
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
