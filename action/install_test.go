package action_test

import (
	"archive/tar"
	"compress/gzip"
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"strings"
	"testing"
)

// release is a local release folder laid out as the release workflow publishes one:
// <dir>/<tag>/scangate_<tag>_<os>_<arch>.tar.gz and scangate_<tag>_checksums.txt,
// holding the scangate binary built from this checkout.
func release(t *testing.T, tag string) (dir, archive string) {
	t.Helper()
	if runtime.GOOS == "windows" {
		t.Skip("the fake release is a tar.gz; windows archives are zip")
	}
	dir = t.TempDir()
	folder := filepath.Join(dir, tag)
	if err := os.MkdirAll(folder, 0o755); err != nil {
		t.Fatal(err)
	}
	archive = fmt.Sprintf("scangate_%s_%s_%s.tar.gz", tag, runtime.GOOS, runtime.GOARCH)
	bin, err := os.ReadFile(scangate(t))
	if err != nil {
		t.Fatal(err)
	}
	f, err := os.Create(filepath.Join(folder, archive))
	if err != nil {
		t.Fatal(err)
	}
	gz := gzip.NewWriter(f)
	tw := tar.NewWriter(gz)
	for name, body := range map[string][]byte{"scangate": bin, "README.md": []byte("readme\n"), "LICENSE": []byte("license\n")} {
		if err := tw.WriteHeader(&tar.Header{Name: name, Mode: 0o755, Size: int64(len(body))}); err != nil {
			t.Fatal(err)
		}
		if _, err := tw.Write(body); err != nil {
			t.Fatal(err)
		}
	}
	for _, c := range []interface{ Close() error }{tw, gz, f} {
		if err := c.Close(); err != nil {
			t.Fatal(err)
		}
	}
	data, err := os.ReadFile(filepath.Join(folder, archive))
	if err != nil {
		t.Fatal(err)
	}
	sum := sha256.Sum256(data)
	sums := fmt.Sprintf("%s  scangate_%s_other_arch.tar.gz\n%s  %s\n", strings.Repeat("0", 64), tag, hex.EncodeToString(sum[:]), archive)
	writeSums(t, dir, tag, sums)
	return dir, archive
}

func writeSums(t *testing.T, dir, tag, sums string) {
	t.Helper()
	if err := os.WriteFile(filepath.Join(dir, tag, "scangate_"+tag+"_checksums.txt"), []byte(sums), 0o644); err != nil {
		t.Fatal(err)
	}
}

type installRun struct {
	code           int
	stdout, stderr string
	outputs        map[string]string
	path           string // what was added to GITHUB_PATH
}

// install runs action/install.sh STEP with env as a runner would, with its own output
// and path files.
func install(t *testing.T, step string, env ...string) installRun {
	t.Helper()
	if _, err := exec.LookPath("bash"); err != nil {
		t.Skip("bash is not on PATH; the action's script needs it")
	}
	if _, err := exec.LookPath("curl"); err != nil {
		t.Skip("curl is not on PATH; the install downloads with it")
	}
	files := t.TempDir()
	output, path := filepath.Join(files, "output"), filepath.Join(files, "path")
	cmd := exec.Command("bash", filepath.Join(root, "action", "install.sh"), step)
	cmd.Dir = t.TempDir()
	cmd.Env = append(cleanEnv(), "GITHUB_OUTPUT="+output, "GITHUB_PATH="+path, "RUNNER_TEMP="+t.TempDir())
	cmd.Env = append(cmd.Env, env...)
	var stdout, stderr strings.Builder
	cmd.Stdout, cmd.Stderr = &stdout, &stderr
	err := cmd.Run()
	res := installRun{code: exitCode(t, err), stdout: stdout.String(), stderr: stderr.String(), outputs: map[string]string{}}
	if data, err := os.ReadFile(output); err == nil {
		for _, line := range strings.Split(strings.TrimSpace(string(data)), "\n") {
			if k, v, ok := strings.Cut(line, "="); ok {
				res.outputs[k] = v
			}
		}
	}
	if data, err := os.ReadFile(path); err == nil {
		res.path = strings.TrimSpace(string(data))
	}
	return res
}

// TestInstallRelease: the plan names a release install with a cache key per version
// and platform; the install downloads the archive from the release folder, checks it
// against the checksums file, unpacks scangate onto GITHUB_PATH, and a second run
// (a cache hit) uses the binary already there.
func TestInstallRelease(t *testing.T) {
	dir, archive := release(t, "v1.2.3")
	cache := t.TempDir()
	base := []string{"RUNNER_TOOL_CACHE=" + cache, "SCANGATE_RELEASE_URL=file://" + dir}
	plan := install(t, "plan", append(base, "ACTION_REF=v1.2.3")...)
	target := runtime.GOOS + "_" + runtime.GOARCH
	if plan.code != 0 || plan.outputs["kind"] != "release" || plan.outputs["version"] != "v1.2.3" ||
		plan.outputs["cache-key"] != "scangate-v1.2.3-"+target || plan.outputs["dir"] != filepath.Join(cache, "scangate", "v1.2.3", target) {
		t.Fatalf("plan: exit %d, outputs %v\n%s", plan.code, plan.outputs, plan.stderr)
	}
	env := append(base, "ACTION_REF=v1.2.3", "SCANGATE_INSTALL_DIR="+plan.outputs["dir"])
	res := install(t, "install", env...)
	if res.code != 0 || !strings.Contains(res.stdout, archive) || !strings.Contains(res.stdout, "verified") {
		t.Fatalf("install: exit %d\n%s%s", res.code, res.stdout, res.stderr)
	}
	if res.path != plan.outputs["dir"] {
		t.Errorf("GITHUB_PATH got %q, want %q", res.path, plan.outputs["dir"])
	}
	out, err := exec.Command(filepath.Join(plan.outputs["dir"], "scangate"), "version").Output()
	if err != nil || !strings.HasPrefix(string(out), "scangate ") {
		t.Errorf("the installed scangate: %q, %v", out, err)
	}

	// A cache hit downloads nothing: the release folder may be gone.
	if err := os.RemoveAll(dir); err != nil {
		t.Fatal(err)
	}
	res = install(t, "install", env...)
	if res.code != 0 || !strings.Contains(res.stdout, "from the cache") {
		t.Errorf("second install: exit %d, want the cached binary\n%s%s", res.code, res.stdout, res.stderr)
	}
}

// TestInstallChecksumRefused: an archive whose SHA-256 is not the one the checksums
// file lists, or that the file does not list at all, is never unpacked or run.
func TestInstallChecksumRefused(t *testing.T) {
	for _, c := range []struct{ name, sums, want string }{
		{"mismatch", strings.Repeat("ab", 32) + "  ARCHIVE\n", "checksum mismatch for ARCHIVE"},
		{"not listed", strings.Repeat("ab", 32) + "  scangate_v1.2.3_other_arch.tar.gz\n", "does not list ARCHIVE"},
		{"empty", "", "does not list ARCHIVE"},
	} {
		t.Run(strings.ReplaceAll(c.name, " ", "_"), func(t *testing.T) {
			dir, archive := release(t, "v1.2.3")
			writeSums(t, dir, "v1.2.3", strings.ReplaceAll(c.sums, "ARCHIVE", archive))
			installDir := filepath.Join(t.TempDir(), "bin")
			res := install(t, "install", "INPUT_VERSION=v1.2.3", "SCANGATE_RELEASE_URL=file://"+dir, "SCANGATE_INSTALL_DIR="+installDir)
			if want := strings.ReplaceAll(c.want, "ARCHIVE", archive); res.code == 0 || !strings.Contains(res.stderr, want) {
				t.Errorf("exit %d, stderr %q; want a non-zero exit and %q", res.code, res.stderr, want)
			}
			if _, err := os.Stat(filepath.Join(installDir, "scangate")); err == nil {
				t.Error("a refused archive was unpacked")
			}
			if res.path != "" {
				t.Errorf("a refused install added %q to GITHUB_PATH", res.path)
			}
		})
	}
	// A release folder that does not exist is a clear download error.
	res := install(t, "install", "INPUT_VERSION=v9.9.9", "SCANGATE_RELEASE_URL=file://"+t.TempDir(), "SCANGATE_INSTALL_DIR="+t.TempDir())
	if res.code == 0 || !strings.Contains(res.stderr, "cannot download") {
		t.Errorf("missing release: exit %d, stderr %q", res.code, res.stderr)
	}
}

// TestInstallPlanVersions: which version the plan resolves and how it installs it.
func TestInstallPlanVersions(t *testing.T) {
	for _, c := range []struct {
		name          string
		env           []string
		version, kind string
		fail          string
	}{
		{"the action's ref", []string{"ACTION_REF=v1.4.0"}, "v1.4.0", "release", ""},
		{"ref from the action path", []string{"GITHUB_ACTION_PATH=/runner/_actions/scangate/scangate/v2.0.1/action"}, "v2.0.1", "release", ""},
		{"input beats the ref", []string{"ACTION_REF=v1.4.0", "INPUT_VERSION=v1.5.0-rc.1"}, "v1.5.0-rc.1", "release", ""},
		{"commit", []string{"INPUT_VERSION=269dacb8a39a21c7ddafd74f503c61aa6389ee41"}, "269dacb8a39a21c7ddafd74f503c61aa6389ee41", "source", ""},
		{"branch", []string{"ACTION_REF=main"}, "main", "source", ""},
		{"local checkout", []string{"GITHUB_ACTION_PATH=/home/runner/work/repo/repo/./action"}, "", "local", ""},
		{"moving major tag", []string{"ACTION_REF=v1"}, "", "", "moving tag"},
		{"latest", []string{"INPUT_VERSION=latest"}, "", "", "'latest' is not supported"},
		{"not a ref", []string{"INPUT_VERSION=main; rm -rf /"}, "", "", "neither a release tag"},
	} {
		t.Run(strings.ReplaceAll(c.name, " ", "_"), func(t *testing.T) {
			res := install(t, "plan", c.env...)
			if c.fail != "" {
				if res.code != 2 || !strings.Contains(res.stderr, c.fail) || res.outputs["kind"] != "" {
					t.Errorf("exit %d, stderr %q, outputs %v; want 2 and %q", res.code, res.stderr, res.outputs, c.fail)
				}
				return
			}
			if res.code != 0 || res.outputs["version"] != c.version || res.outputs["kind"] != c.kind {
				t.Errorf("exit %d, outputs %v; want version %q kind %q\n%s", res.code, res.outputs, c.version, c.kind, res.stderr)
			}
		})
	}
}
