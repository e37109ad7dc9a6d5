package action_test

import (
	"bytes"
	"encoding/json"
	"io/fs"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"
)

// earlier is what an earlier step left in the job summary; run.sh must append to it.
const earlier = "## an earlier step\n\n"

// runner is a fake GitHub Actions runner for one run of run.sh: a workspace, the
// output and summary files, and a temp directory.
type runner struct {
	t         *testing.T
	workspace string
	output    string // GITHUB_OUTPUT; "" runs without it
	summary   string // GITHUB_STEP_SUMMARY; "" runs without it
	env       []string
	dir       string // where the script starts; a new directory when ""
}

type result struct {
	code           int
	stdout, stderr string
	outputs        map[string]string
	summary        string
}

func newRunner(t *testing.T, workspace string) *runner {
	t.Helper()
	if _, err := exec.LookPath("bash"); err != nil {
		t.Skip("bash is not on PATH; the action's script needs it")
	}
	dir := t.TempDir()
	r := &runner{t: t, workspace: workspace, output: filepath.Join(dir, "output"), summary: filepath.Join(dir, "summary")}
	if err := os.WriteFile(r.output, nil, 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(r.summary, []byte(earlier), 0o644); err != nil {
		t.Fatal(err)
	}
	r.env = []string{
		"GITHUB_ACTIONS=true",
		"GITHUB_WORKSPACE=" + workspace,
		"GITHUB_OUTPUT=" + r.output,
		"GITHUB_STEP_SUMMARY=" + r.summary,
		"RUNNER_TEMP=" + t.TempDir(),
		"SCANGATE_BIN=" + scangate(t),
	}
	return r
}

// cleanEnv is the test's environment without anything a real runner, the action or a
// terminal would set, so a run under CI never writes to the real runner's files.
func cleanEnv() []string {
	var env []string
	for _, kv := range os.Environ() {
		k, _, _ := strings.Cut(kv, "=")
		if strings.HasPrefix(k, "GITHUB_") || strings.HasPrefix(k, "INPUT_") || strings.HasPrefix(k, "RUNNER_") ||
			strings.HasPrefix(k, "SCANGATE_") || k == "CLICOLOR_FORCE" || k == "NO_COLOR" {
			continue
		}
		env = append(env, kv)
	}
	return env
}

// run runs action/run.sh with the inputs (named as in action.yml) from a directory
// other than the workspace, as a runner would.
func (r *runner) run(inputs map[string]string) result {
	r.t.Helper()
	cmd := exec.Command("bash", filepath.Join(root, "action", "run.sh"))
	cmd.Dir = r.dir
	if cmd.Dir == "" {
		cmd.Dir = r.t.TempDir()
	}
	cmd.Env = append(cleanEnv(), r.env...)
	for name, v := range inputs {
		cmd.Env = append(cmd.Env, envName(name)+"="+v)
	}
	var stdout, stderr bytes.Buffer
	cmd.Stdout, cmd.Stderr = &stdout, &stderr
	err := cmd.Run()
	res := result{code: exitCode(r.t, err), stdout: stdout.String(), stderr: stderr.String(), outputs: map[string]string{}}
	if r.output != "" {
		for _, line := range strings.Split(strings.TrimSuffix(readFile(r.t, r.output), "\n"), "\n") {
			if line == "" {
				continue
			}
			k, v, ok := strings.Cut(line, "=")
			if !ok {
				r.t.Fatalf("GITHUB_OUTPUT line %q is not name=value", line)
			}
			if _, dup := res.outputs[k]; dup {
				r.t.Fatalf("GITHUB_OUTPUT sets %s twice", k)
			}
			res.outputs[k] = v
		}
	}
	if r.summary != "" {
		res.summary = readFile(r.t, r.summary)
	}
	return res
}

// scangateIn runs the built binary in dir and returns its standard output and exit code.
func scangateIn(t *testing.T, dir string, args ...string) (string, int) {
	t.Helper()
	cmd := exec.Command(scangate(t), args...)
	cmd.Dir = dir
	cmd.Env = cleanEnv()
	out, err := cmd.Output()
	return string(out), exitCode(t, err)
}

// counts reads summary.errors, .warnings and .notes of scangate's JSON report with a
// JSON parser: the reference for run.sh's line-based reading.
func counts(t *testing.T, dir string, paths ...string) (errors, warnings, notes int) {
	t.Helper()
	out, _ := scangateIn(t, dir, append([]string{"check", "--format", "json", "--"}, paths...)...)
	var rep struct {
		Summary struct{ Errors, Warnings, Notes *int }
	}
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatalf("scangate check --format json: %v\n%s", err, out)
	}
	s := rep.Summary
	if s.Errors == nil || s.Warnings == nil || s.Notes == nil {
		t.Fatalf("the JSON report has no summary.errors, .warnings or .notes:\n%s", out)
	}
	return *s.Errors, *s.Warnings, *s.Notes
}

// workspace copies files from the repository (repo path -> workspace path) into a new
// directory and returns it.
func workspace(t *testing.T, files map[string]string) string {
	t.Helper()
	ws := t.TempDir()
	for from, to := range files {
		src := filepath.Join(root, filepath.FromSlash(from))
		err := filepath.WalkDir(src, func(p string, d fs.DirEntry, err error) error {
			if err != nil || d.IsDir() {
				return err
			}
			rel, _ := filepath.Rel(src, p)
			dst := filepath.Join(ws, filepath.FromSlash(to), rel)
			if err := os.MkdirAll(filepath.Dir(dst), 0o755); err != nil {
				return err
			}
			data, err := os.ReadFile(p)
			if err != nil {
				return err
			}
			return os.WriteFile(dst, data, 0o644)
		})
		if err != nil {
			t.Fatal(err)
		}
	}
	return ws
}

// wantCounts checks the findings, errors and warnings outputs against the JSON report.
func wantCounts(t *testing.T, res result, dir string, paths ...string) {
	t.Helper()
	e, w, n := counts(t, dir, paths...)
	for k, want := range map[string]int{"findings": e + w + n, "errors": e, "warnings": w} {
		if got, ok := res.outputs[k]; !ok || got != strconv.Itoa(want) {
			t.Errorf("output %s = %q, want %d (from the JSON report)", k, got, want)
		}
	}
}

// TestRunDemo is the action on the demo with the defaults: annotations and text in the
// log, the Markdown summary appended once, the outputs, the SARIF file, and exit 1
// because the demo has an error.
func TestRunDemo(t *testing.T) {
	ws := workspace(t, map[string]string{"testdata/demo": "models"})
	r := newRunner(t, ws)
	res := r.run(map[string]string{"paths": "models", "sarif-file": "out/scangate.sarif"})
	if res.code != 1 {
		t.Fatalf("exit %d, want 1 (the demo has an error)\nstdout:\n%s\nstderr:\n%s", res.code, res.stdout, res.stderr)
	}
	if res.outputs["exit-code"] != "1" {
		t.Errorf("output exit-code = %q, want 1", res.outputs["exit-code"])
	}
	wantCounts(t, res, ws, "models")
	if e, _, _ := counts(t, ws, "models"); e == 0 {
		t.Fatal("the demo has no errors; this test needs one")
	}

	// Every output action.yml maps is written, and besides them only the two the
	// upload step reads.
	var md struct {
		Outputs map[string]struct{ Value string }
	}
	readYAML(t, filepath.Join(root, "action", "action.yml"), &md)
	mapped := []string{"sarif-category", "upload-sarif"}
	for _, o := range md.Outputs {
		mapped = append(mapped, strings.TrimSuffix(strings.TrimPrefix(o.Value, "${{ steps.run.outputs."), " }}"))
	}
	slices.Sort(mapped)
	if got := sortedKeys(res.outputs); !slices.Equal(got, mapped) {
		t.Errorf("run.sh wrote outputs %v; action.yml maps %v", got, mapped)
	}

	// The version comes first, then the text report and the annotations.
	version, _ := scangateIn(t, ws, "version")
	if first, _, _ := strings.Cut(res.stdout, "\n"); first+"\n" != version {
		t.Errorf("the first line is %q, want the version %q", first, version)
	}
	text, _ := scangateIn(t, ws, "check", "--format", "text", "models")
	if !strings.Contains(res.stdout, text) {
		t.Errorf("the log lacks the text report:\n%s", text)
	}
	annotations, _ := scangateIn(t, ws, "check", "--format", "github", "models")
	if !strings.Contains(res.stdout, annotations) || !strings.Contains(annotations, "::error file=models/meter-telemetry.yaml,line=") {
		t.Errorf("the log lacks the annotations on the manifest lines:\n%s", annotations)
	}

	// The summary: what the earlier step wrote, then the report, once.
	markdown, _ := scangateIn(t, ws, "check", "--format", "markdown", "models")
	if res.summary != earlier+markdown {
		t.Errorf("job summary:\n%s\nwant the earlier content and the Markdown report once:\n%s%s", res.summary, earlier, markdown)
	}

	// The SARIF file is where the input says, valid, with one result per finding.
	if res.outputs["sarif-file"] != "out/scangate.sarif" {
		t.Errorf("output sarif-file = %q, want out/scangate.sarif", res.outputs["sarif-file"])
	}
	data, err := os.ReadFile(filepath.Join(ws, "out", "scangate.sarif"))
	if err != nil {
		t.Fatal(err)
	}
	var sarif struct {
		Version string
		Runs    []struct{ Results []json.RawMessage }
	}
	if err := json.Unmarshal(data, &sarif); err != nil {
		t.Fatalf("the SARIF file is not JSON: %v", err)
	}
	if sarif.Version != "2.1.0" || len(sarif.Runs) != 1 || strconv.Itoa(len(sarif.Runs[0].Results)) != res.outputs["findings"] {
		t.Errorf("SARIF version %q with %d runs; want 2.1.0, one run with %s results", sarif.Version, len(sarif.Runs), res.outputs["findings"])
	}
	if entries, _ := os.ReadDir(filepath.Join(ws, "out")); len(entries) != 1 {
		t.Errorf("out/ holds %d files, want only the SARIF file (the JSON report goes to a temp directory)", len(entries))
	}
}

// TestRunExitCodes: the job's exit code is scangate's, for each fail-on level and for
// a manifest that breaks the schema.
func TestRunExitCodes(t *testing.T) {
	demo := map[string]string{"testdata/demo": "models"}
	for _, c := range []struct {
		name   string
		files  map[string]string
		inputs map[string]string
		want   string
	}{
		{"fail-on never", demo, map[string]string{"paths": "models", "fail-on": "never"}, "0"},
		{"fail-on note", demo, map[string]string{"paths": "models", "fail-on": "note"}, "1"},
		{"broken manifest", map[string]string{"testdata/demo/billing.yaml": "models/billing.yaml", "testdata/bad/values.yaml": "models/values.yaml"},
			map[string]string{"paths": "models", "fail-on": "never"}, "2"},
	} {
		t.Run(strings.ReplaceAll(c.name, " ", "_"), func(t *testing.T) {
			ws := workspace(t, c.files)
			res := newRunner(t, ws).run(c.inputs)
			if strconv.Itoa(res.code) != c.want || res.outputs["exit-code"] != c.want {
				t.Errorf("exit %d, output exit-code %q; want %s\nstdout:\n%s\nstderr:\n%s", res.code, res.outputs["exit-code"], c.want, res.stdout, res.stderr)
			}
			wantCounts(t, res, ws, "models")
			if _, err := os.Stat(filepath.Join(ws, "scangate.sarif")); err != nil || res.outputs["sarif-file"] != "scangate.sarif" {
				t.Errorf("no SARIF file at the default path (output sarif-file %q): %v", res.outputs["sarif-file"], err)
			}
		})
	}
}

// TestRunSummaryOff: with summary false nothing is added to the job summary, the
// outputs are still written.
func TestRunSummaryOff(t *testing.T) {
	ws := gitWorkspace(t)
	res := newRunner(t, ws).run(map[string]string{"summary": "false", "diff-base": "HEAD", "fail-on": "never"})
	if res.code != 0 {
		t.Fatalf("exit %d, want 0\n%s%s", res.code, res.stdout, res.stderr)
	}
	if res.summary != earlier {
		t.Errorf("job summary changed with summary false:\n%s", res.summary)
	}
	wantCounts(t, res, ws, ".")
}

// TestRunBaselineAndConfig: the baseline input reaches check (the demo's findings are
// all baselined, so the run passes and counts nothing), and so does config (a missing
// config is a usage error: exit 2 and no counts, as there is no report).
func TestRunBaselineAndConfig(t *testing.T) {
	ws := workspace(t, map[string]string{"testdata/demo": "models"})
	if out, code := scangateIn(t, ws, "baseline", "write", "models", "-o", "baseline.json"); code != 0 {
		t.Fatalf("baseline write exited %d: %s", code, out)
	}
	res := newRunner(t, ws).run(map[string]string{"paths": "models", "baseline": "baseline.json"})
	if res.code != 0 || res.outputs["findings"] != "0" || res.outputs["errors"] != "0" {
		t.Errorf("with every finding baselined: exit %d, findings %q, errors %q; want 0, 0, 0\n%s",
			res.code, res.outputs["findings"], res.outputs["errors"], res.stdout)
	}

	res = newRunner(t, ws).run(map[string]string{"paths": "models", "config": "missing.yaml"})
	if res.code != 2 || res.outputs["exit-code"] != "2" {
		t.Errorf("with a missing config: exit %d, exit-code %q; want 2", res.code, res.outputs["exit-code"])
	}
	if got := sortedKeys(res.outputs); !slices.Equal(got, []string{"exit-code"}) {
		t.Errorf("with no report, outputs %v; want only exit-code", got)
	}
	if !strings.Contains(res.stderr, "missing.yaml") {
		t.Errorf("stderr does not name the missing config:\n%s", res.stderr)
	}
}

// TestRunPaths: paths split on spaces and newlines, and are never globbed or evaluated.
func TestRunPaths(t *testing.T) {
	ws := workspace(t, map[string]string{"testdata/demo": "models"})
	res := newRunner(t, ws).run(map[string]string{"paths": " models/billing.yaml\n\tmodels/network-assets.yaml \n", "fail-on": "never"})
	if res.code != 0 || !strings.Contains(res.stdout, "2 files, ") {
		t.Errorf("two paths on two lines: exit %d, want 0 and 2 files checked\n%s%s", res.code, res.stdout, res.stderr)
	}
	wantCounts(t, res, ws, "models/billing.yaml", "models/network-assets.yaml")

	for _, p := range []string{"models/*.yaml", "$(touch pwned)", "`touch pwned`"} {
		res := newRunner(t, ws).run(map[string]string{"paths": p})
		if res.code != 2 {
			t.Errorf("paths %q: exit %d, want 2 (no such file)\n%s%s", p, res.code, res.stdout, res.stderr)
		}
	}
	if _, err := os.Stat(filepath.Join(ws, "pwned")); err == nil {
		t.Error("an input was run as a command")
	}
}

// TestRunBadInputs: the script's own checks exit 2 with a message and an exit-code output.
func TestRunBadInputs(t *testing.T) {
	ws := workspace(t, map[string]string{"testdata/demo": "models"})
	for _, c := range []struct {
		name   string
		inputs map[string]string
		env    string
		want   string
	}{
		{"summary", map[string]string{"summary": "maybe"}, "", "summary must be true or false"},
		{"sarif-category", map[string]string{"sarif-category": "a\nb"}, "", "sarif-category must not hold a line break"},
		{"sarif-file", map[string]string{"sarif-file": "a\nb=c"}, "", "sarif-file must not hold a line break"},
		{"binary", nil, "SCANGATE_BIN=" + filepath.Join(ws, "no-such-scangate"), "cannot run"},
		{"fail-on", map[string]string{"fail-on": "sometimes"}, "", "--fail-on"},
	} {
		t.Run(c.name, func(t *testing.T) {
			r := newRunner(t, ws)
			if c.env != "" {
				r.env = append(r.env, c.env)
			}
			res := r.run(c.inputs)
			if res.code != 2 || res.outputs["exit-code"] != "2" || !strings.Contains(res.stderr, c.want) {
				t.Errorf("exit %d, exit-code %q, stderr %q; want 2, 2 and %q", res.code, res.outputs["exit-code"], res.stderr, c.want)
			}
		})
	}
}

// TestRunRelativeBinary: a SCANGATE_BIN relative to where the step starts still runs
// after the script moves to the workspace.
func TestRunRelativeBinary(t *testing.T) {
	ws := workspace(t, map[string]string{"testdata/demo": "models"})
	r := newRunner(t, ws)
	r.dir = filepath.Dir(scangate(t))
	r.env = append(r.env, "SCANGATE_BIN=./"+filepath.Base(scangate(t)))
	if res := r.run(map[string]string{"paths": "models", "fail-on": "never"}); res.code != 0 || res.outputs["exit-code"] != "0" {
		t.Errorf("exit %d, exit-code %q; want 0\n%s%s", res.code, res.outputs["exit-code"], res.stdout, res.stderr)
	}
}

// TestRunOutsideActions: with no runner variables the script still checks the current
// directory and exits with scangate's code; it writes no files of its own.
func TestRunOutsideActions(t *testing.T) {
	if _, err := exec.LookPath("bash"); err != nil {
		t.Skip("bash is not on PATH; the action's script needs it")
	}
	ws := workspace(t, map[string]string{"testdata/demo": "models"})
	cmd := exec.Command("bash", filepath.Join(root, "action", "run.sh"))
	cmd.Dir = ws
	cmd.Env = append(cleanEnv(), "SCANGATE_BIN="+scangate(t), "TMPDIR="+t.TempDir())
	out, err := cmd.CombinedOutput()
	if code := exitCode(t, err); code != 1 {
		t.Errorf("exit %d, want 1\n%s", code, out)
	}
	entries, _ := os.ReadDir(ws)
	var names []string
	for _, e := range entries {
		names = append(names, e.Name())
	}
	if !slices.Equal(names, []string{"models", "scangate.sarif"}) {
		t.Errorf("the workspace holds %v, want models and scangate.sarif", names)
	}
}

// gitWorkspace is a git repository holding testdata/diff/before as its one commit and
// testdata/diff/after in its working tree: a change that adds day partitions.
func gitWorkspace(t *testing.T) string {
	t.Helper()
	if _, err := exec.LookPath("git"); err != nil {
		t.Skip("git is not on PATH; diff --base needs it")
	}
	ws := workspace(t, map[string]string{"testdata/diff/before": "."})
	env := append(cleanEnv(), "GIT_AUTHOR_NAME=scangate", "GIT_AUTHOR_EMAIL=scangate@example.com",
		"GIT_COMMITTER_NAME=scangate", "GIT_COMMITTER_EMAIL=scangate@example.com",
		"GIT_CONFIG_GLOBAL="+os.DevNull, "GIT_CONFIG_NOSYSTEM=1")
	for _, args := range [][]string{
		{"init", "-q"},
		{"add", "."},
		{"-c", "commit.gpgsign=false", "commit", "-q", "-m", "base"},
	} {
		cmd := exec.Command("git", args...)
		cmd.Dir, cmd.Env = ws, env
		if out, err := cmd.CombinedOutput(); err != nil {
			t.Fatalf("git %v: %v\n%s", args, err, out)
		}
	}
	after := workspace(t, map[string]string{"testdata/diff/after": "."})
	entries, err := os.ReadDir(after)
	if err != nil {
		t.Fatal(err)
	}
	for _, e := range entries {
		data, err := os.ReadFile(filepath.Join(after, e.Name()))
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join(ws, e.Name()), data, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return ws
}

// TestRunDiffBase: with diff-base, the diff follows the check in the log, its Markdown
// follows check's in the job summary (each once), and the exit code is the larger of
// the two.
func TestRunDiffBase(t *testing.T) {
	ws := gitWorkspace(t)
	res := newRunner(t, ws).run(map[string]string{"diff-base": "HEAD"})
	_, checkCode := scangateIn(t, ws, "check", "--format", "json", ".")
	diffText, diffCode := scangateIn(t, ws, "diff", "--base", "HEAD", "--format", "text", ".")
	if checkCode != 1 || diffCode != 0 {
		t.Fatalf("check exits %d and diff %d on the change; this test wants 1 and 0", checkCode, diffCode)
	}
	if res.code != 1 || res.outputs["exit-code"] != "1" {
		t.Errorf("exit %d, exit-code %q; want 1 (check 1, diff 0)\n%s%s", res.code, res.outputs["exit-code"], res.stdout, res.stderr)
	}
	wantCounts(t, res, ws, ".")
	checkMD, _ := scangateIn(t, ws, "check", "--format", "markdown", ".")
	diffMD, _ := scangateIn(t, ws, "diff", "--base", "HEAD", "--format", "markdown", ".")
	if want := earlier + checkMD + diffMD; res.summary != want {
		t.Errorf("job summary:\n%s\nwant:\n%s", res.summary, want)
	}
	if !strings.Contains(res.stdout, diffText) {
		t.Errorf("the log lacks the diff:\n%s", diffText)
	}
	if !strings.Contains(diffMD, "pump") || !strings.Contains(diffText, "+") {
		t.Errorf("the diff shows no change; the fixture changed?\n%s", diffText)
	}

	// The diff's gate: the fixture adds hundreds of ms per scan to pump_readings, so a
	// 1 ms allowance fails the job even when check's findings do not.
	res = newRunner(t, ws).run(map[string]string{"diff-base": "HEAD", "fail-on": "never", "max-added-ms": "1"})
	if res.code != 1 || !strings.Contains(res.stdout, "--max-added-ms") {
		t.Errorf("max-added-ms 1: exit %d; want 1 with the gate in the log\n%s%s", res.code, res.stdout, res.stderr)
	}
	res = newRunner(t, ws).run(map[string]string{"diff-base": "HEAD", "fail-on": "never", "max-added-ms": "100000", "max-added-segments": "100000"})
	if res.code != 0 {
		t.Errorf("generous limits: exit %d; want 0\n%s%s", res.code, res.stdout, res.stderr)
	}

	// A base that was never fetched fails the job even when check passes.
	res = newRunner(t, ws).run(map[string]string{"diff-base": "origin/no-such-branch", "fail-on": "never"})
	if res.code != 2 || res.outputs["exit-code"] != "2" {
		t.Errorf("unknown diff-base: exit %d, exit-code %q; want 2 (check 0, diff 2)\n%s%s", res.code, res.outputs["exit-code"], res.stdout, res.stderr)
	}
	if !strings.Contains(res.stderr, "origin/no-such-branch") {
		t.Errorf("stderr does not name the missing revision:\n%s", res.stderr)
	}
	wantCounts(t, res, ws, ".")
}

// TestCountsParser feeds run.sh hand-made JSON reports through a stand-in binary: the
// counts must come from the top-level summary only, never from a nested "errors" key,
// and a report without the expected layout must fail the step rather than report
// wrong numbers.
func TestCountsParser(t *testing.T) {
	ws := t.TempDir()
	fake := filepath.Join(ws, "fake-scangate")
	script := `#!/usr/bin/env bash
[ "$1" = version ] && { echo "scangate fake"; exit 0; }
for a in "$@"; do
  case "$a" in --format=json=*) cp "$FAKE_REPORT" "${a#--format=json=}" ;; esac
done
`
	if err := os.WriteFile(fake, []byte(script), 0o755); err != nil {
		t.Fatal(err)
	}
	decoys := `{
  "schema_version": 1,
  "errors": 90,
  "files": [
    {
      "summary": {
        "errors": 91
      },
      "tables": [
        {
          "errors": 92,
          "warnings": 93
        }
      ]
    }
  ],
  "summary": {
    "files": 1,
    "notes": 4,
    "warnings": 20,
    "errors": 300,
    "waived": 7
  },
  "findings": []
}
`
	for _, c := range []struct {
		name, report string
		code         int
		outputs      map[string]string
	}{
		{"decoys", decoys, 0, map[string]string{"findings": "324", "errors": "300", "warnings": "20", "exit-code": "0"}},
		{"minified", `{"summary":{"errors":1,"warnings":2,"notes":3}}`, 2, map[string]string{"exit-code": "2"}},
		{"no notes", strings.Replace(decoys, `"notes": 4,`, "", 1), 2, map[string]string{"exit-code": "2"}},
	} {
		t.Run(c.name, func(t *testing.T) {
			report := filepath.Join(t.TempDir(), "report.json")
			if err := os.WriteFile(report, []byte(c.report), 0o644); err != nil {
				t.Fatal(err)
			}
			r := newRunner(t, ws)
			r.env = append(r.env, "SCANGATE_BIN="+fake, "FAKE_REPORT="+report)
			res := r.run(nil)
			if res.code != c.code {
				t.Errorf("exit %d, want %d\n%s%s", res.code, c.code, res.stdout, res.stderr)
			}
			delete(res.outputs, "sarif-file") // the stand-in writes none
			if got, _ := json.Marshal(res.outputs); string(got) != string(must(json.Marshal(c.outputs))) {
				t.Errorf("outputs %s, want %s", got, must(json.Marshal(c.outputs)))
			}
		})
	}
}

func must[T any](v T, err error) T {
	if err != nil {
		panic(err)
	}
	return v
}

// TestRunUploadSarifAndCategory: upload-sarif reads a YAML boolean written any way and
// comes back as the upload-sarif output the upload step tests; the category names the
// job and the SARIF file, so two runs in one workflow upload under different ones.
func TestRunUploadSarifAndCategory(t *testing.T) {
	ws := workspace(t, map[string]string{"testdata/demo": "models"})
	for in, want := range map[string]string{"true": "true", "True": "true", "TRUE": "true", "yes": "true", "1": "true", "": "true",
		"false": "false", "False": "false", "no": "false", "0": "false"} {
		res := newRunner(t, ws).run(map[string]string{"paths": "models", "fail-on": "never", "upload-sarif": in})
		if res.code != 0 || res.outputs["upload-sarif"] != want {
			t.Errorf("upload-sarif %q: exit %d, output %q; want 0 and %q\n%s", in, res.code, res.outputs["upload-sarif"], want, res.stderr)
		}
	}
	res := newRunner(t, ws).run(map[string]string{"paths": "models", "upload-sarif": "maybe"})
	if res.code != 2 || !strings.Contains(res.stderr, "upload-sarif must be true or false") {
		t.Errorf("upload-sarif maybe: exit %d, stderr %q; want 2 and a message naming the input", res.code, res.stderr)
	}

	categories := map[string]bool{}
	for _, c := range []struct {
		job    string
		inputs map[string]string
	}{
		{"lint", map[string]string{"sarif-file": "a.sarif"}},
		{"lint", map[string]string{"sarif-file": "b.sarif"}},
		{"models", map[string]string{"sarif-file": "a.sarif"}},
		{"models", map[string]string{"sarif-file": "a.sarif", "sarif-category": "nightly"}},
	} {
		r := newRunner(t, ws)
		r.env = append(r.env, "GITHUB_JOB="+c.job)
		c.inputs["paths"], c.inputs["fail-on"] = "models", "never"
		res := r.run(c.inputs)
		got := res.outputs["sarif-category"]
		if res.code != 0 || got == "" || categories[got] {
			t.Errorf("job %s, inputs %v: exit %d, category %q; want a category no other run has", c.job, c.inputs, res.code, got)
		}
		categories[got] = true
	}
	if !categories["scangate/lint/a.sarif"] || !categories["nightly"] {
		t.Errorf("categories %v; want scangate/<job>/<sarif-file> by default and the input verbatim", sortedKeys(categories))
	}
}
