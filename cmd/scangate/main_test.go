package main

import (
	"bytes"
	"context"
	"errors"
	"flag"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
)

var update = flag.Bool("update", false, "rewrite the golden files")

// binary is scangate built once for the end-to-end tests, run as a user runs it.
var binary string

func TestMain(m *testing.M) {
	dir, err := os.MkdirTemp("", "scangate-test")
	if err != nil {
		panic(err)
	}
	binary = filepath.Join(dir, "scangate")
	// -buildvcs=false pins the version reports carry to "(devel)" as the goldens hold it,
	// whether or not the checkout's git history can be read.
	if out, err := exec.Command("go", "build", "-buildvcs=false", "-o", binary, ".").CombinedOutput(); err != nil {
		panic("go build: " + err.Error() + "\n" + string(out))
	}
	code := m.Run()
	os.RemoveAll(dir)
	os.Exit(code)
}

type result struct {
	code           int
	stdout, stderr string
}

// scangate runs the binary in dir with env added to a clean environment.
func scangate(t *testing.T, dir, stdin string, env []string, args ...string) result {
	t.Helper()
	return scangateCtx(t, context.Background(), dir, stdin, env, args...)
}

// scangateCtx is scangate, killed when ctx ends.
func scangateCtx(t *testing.T, ctx context.Context, dir, stdin string, env []string, args ...string) result {
	t.Helper()
	cmd := exec.CommandContext(ctx, binary, args...)
	cmd.Dir = dir
	cmd.Env = append([]string{"PATH=" + os.Getenv("PATH"), "HOME=" + t.TempDir()}, env...)
	cmd.Stdin = strings.NewReader(stdin)
	var out, errb bytes.Buffer
	cmd.Stdout, cmd.Stderr = &out, &errb
	err := cmd.Run()
	code := 0
	var ee *exec.ExitError
	if errors.As(err, &ee) {
		code = ee.ExitCode()
	} else if err != nil {
		t.Fatal(err)
	}
	return result{code, out.String(), errb.String()}
}

func root(t *testing.T) string {
	t.Helper()
	r, err := filepath.Abs("../..")
	if err != nil {
		t.Fatal(err)
	}
	return r
}

func wantCode(t *testing.T, r result, code int) {
	t.Helper()
	if r.code != code {
		t.Fatalf("exit code %d, want %d\nstdout:\n%s\nstderr:\n%s", r.code, code, r.stdout, r.stderr)
	}
}

// checkGolden compares got with testdata/golden/name, or rewrites the file with -update.
func checkGolden(t *testing.T, name, got string) {
	t.Helper()
	golden := filepath.Join(root(t), "testdata", "golden", name)
	if *update {
		if err := os.WriteFile(golden, []byte(got), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	want, err := os.ReadFile(golden)
	if err != nil {
		t.Fatal(err)
	}
	if got != string(want) {
		t.Errorf("output differs from %s (rerun with -update if intended):\n%s", golden, got)
	}
}

// TestDemoGolden pins the demo's whole report; run with -update after a deliberate change.
func TestDemoGolden(t *testing.T) {
	r := scangate(t, root(t), "", nil, "check", "--today", "2026-01-01", "testdata/demo")
	wantCode(t, r, 1)
	checkGolden(t, "demo.txt", r.stdout)
	for _, s := range []string{"error:", "warning:", "note:", "    hint: ", "[scan-overhead]", "[truncated-segments]"} {
		if !strings.Contains(r.stdout, s) {
			t.Errorf("demo report lacks %q", s)
		}
	}
	// Same input, same bytes.
	if again := scangate(t, root(t), "", nil, "check", "--today", "2026-01-01", "testdata/demo"); again.stdout != r.stdout {
		t.Error("two runs on the demo printed different reports")
	}
}

func TestFailOn(t *testing.T) {
	dir := root(t)
	warningOnly := "testdata/rules/scan-overhead/warning.yaml"
	noteOnly := "testdata/rules/truncated-segments/list-note.yaml"
	for _, c := range []struct {
		args []string
		code int
	}{
		{[]string{"check", warningOnly}, 0},
		{[]string{"check", "--fail-on", "warning", warningOnly}, 1},
		{[]string{"check", "--fail-on", "error", warningOnly}, 0},
		{[]string{"check", "--fail-on", "note", noteOnly}, 1},
		{[]string{"check", "--fail-on", "warning", noteOnly}, 0},
		{[]string{"check", "--fail-on", "never", "testdata/demo"}, 0},
		{[]string{"check", "--fail-on", "never", "testdata/bad/values.yaml"}, 2},
		{[]string{"check", "--fail-on", "fatal", warningOnly}, 2},
		{[]string{"check", "testdata/rules/scan-overhead/quiet-override.yaml"}, 0},
	} {
		r := scangate(t, dir, "", nil, c.args...)
		if r.code != c.code {
			t.Errorf("scangate %s: exit %d, want %d\n%s%s", strings.Join(c.args, " "), r.code, c.code, r.stdout, r.stderr)
		}
	}
}

func TestInvalidManifest(t *testing.T) {
	r := scangate(t, root(t), "", nil, "check", "testdata/bad/values.yaml")
	wantCode(t, r, 2)
	for _, s := range []string{
		"testdata/bad/values.yaml:2:9: error: /format: must be 1 [schema]",
		"testdata/bad/values.yaml:10:11: error: /tables/0/rows: must be >= 0 [schema]",
		"1 file could not be checked",
	} {
		if !strings.Contains(r.stdout, s) {
			t.Errorf("output lacks %q:\n%s", s, r.stdout)
		}
	}
	if n := strings.Count(r.stdout, "[schema]"); n < 10 {
		t.Errorf("want every schema error reported, got %d:\n%s", n, r.stdout)
	}
}

func TestStdin(t *testing.T) {
	data, err := os.ReadFile(filepath.Join(root(t), "testdata/rules/scan-overhead/error.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	r := scangate(t, t.TempDir(), string(data), nil, "check", "-")
	wantCode(t, r, 1)
	if !strings.HasPrefix(r.stdout, "<stdin>:8:5: error: events: ") {
		t.Errorf("stdin findings should be reported as <stdin>:\n%s", r.stdout)
	}
}

func TestDirectoryWalk(t *testing.T) {
	dir := t.TempDir()
	manifest := "format: 1\nmodel: m\nengine: {segment_rows: 1000}\ntables: [{name: t, rows: 10k, partitions: {scheme: none}}]\n"
	files := map[string]string{
		"a.yaml":             manifest,
		"sub/b.yml":          manifest,
		"sub/deeper/c.json":  `{"format": 1, "model": "m", "engine": {"segment_rows": 1000}, "tables": [{"name": "t", "rows": 1, "partitions": {"scheme": "none"}}]}`,
		"sub/other.yaml":     "name: not a manifest\n",
		".hidden/x.yaml":     "format: 2\n", // would be invalid if read
		"README.md":          "format: 1\n",
		"sub/settings.yaml~": "format: 2\n",
	}
	writeTree(t, dir, files)
	r := scangate(t, dir, "", nil, "check")
	wantCode(t, r, 0)
	if !strings.Contains(r.stdout, "3 files, 3 tables: no findings") {
		t.Errorf("want the three manifests found from the current directory:\n%s", r.stdout)
	}
	r = scangate(t, dir, "", nil, "check", "sub")
	if !strings.Contains(r.stdout, "2 files, 2 tables") {
		t.Errorf("want two manifests under sub:\n%s", r.stdout)
	}
	empty := t.TempDir()
	r = scangate(t, empty, "", nil, "check")
	wantCode(t, r, 2)
	if !strings.Contains(r.stderr, "no manifest found under .") {
		t.Errorf("an empty directory should say so:\n%s", r.stderr)
	}
	r = scangate(t, dir, "", nil, "check", "missing.yaml")
	wantCode(t, r, 2)
	if !strings.Contains(r.stderr, "cannot read missing.yaml: no such file or directory") {
		t.Errorf("a missing path should be named:\n%s", r.stderr)
	}
}

func TestColour(t *testing.T) {
	const esc = "\x1b["
	args := []string{"check", "testdata/rules/scan-overhead/error.yaml"}
	if r := scangate(t, root(t), "", nil, args...); strings.Contains(r.stdout, esc) {
		t.Error("output to a pipe must not be coloured")
	}
	if r := scangate(t, root(t), "", []string{"CLICOLOR_FORCE=1"}, args...); !strings.Contains(r.stdout, esc) {
		t.Error("CLICOLOR_FORCE=1 should colour the output")
	}
	if r := scangate(t, root(t), "", []string{"CLICOLOR_FORCE=1", "NO_COLOR=1"}, args...); strings.Contains(r.stdout, esc) {
		t.Error("NO_COLOR must win over CLICOLOR_FORCE")
	}
	if r := scangate(t, root(t), "", []string{"CLICOLOR_FORCE=1"}, append(args, "--no-color")...); strings.Contains(r.stdout, esc) {
		t.Error("--no-color must win over CLICOLOR_FORCE")
	}
}

func TestVersionAndCompletion(t *testing.T) {
	r := scangate(t, root(t), "", nil, "version")
	wantCode(t, r, 0)
	if !strings.HasPrefix(r.stdout, "scangate ") {
		t.Errorf("version: %q", r.stdout)
	}
	r = scangate(t, root(t), "", nil, "completion", "bash")
	wantCode(t, r, 0)
	if !strings.Contains(r.stdout, "scangate") {
		t.Error("completion bash printed no script")
	}
	r = scangate(t, root(t), "", nil, "frobnicate")
	wantCode(t, r, 2)
}

// --manifests-only lets a hook pass every staged YAML file: the ones without "format:"
// are skipped instead of failing as broken manifests.
func TestManifestsOnly(t *testing.T) {
	dir := repo(t, map[string]string{
		"m.yaml":          "format: 1\nmodel: m\nengine: {segment_rows: 1000}\ntables: [{name: t, rows: 10, partitions: {scheme: none}}]\n",
		"workflow.yml":    "on: push\njobs: {}\n",
		"settings.json":   `{"indent": 2}`,
		"broken-man.yaml": "format: 1\nmodel: [\n",
	})
	r := scangate(t, dir, "", nil, "check", "m.yaml", "workflow.yml", "settings.json")
	wantCode(t, r, 2) // without the flag a named file is read as a manifest
	r = scangate(t, dir, "", nil, "check", "--manifests-only", "m.yaml", "workflow.yml", "settings.json")
	wantCode(t, r, 0)
	if !strings.Contains(r.stdout, "1 file, 1 table") {
		t.Errorf("want only m.yaml checked:\n%s", r.stdout)
	}
	r = scangate(t, dir, "", nil, "check", "--manifests-only", "broken-man.yaml")
	wantCode(t, r, 2) // a manifest that is broken is still reported
}
