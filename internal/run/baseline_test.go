package run

import (
	"errors"
	"io"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"

	"github.com/scangate/scangate/internal/report"
	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

// A regular file is read up to the bound plus one byte, so the loader can refuse it
// without holding all of it; anything else is refused before a byte is read.
func TestReadRegular(t *testing.T) {
	dir := t.TempDir()
	big := filepath.Join(dir, "big.json")
	os.WriteFile(big, []byte(strings.Repeat("x", 1000)), 0o644)
	data, err := readRegular(big, 100)
	if err != nil || len(data) != 101 {
		t.Errorf("read %d bytes, %v; want 101", len(data), err)
	}
	if _, err := readRegular(filepath.Join(dir, "missing.json"), 100); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("missing file: %v", err)
	}
	special := map[string]string{dir: "it is a directory"}
	if _, err := os.Stat("/dev/zero"); err == nil {
		special["/dev/zero"] = "it is a device"
		link := filepath.Join(dir, "zero.json")
		os.Symlink("/dev/zero", link)
		special[link] = "it is a device"
	}
	if fifo := filepath.Join(dir, "pipe.json"); syscall.Mkfifo(fifo, 0o644) == nil {
		special[fifo] = "it is a FIFO"
	}
	for path, want := range special {
		if _, err := readRegular(path, 100); err == nil || !strings.HasPrefix(err.Error(), want+", not a regular file") {
			t.Errorf("%s: %v, want %q", path, err, want)
		}
	}
}

func TestApplyBaselineErrors(t *testing.T) {
	dir := t.TempDir()
	r := &report.Result{}
	if _, err := ApplyBaseline("/dev/zero", r, schema.DefaultLimits, time.Time{}, false); err == nil || !strings.Contains(err.Error(), "--baseline: cannot read /dev/zero: it is a device") {
		t.Errorf("/dev/zero: %v", err)
	}
	bad := filepath.Join(dir, "b.json")
	os.WriteFile(bad, []byte("{\"schema_version\": 1,\n \"entries\": [}\n"), 0o644)
	_, err := ApplyBaseline(bad, r, schema.DefaultLimits, time.Time{}, false)
	var se *schema.Error
	if !errors.As(err, &se) || len(se.Problems) != 1 || se.Problems[0].Pos != (schema.Pos{Line: 2, Col: 14}) {
		t.Errorf("invalid baseline: %v", err)
	}
	lim := schema.DefaultLimits
	lim.MaxFileBytes = 10
	if _, err := ApplyBaseline(bad, r, lim, time.Time{}, false); err == nil || !strings.Contains(err.Error(), "above the limit of 10") {
		t.Errorf("above the bound: %v", err)
	}
}

// The path a fingerprint hashes comes from the input's own location: the working
// directory's repository when it holds the file, else the nearest repository above the
// file, else the directory named on the command line.
func TestFingerprintPaths(t *testing.T) {
	outside := t.TempDir()
	if repositoryAbove(outside, nil) != "" {
		t.Skipf("%s is inside a repository", outside)
	}
	repoA := filepath.Join(outside, "a")
	nested := filepath.Join(repoA, "vendor", "b")
	for _, d := range []string{filepath.Join(repoA, ".git"), filepath.Join(nested, ".git"), filepath.Join(outside, "loose", "deep")} {
		os.MkdirAll(d, 0o755)
	}
	r := &fingerprintPaths{above: map[string]string{}}
	r.wdRepo = repositoryAbove(repoA, r.above)
	if r.wdRepo != repoA {
		t.Fatalf("repository of %s: %q", repoA, r.wdRepo)
	}
	for _, c := range []struct {
		in   Input
		want string
	}{
		{Input{name: StdinName}, "stdin"},
		{Input{name: filepath.Join(repoA, "models", "m.yaml")}, "models/m.yaml"},
		// Inside the working directory's repository, a nested one does not count.
		{Input{name: filepath.Join(nested, "m.yaml")}, "vendor/b/m.yaml"},
		{Input{name: filepath.Join(outside, "loose", "deep", "m.yaml"), root: filepath.Join(outside, "loose")}, "deep/m.yaml"},
		{Input{name: filepath.Join(outside, "loose", "deep", "m.yaml")}, "m.yaml"},
	} {
		if got := r.key(c.in); got != c.want {
			t.Errorf("key(%+v) = %q, want %q", c.in, got, c.want)
		}
	}
	// Run from outside repository a, the nested repository is the nearest above its file.
	r = &fingerprintPaths{above: map[string]string{}}
	if got := r.key(Input{name: filepath.Join(nested, "m.yaml")}); got != "m.yaml" {
		t.Errorf("nested repository from outside: %q", got)
	}
	if got := r.key(Input{name: filepath.Join(repoA, "models", "m.yaml")}); got != "models/m.yaml" {
		t.Errorf("repository a from outside: %q", got)
	}
}

// The walk up is memoised per directory: every directory it passed is answered.
func TestRepositoryAboveMemo(t *testing.T) {
	root := t.TempDir()
	deep := filepath.Join(root, "x", "y", "z")
	os.MkdirAll(deep, 0o755)
	os.Mkdir(filepath.Join(root, ".git"), 0o755)
	seen := map[string]string{}
	if got := repositoryAbove(deep, seen); got != root {
		t.Fatalf("got %q, want %q", got, root)
	}
	for _, d := range []string{deep, filepath.Dir(deep), filepath.Join(root, "x"), root} {
		if seen[d] != root {
			t.Errorf("seen[%s] = %q", d, seen[d])
		}
	}
}

// baseline write's stamp: --expires is a date not before --today, --reason not blank,
// and findings an expiry says must count again are refused unless OverExpired.
func TestNewBaseline(t *testing.T) {
	out := filepath.Join(t.TempDir(), "bl.json")
	key := func(f string) string { return f }
	f := rules.Finding{Rule: "scan-time", Severity: rules.Warning, File: "m.yaml", Table: "orders", Subject: "scan", Message: "m"}
	today := time.Date(2026, 12, 2, 0, 0, 0, 0, time.UTC)
	for _, c := range []struct {
		stamp BaselineStamp
		want  string
	}{
		{BaselineStamp{Today: today, Expires: "2026-12-01"}, "--expires 2026-12-01 is before the date written, 2026-12-02 (--today, else the current date)"},
		{BaselineStamp{Today: today, Expires: "next year"}, `--expires "next year": write the date as YYYY-MM-DD`},
		{BaselineStamp{Today: today, Reason: "  "}, "--reason is blank"},
	} {
		if _, _, err := NewBaseline(out, []rules.Finding{f}, key, c.stamp, schema.DefaultLimits, io.Discard); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%+v: %v, want %q", c.stamp, err, c.want)
		}
	}
	data, n, err := NewBaseline(out, []rules.Finding{f}, key, BaselineStamp{Today: today, Expires: "2026-12-02", Reason: "why"}, schema.DefaultLimits, io.Discard)
	if err != nil || n != 1 || !strings.Contains(string(data), `"written": "2026-12-02"`) || !strings.Contains(string(data), `"expires": "2026-12-02"`) {
		t.Fatalf("%v, %d entries:\n%s", err, n, data)
	}
	if err := os.WriteFile(out, data, 0o644); err != nil {
		t.Fatal(err)
	}
	// The next day the entry has expired: writing over it would absorb its finding again.
	next := BaselineStamp{Today: today.AddDate(0, 0, 1)}
	var stderr strings.Builder
	_, _, err = NewBaseline(out, []rules.Finding{f}, key, next, schema.DefaultLimits, &stderr)
	var lapsed *LapsedError
	if !errors.As(err, &lapsed) || len(lapsed.Lines()) != 1 || lapsed.Lines()[0] != "m.yaml: warning: m [scan-time]" ||
		!strings.Contains(err.Error(), "1 finding of an expired waiver or baseline entry would be absorbed again") || stderr.String() != "m.yaml: warning: m [scan-time]\n" {
		t.Errorf("over an expired entry: %v", err)
	}
	next.OverExpired = true
	if _, n, err := NewBaseline(out, []rules.Finding{f}, key, next, schema.DefaultLimits, io.Discard); err != nil || n != 1 {
		t.Errorf("with OverExpired: %v, %d entries", err, n)
	}
}
