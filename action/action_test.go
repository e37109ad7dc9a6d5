// Package action_test tests the CI integration: action/run.sh end to end with a fake
// runner environment, action.yml against the action metadata rules that can be checked
// offline, the workflows with actionlint, the pre-commit hook definition, the installed
// binary's version line and a cross-build.
package action_test

import (
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"runtime"
	"slices"
	"strings"
	"sync"
	"testing"
)

// root is the repository root: this package lives in action/.
var root = func() string {
	abs, err := filepath.Abs("..")
	if err != nil {
		panic(err)
	}
	return abs
}()

var (
	buildOnce sync.Once
	buildDir  string
	buildBin  string
	buildErr  error
)

func TestMain(m *testing.M) {
	code := m.Run()
	if buildDir != "" {
		os.RemoveAll(buildDir)
	}
	os.Exit(code)
}

// scangate builds the binary once for every test that needs it, as a pipeline would
// install it; run.sh finds it through SCANGATE_BIN.
func scangate(t *testing.T) string {
	t.Helper()
	buildOnce.Do(func() {
		if buildDir, buildErr = os.MkdirTemp("", "scangate-action-"); buildErr != nil {
			return
		}
		buildBin = filepath.Join(buildDir, "scangate"+exe(runtime.GOOS))
		cmd := exec.Command("go", "build", "-o", buildBin, "./cmd/scangate")
		cmd.Dir = root
		if out, err := cmd.CombinedOutput(); err != nil {
			buildErr = fmt.Errorf("go build ./cmd/scangate: %v\n%s", err, out)
		}
	})
	if buildErr != nil {
		t.Fatal(buildErr)
	}
	return buildBin
}

func exe(goos string) string {
	if goos == "windows" {
		return ".exe"
	}
	return ""
}

// TestInstalledVersion installs scangate the way the action does (go install, into a
// GOBIN of its own) and checks that `scangate version` reports the module version and,
// when built from a git checkout, the revision: the first line of every action run.
func TestInstalledVersion(t *testing.T) {
	if testing.Short() {
		t.Skip("installs a binary; skipped with -short")
	}
	gobin := t.TempDir()
	install := exec.Command("go", "install", "-buildvcs=auto", "./cmd/scangate")
	install.Dir = root
	install.Env = append(os.Environ(), "GOBIN="+gobin) // -buildvcs on the command line beats GOFLAGS
	if out, err := install.CombinedOutput(); err != nil {
		t.Fatalf("go install: %v\n%s", err, out)
	}
	out, err := exec.Command(filepath.Join(gobin, "scangate"+exe(runtime.GOOS)), "version").CombinedOutput()
	if err != nil {
		t.Fatalf("scangate version: %v\n%s", err, out)
	}
	line := strings.TrimSuffix(string(out), "\n")
	// A module version derived from the checkout's tags and commit, or the revision
	// alone; never "(devel)".
	want := `^scangate (v[0-9][^ ]*( \(revision [0-9a-f]{12}(\+dirty)?\))?|[0-9a-f]{12}(\+dirty)?|unknown version \(no tag, module version or revision stamped\)) go1\.[0-9]+`
	if !regexp.MustCompile(want).MatchString(line) || strings.Contains(line, "(devel)") {
		t.Fatalf("scangate version printed %q, want it to match %s", line, want)
	}
	// When the toolchain stamped a revision (it does not in every checkout layout), the
	// line must name it.
	meta, err := exec.Command("go", "version", "-m", filepath.Join(gobin, "scangate"+exe(runtime.GOOS))).Output()
	if err != nil {
		t.Fatalf("go version -m: %v", err)
	}
	if m := regexp.MustCompile(`vcs\.revision=([0-9a-f]{12})`).FindSubmatch(meta); m != nil && !strings.Contains(line, string(m[1])) {
		t.Errorf("scangate version printed %q: the build carries revision %s, the line must name it", line, m[1])
	}
}

// TestReleaseTagStamp builds scangate as the release does, with the tag stamped by
// -ldflags -X: `version` prints the tag and the reports carry it as the tool version.
func TestReleaseTagStamp(t *testing.T) {
	if testing.Short() {
		t.Skip("builds a binary; skipped with -short")
	}
	bin := filepath.Join(t.TempDir(), "scangate"+exe(runtime.GOOS))
	build := exec.Command("go", "build", "-ldflags", "-X github.com/scangate/scangate/internal/run.releaseTag=v9.8.7", "-o", bin, "./cmd/scangate")
	build.Dir = root
	if out, err := build.CombinedOutput(); err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	out, err := exec.Command(bin, "version").Output()
	if err != nil || !strings.HasPrefix(string(out), "scangate v9.8.7 ") {
		t.Fatalf("scangate version printed %q (%v), want it to start with the stamped tag", out, err)
	}
	cmd := exec.Command(bin, "check", "--fail-on=never", "--format=json", "testdata/demo")
	cmd.Dir = root
	report, err := cmd.Output()
	if err != nil {
		t.Fatalf("check: %v", err)
	}
	var doc struct{ Tool struct{ Version string } }
	if err := json.Unmarshal(report, &doc); err != nil || doc.Tool.Version != "v9.8.7" {
		t.Errorf("the JSON report carries tool version %q (%v), want v9.8.7", doc.Tool.Version, err)
	}
}

// TestCrossBuild builds scangate without cgo for the release targets. Each target
// compiles the standard library anew, about a minute of CPU, so it belongs in the
// workflow's build job, not in every test run: CROSSBUILD=windows/arm64 builds one
// target, CROSSBUILD=all the six linux/darwin/windows x amd64/arm64.
func TestCrossBuild(t *testing.T) {
	want := os.Getenv("CROSSBUILD")
	if want == "" {
		t.Skip("set CROSSBUILD=all (or one GOOS/GOARCH) to cross-compile")
	}
	targets := []string{want}
	if want == "all" {
		targets = nil
		for _, goos := range []string{"linux", "darwin", "windows"} {
			for _, goarch := range []string{"amd64", "arm64"} {
				targets = append(targets, goos+"/"+goarch)
			}
		}
	}
	for _, target := range targets {
		goos, goarch, _ := strings.Cut(target, "/")
		t.Run(goos+"_"+goarch, func(t *testing.T) {
			bin := filepath.Join(t.TempDir(), "scangate"+exe(goos))
			cmd := exec.Command("go", "build", "-trimpath", "-o", bin, "./cmd/scangate")
			cmd.Dir = root
			cmd.Env = append(os.Environ(), "CGO_ENABLED=0", "GOOS="+goos, "GOARCH="+goarch)
			if out, err := cmd.CombinedOutput(); err != nil {
				t.Fatalf("go build for %s: %v\n%s", target, err, out)
			}
			if fi, err := os.Stat(bin); err != nil || fi.Size() == 0 {
				t.Fatalf("go build for %s left no binary at %s (%v)", target, bin, err)
			}
		})
	}
}

// TestPreCommitHook checks the hook definition the pre-commit framework reads: it runs
// `scangate check` on the staged files that can hold a manifest, and its file patterns
// pick the demo's manifests and skip the files that are never manifests.
func TestPreCommitHook(t *testing.T) {
	var hooks []map[string]any
	readYAML(t, filepath.Join(root, ".pre-commit-hooks.yaml"), &hooks)
	if len(hooks) != 1 {
		t.Fatalf(".pre-commit-hooks.yaml defines %d hooks, want 1", len(hooks))
	}
	h := hooks[0]
	for key, want := range map[string]any{"id": "scangate", "entry": "action/pre-commit.sh check --manifests-only", "language": "script", "pass_filenames": true} {
		if h[key] != want {
			t.Errorf("hook %s = %v, want %v", key, h[key], want)
		}
	}
	if s, _ := h["name"].(string); s == "" {
		t.Error("hook has no name")
	}
	// pre-commit matches with Python's re.search; these patterns use only syntax that
	// Go's regexp reads the same way.
	files := regexp.MustCompile(h["files"].(string))
	exclude := regexp.MustCompile(h["exclude"].(string))
	picked := func(p string) bool { return files.MatchString(p) && !exclude.MatchString(p) }
	for _, p := range []string{"testdata/demo/billing.yaml", "models/meters.yml", "models/meters.json", "meters.yaml"} {
		if !picked(p) {
			t.Errorf("the hook skips %s, a manifest", p)
		}
	}
	for _, p := range []string{".github/workflows/ci.yml", "action/run.sh", ".pre-commit-config.yaml",
		".pre-commit-hooks.yaml", ".scangate.yaml", "models/.scangate.yaml", ".scangate-baseline.json", "main.go", "README.md", "model.yaml.bak"} {
		if picked(p) {
			t.Errorf("the hook passes %s, which is never a manifest", p)
		}
	}

	// What pre-commit runs for a commit that stages the demo: the entry, then the files.
	var staged []string
	entries, err := os.ReadDir(filepath.Join(root, "testdata", "demo"))
	if err != nil {
		t.Fatal(err)
	}
	for _, e := range entries {
		if p := "testdata/demo/" + e.Name(); picked(p) {
			staged = append(staged, p)
		}
	}
	// The entry runs from a copy of the hook repository, as the framework's checkout
	// for one rev: it must build cmd/scangate alone, then run it on the staged files.
	entry := strings.Fields(h["entry"].(string))
	hookRepo := hookCheckout(t)
	cmd := exec.Command(filepath.Join(hookRepo, entry[0]), append(entry[1:], staged...)...)
	cmd.Dir = root
	out, err := cmd.Output()
	if code := exitCode(t, err); code != 1 {
		t.Fatalf("the hook's command exited %d on the demo, want 1 (it has errors)\n%s", code, out)
	}
	if want := fmt.Sprintf("%d files, ", len(entries)); !strings.Contains(string(out), want) {
		t.Errorf("the hook's command did not check every demo manifest (want %q in its summary):\n%s", want, out)
	}
	built, err := os.ReadDir(filepath.Join(hookRepo, ".pre-commit-bin"))
	if err != nil || len(built) != 1 || built[0].Name() != "scangate" {
		t.Errorf("the hook built %v (%v), want scangate alone", built, err)
	}
}

// hookCheckout copies the files the hook's build reads (go.mod, go.sum, the hook
// script and every Go package but the bench tools, which it must not need) into a
// directory of its own.
func hookCheckout(t *testing.T) string {
	t.Helper()
	dst := t.TempDir()
	err := filepath.WalkDir(root, func(p string, d os.DirEntry, err error) error {
		if err != nil {
			return err
		}
		rel, _ := filepath.Rel(root, p)
		if d.IsDir() {
			if rel == "bench" || rel == "dist" || rel == "testdata" || strings.HasPrefix(d.Name(), ".") && rel != "." {
				return filepath.SkipDir
			}
			return os.MkdirAll(filepath.Join(dst, rel), 0o755)
		}
		if !strings.HasSuffix(p, ".go") && !strings.HasSuffix(p, ".json") && !slices.Contains([]string{"go.mod", "go.sum", "action/pre-commit.sh"}, filepath.ToSlash(rel)) {
			return nil
		}
		data, err := os.ReadFile(p)
		if err != nil {
			return err
		}
		info, _ := d.Info()
		return os.WriteFile(filepath.Join(dst, rel), data, info.Mode().Perm())
	})
	if err != nil {
		t.Fatal(err)
	}
	return dst
}

// exitCode is the exit code behind err from exec (0 for nil).
func exitCode(t *testing.T, err error) int {
	t.Helper()
	if err == nil {
		return 0
	}
	if ee := (*exec.ExitError)(nil); errors.As(err, &ee) {
		return ee.ExitCode()
	}
	t.Fatal(err)
	return -1
}

// sortedKeys lists a map's keys in order, for stable messages.
func sortedKeys[V any](m map[string]V) []string {
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	slices.Sort(keys)
	return keys
}
