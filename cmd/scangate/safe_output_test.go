package main

import (
	"crypto/sha256"
	"errors"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
)

// sums hashes every file of dir, to show a refused run changed nothing.
func sums(t *testing.T, dir string) map[string][32]byte {
	t.Helper()
	out := map[string][32]byte{}
	entries, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	for _, e := range entries {
		if data, err := os.ReadFile(filepath.Join(dir, e.Name())); err == nil {
			out[e.Name()] = sha256.Sum256(data)
		}
	}
	return out
}

// A report path that is one of the inputs (directly or through a symbolic link), the
// project config, the baseline, or another report of the run is refused before
// anything is written: exit 2, named, and every file as it was.
func TestReportsNeverReplaceInputs(t *testing.T) {
	manifest := "format: 1\nmodel: m\nengine: {segment_rows: 1000}\ntables: [{name: t, rows: 10, partitions: {scheme: none}}]\n"
	dir := repo(t, map[string]string{"billing.yaml": manifest, "other.yaml": manifest, ".scangate.yaml": "rules: {}\n"})
	if err := os.Symlink("billing.yaml", filepath.Join(dir, "link.yml")); err != nil {
		t.Fatal(err)
	}
	if r := scangate(t, dir, "", nil, "baseline", "write", ".", "-o", "base.json"); r.code != 0 {
		t.Fatalf("baseline write: %d %s", r.code, r.stderr)
	}
	before := sums(t, dir)
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"check", "--format", "json=billing.yaml", "."}, "--format json=billing.yaml: billing.yaml is one of the inputs"},
		{[]string{"check", "--output", "link.yml", "."}, "--output link.yml: link.yml is one of the inputs (billing.yaml)"},
		{[]string{"check", "--format", "markdown=.scangate.yaml", "."}, "is one of the inputs"},
		{[]string{"check", "--baseline", "base.json", "--format", "sarif=base.json", "."}, "base.json is one of the inputs"},
		{[]string{"check", "--format", "json=r.json", "--format", "sarif=./r.json", "."}, "--format sarif=./r.json: ./r.json is already the target of --format json=r.json"},
		{[]string{"diff", "--format", "markdown=other.yaml", "billing.yaml", "other.yaml"}, "other.yaml is one of the inputs"},
		{[]string{"baseline", "write", ".", "-o", "billing.yaml"}, "--output billing.yaml: billing.yaml is one of the inputs"},
		{[]string{"plan", "billing.yaml", "--svg", "link.yml"}, "--svg link.yml: link.yml is one of the inputs"},
	} {
		r := scangate(t, dir, "", nil, c.args...)
		if r.code != 2 || !strings.Contains(r.stderr, c.want) {
			t.Errorf("%v: exit %d, stderr %q; want 2 and %q", c.args, r.code, r.stderr, c.want)
		}
	}
	after := sums(t, dir)
	for name, sum := range before {
		if after[name] != sum {
			t.Errorf("%s changed", name)
		}
	}
	if len(after) != len(before) {
		t.Errorf("files before %d, after %d: a refused run wrote something", len(before), len(after))
	}
}

// A report bound for a device is written to it in place, never renamed over it: the
// device stays a device.
func TestReportsToDevicesStayDevices(t *testing.T) {
	dir := root(t)
	for _, dev := range []string{"/dev/null", "/dev/full"} {
		if _, err := os.Stat(dev); err != nil {
			t.Skipf("%s: %v", dev, err)
		}
	}
	r := scangate(t, dir, "", nil, "check", "--format", "sarif=/dev/null", "testdata/demo")
	wantCode(t, r, 1)
	r = scangate(t, dir, "", nil, "check", "--format", "json=/dev/full", "testdata/demo")
	if r.code != 2 || !strings.Contains(r.stderr, "cannot write /dev/full: no space left on device") {
		t.Errorf("a full device: exit %d, %q", r.code, r.stderr)
	}
	for _, dev := range []string{"/dev/null", "/dev/full"} {
		if info, err := os.Stat(dev); err != nil || info.Mode()&os.ModeCharDevice == 0 {
			t.Errorf("%s is no longer a character device: %v %v", dev, info.Mode(), err)
		}
	}
	// A character device made for the test (as root only) is written in place too.
	if os.Geteuid() == 0 {
		own := filepath.Join(t.TempDir(), "null")
		if err := syscall.Mknod(own, syscall.S_IFCHR|0o666, 1<<8|3); err == nil {
			wantCode(t, scangate(t, dir, "", nil, "check", "--output", own, "--format", "markdown", "testdata/demo"), 1)
			if info, _ := os.Stat(own); info.Mode()&os.ModeCharDevice == 0 {
				t.Errorf("the test's character device became %v", info.Mode())
			}
		}
	}
	// A FIFO without a reader is an error at once, not a wait.
	fifo := filepath.Join(t.TempDir(), "pipe")
	if err := syscall.Mkfifo(fifo, 0o644); err == nil {
		r := scangate(t, dir, "", nil, "check", "--format", "json="+fifo, "testdata/demo")
		if r.code != 2 || !strings.Contains(r.stderr, "FIFO with no reader") {
			t.Errorf("a FIFO without a reader: exit %d, %q", r.code, r.stderr)
		}
	}
}

// When standard output cannot take the report (a full disk), the run fails with a
// message whatever its findings were: exit 2, never a silent exit 1.
func TestStdoutWriteErrors(t *testing.T) {
	full, err := os.OpenFile("/dev/full", os.O_WRONLY, 0)
	if err != nil {
		t.Skip("no /dev/full here")
	}
	defer full.Close()
	for _, args := range [][]string{
		{"check", "testdata/demo"},
		{"check", "--format", "github", "testdata/demo"},
		{"diff", "testdata/diff/before", "testdata/diff/after"},
		{"plan", "testdata/demo/meter-telemetry.yaml"},
		{"rules"},
		{"explain", "scan-time"},
		{"version"},
		{"schema"},
	} {
		cmd := exec.Command(binary, args...)
		cmd.Dir = root(t)
		cmd.Stdout = full
		var stderr strings.Builder
		cmd.Stderr = &stderr
		err := cmd.Run()
		code := 0
		var ee *exec.ExitError
		if errors.As(err, &ee) {
			code = ee.ExitCode()
		}
		if code != 2 || !strings.Contains(stderr.String(), "cannot write to standard output: no space left on device") {
			t.Errorf("%v: exit %d, stderr %q", args, code, stderr.String())
		}
	}
}

// Every input is bounded: a device that never ends, a FIFO nobody writes to and an
// oversized standard input are refused at once with a message, exit 2, for every
// command that reads a file.
func TestInputsAreBounded(t *testing.T) {
	dir := t.TempDir()
	fifo := filepath.Join(dir, "pipe")
	if err := syscall.Mkfifo(fifo, 0o644); err != nil {
		t.Skipf("no FIFOs here: %v", err)
	}
	big := strings.Repeat("segments,rows,bytes,cpu_ms\n", 400_000) // 10.8 MB, above the 8 MiB default
	for _, c := range []struct {
		stdin string
		args  []string
		want  string
	}{
		{"", []string{"calibrate", "/dev/zero"}, "cannot read /dev/zero: not a regular file"},
		{"", []string{"calibrate", fifo}, "not a regular file"},
		{big, []string{"calibrate", "-"}, "<stdin> is larger than the limit of 8,388,608 bytes"},
		{"", []string{"check", "--config", "/dev/zero", "testdata/demo"}, "cannot read the config /dev/zero: not a regular file"},
		{"", []string{"check", "--config", fifo, "testdata/demo"}, "not a regular file"},
		{"", []string{"plan", fifo}, "not a regular file"},
		{big, []string{"plan", "-"}, "above the limit of 8388608"},
	} {
		r := scangate(t, root(t), c.stdin, nil, c.args...)
		if r.code != 2 || !strings.Contains(r.stderr+r.stdout, c.want) {
			t.Errorf("%v: exit %d, output %q; want 2 and %q", c.args, r.code, r.stderr+r.stdout, c.want)
		}
	}
}

// Every format lists files and findings in one sorted order, whatever order the
// command line names them in.
func TestOneOrderWhateverTheCommandLine(t *testing.T) {
	a, b := "testdata/demo/billing.yaml", "testdata/demo/network-assets.yaml"
	for _, format := range []string{"text", "json", "sarif", "github", "markdown", "junit"} {
		ab := scangate(t, root(t), "", nil, "check", "--format", format, a, b)
		ba := scangate(t, root(t), "", nil, "check", "--format", format, b, a)
		if ab.stdout != ba.stdout || ab.code != ba.code {
			t.Errorf("%s: the report depends on the order of the paths", format)
		}
	}
}
