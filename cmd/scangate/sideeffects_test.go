package main

import (
	"crypto/sha256"
	"encoding/hex"
	"io/fs"
	"os"
	"os/exec"
	"path/filepath"
	"sort"
	"strings"
	"testing"
)

// snapshot is every file under dir with a hash of its bytes and its mode.
func snapshot(t *testing.T, dir string) map[string]string {
	t.Helper()
	out := map[string]string{}
	filepath.WalkDir(dir, func(path string, d fs.DirEntry, err error) error {
		if err != nil || d.IsDir() {
			return err
		}
		data, _ := os.ReadFile(path)
		info, _ := d.Info()
		sum := sha256.Sum256(data)
		rel, _ := filepath.Rel(dir, path)
		out[rel] = hex.EncodeToString(sum[:]) + " " + info.Mode().String()
		return nil
	})
	return out
}

// check, plan and diff write nothing but the reports they are asked for: the manifests,
// the config and every other file stay byte for byte as they were.
func TestNoSideEffects(t *testing.T) {
	demo, _ := filepath.Glob(filepath.Join(root(t), "testdata/demo/*.yaml"))
	files := map[string]string{".scangate.yaml": "rules:\n  partition-count: {limit: 4000}\n"}
	for _, p := range demo {
		data, _ := os.ReadFile(p)
		files["models/"+filepath.Base(p)] = string(data)
	}
	dir := repo(t, files)
	before := snapshot(t, dir)
	for _, args := range [][]string{
		{"check", "--format", "text", "--format", "json=out/r.json", "--format", "sarif=out/r.sarif", "models"},
		{"plan", "models/meter-telemetry.yaml"},
		{"diff", "models/billing.yaml", "models/billing.yaml"},
		{"baseline", "write", "models", "-o", "out/base.json"},
		{"check", "--baseline", "out/base.json", "models"},
	} {
		if r := scangate(t, dir, "", nil, args...); r.code > 1 {
			t.Fatalf("%v: exit %d\n%s", args, r.code, r.stderr)
		}
	}
	after := snapshot(t, dir)
	var added, changed []string
	for name, sum := range after {
		if old, ok := before[name]; !ok {
			added = append(added, name)
		} else if old != sum {
			changed = append(changed, name)
		}
	}
	sort.Strings(added)
	if len(changed) > 0 || strings.Join(added, " ") != "out/base.json out/r.json out/r.sarif" {
		t.Errorf("changed %v, added %v; want only the three requested outputs added", changed, added)
	}
}

// Run in a network namespace with no interfaces, where any connection fails at once,
// check prints the same report as anywhere: it needs no network.
func TestCheckWithoutNetwork(t *testing.T) {
	if _, err := exec.LookPath("unshare"); err != nil {
		t.Skip("unshare is not installed")
	}
	if err := exec.Command("unshare", "-rn", "true").Run(); err != nil {
		t.Skipf("no network namespaces here: %v", err)
	}
	want := scangate(t, root(t), "", nil, "check", "--format", "json", "testdata/demo")
	cmd := exec.Command("unshare", "-rn", binary, "check", "--format", "json", "testdata/demo")
	cmd.Dir = root(t)
	got, _ := cmd.Output()
	if string(got) != want.stdout {
		t.Error("the report differs without a network")
	}
}
