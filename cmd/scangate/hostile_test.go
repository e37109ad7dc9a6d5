package main

import (
	"bytes"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
)

// Inputs that are not manifests at all: each is refused with a positioned message and
// exit 2, and none hangs or panics.
func TestHostileFiles(t *testing.T) {
	dir := repo(t, nil)
	good := "format: 1\nmodel: m\nengine: {segment_rows: 1000}\ntables: [{name: t, rows: 10, partitions: {scheme: none}}]\n"
	utf16 := []byte{0xFF, 0xFE}
	for _, r := range good {
		utf16 = append(utf16, byte(r), 0)
	}
	big := bytes.Repeat([]byte("# padding line to make the file large\n"), 10<<20/38+1)
	files := map[string][]byte{
		"binary.yaml":     {0x7f, 'E', 'L', 'F', 0, 0, 1, 2, 0xff, 0xfe, 0},
		"utf16.yaml":      utf16,
		"latin1.yaml":     []byte("format: 1\nmodel: caf\xe9\n"),
		"huge.yaml":       append([]byte(good), big...),
		"broken.json":     []byte("{\"format\": 1,\n \"model\": \"m\",\n \"engine\": {\"segment_rows\" 1000}\n}\n"),
		"bom.yaml":        append([]byte{0xEF, 0xBB, 0xBF}, good...),
		"empty.yaml":      nil,
		"good-json.json":  []byte(`{"format": 1, "model": "m", "engine": {"segment_rows": 1000}, "tables": [{"name": "t", "rows": 10, "partitions": {"scheme": "none"}}]}`),
		"windows-eol.yml": []byte(strings.ReplaceAll(good, "\n", "\r\n")),
	}
	for name, body := range files {
		os.WriteFile(filepath.Join(dir, name), body, 0o644)
	}
	for _, c := range []struct {
		file, want string
		code       int
	}{
		{"binary.yaml", "binary.yaml:1:5: error: file is not UTF-8 text", 2}, // the first NUL
		{"utf16.yaml", "utf16.yaml:1:1: error: file is UTF-16; save it as UTF-8", 2},
		{"latin1.yaml", "latin1.yaml:2:11: error: file is not UTF-8 text", 2}, // the é of "café" in Latin-1
		{"huge.yaml", "huge.yaml:1:1: error: file is 8388609 bytes, above the limit of 8388608", 2},
		{"broken.json", "broken.json:3:", 2},
		{"empty.yaml", "empty.yaml:1:1: error: file is empty", 2},
		{"bom.yaml", "1 file, 1 table: no findings", 0},
		{"good-json.json", "1 file, 1 table: no findings", 0},
		{"windows-eol.yml", "1 file, 1 table: no findings", 0},
	} {
		r := scangate(t, dir, "", nil, "check", c.file)
		if r.code != c.code || !strings.Contains(r.stdout, c.want) {
			t.Errorf("%s: exit %d (want %d), output:\n%s%s\nwant %q", c.file, r.code, c.code, r.stdout, r.stderr, c.want)
		}
	}
}

// Special files: a FIFO named on the command line is refused without reading it (a
// read would block forever), one found in a walk is skipped, symlink loops end, and an
// unreadable manifest is reported while the others are checked.
func TestSpecialFiles(t *testing.T) {
	dir := repo(t, map[string]string{
		"models/good.yaml": "format: 1\nmodel: m\nengine: {segment_rows: 1000}\ntables: [{name: t, rows: 10, partitions: {scheme: none}}]\n",
	})
	fifo := filepath.Join(dir, "models", "pipe.yaml")
	if err := syscall.Mkfifo(fifo, 0o644); err != nil {
		t.Skipf("no FIFOs here: %v", err)
	}
	os.Symlink("loop-b.yaml", filepath.Join(dir, "models", "loop-a.yaml"))
	os.Symlink("loop-a.yaml", filepath.Join(dir, "models", "loop-b.yaml"))
	os.Symlink("..", filepath.Join(dir, "models", "up"))
	r := scangate(t, dir, "", nil, "check", "models")
	wantCode(t, r, 0)
	if !strings.Contains(r.stdout, "1 file, 1 table") {
		t.Errorf("the walk should check good.yaml only:\n%s%s", r.stdout, r.stderr)
	}
	r = scangate(t, dir, "", nil, "check", "models/pipe.yaml")
	wantCode(t, r, 2)
	if !strings.Contains(r.stderr, "is not a regular file") {
		t.Errorf("a FIFO: %s", r.stderr)
	}
	if os.Geteuid() == 0 {
		t.Log("running as root: permissions are not enforced, unreadable-file case skipped")
		return
	}
	locked := filepath.Join(dir, "models", "locked.yaml")
	os.WriteFile(locked, []byte("format: 1\n"), 0o000)
	r = scangate(t, dir, "", nil, "check", "models")
	wantCode(t, r, 2)
	if !strings.Contains(r.stdout, "models/locked.yaml: error: cannot read the file: permission denied [schema]") {
		t.Errorf("unreadable file:\n%s", r.stdout)
	}
}

// --max-file-size raises (or lowers) the file size bound for a repository that needs it.
func TestMaxFileSize(t *testing.T) {
	dir := repo(t, map[string]string{"m.yaml": "format: 1\nmodel: m\nengine: {segment_rows: 1000}\ntables: [{name: t, rows: 10, partitions: {scheme: none}}]\n# " + strings.Repeat("x", 200) + "\n"})
	r := scangate(t, dir, "", nil, "check", "--max-file-size", "100B", "m.yaml")
	if r.code != 2 || !strings.Contains(r.stdout, "above the limit of 100") {
		t.Errorf("a 100-byte bound should refuse the file: %d\n%s", r.code, r.stdout)
	}
	wantCode(t, scangate(t, dir, "", nil, "check", "--max-file-size", "1KiB", "m.yaml"), 0)
	wantCode(t, scangate(t, dir, "", nil, "check", "--max-file-size", "lots", "m.yaml"), 2)
}

// The run's partition budget is spent in input order: the files that would pass it are
// reported, not analysed, and the run exits 2; the same files on every machine.
func TestRunPartitionBudget(t *testing.T) {
	m := func(days int) string {
		return fmt.Sprintf("format: 1\nmodel: m\nengine: {segment_rows: 1000}\ntables: [{name: t, rows: %d, partitions: {scheme: time, tiers: [{grain: day, keep: %d}]}}]\n", days*1000, days)
	}
	dir := repo(t, map[string]string{"a.yaml": m(600), "b.yaml": m(600), "c.yaml": m(300)})
	// 600 + 600 would pass 1,000; 600 + 300 fits: a and c are analysed, b is not.
	r := scangate(t, dir, "", nil, "check", "--max-run-partitions", "1000", ".")
	wantCode(t, r, 2)
	if !strings.Contains(r.stdout, "b.yaml: error: not checked: its 600 partitions would take the run past 1,000 partitions") ||
		!strings.Contains(r.stdout, "3 files, 2 tables") {
		t.Errorf("want b.yaml refused and a, c checked:\n%s", r.stdout)
	}
	wantCode(t, scangate(t, dir, "", nil, "check", "--max-run-partitions", "2000", "."), 0)
}
