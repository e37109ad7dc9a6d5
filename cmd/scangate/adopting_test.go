package main

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"

	udiff "github.com/aymanbagabas/go-udiff"
)

// printedDiff is the unified diff in adopt --dry-run's output: from the first "--- "
// line to the closing "dry run:" line.
func printedDiff(t *testing.T, out string) string {
	t.Helper()
	i := strings.Index(out, "--- ")
	j := strings.LastIndex(out, "dry run: ")
	if i < 0 || j < i {
		t.Fatalf("no diff in:\n%s", out)
	}
	return out[i:j]
}

// applyPatch applies a unified diff of one file to before, as patch(1) does without
// fuzz: every context and removed line must be where its hunk says.
func applyPatch(diff, before string) (string, error) {
	old := strings.SplitAfter(before, "\n")
	var out []string
	at := 0 // lines of old copied or consumed
	for _, l := range strings.SplitAfter(diff, "\n") {
		switch {
		case l == "" || strings.HasPrefix(l, "--- ") || strings.HasPrefix(l, "+++ "):
		case strings.HasPrefix(l, "@@ -"):
			var from int
			if _, err := fmt.Sscanf(l, "@@ -%d", &from); err != nil {
				return "", err
			}
			for ; at < from-1; at++ {
				out = append(out, old[at])
			}
		case l[0] == '+':
			out = append(out, l[1:])
		case l[0] == ' ' || l[0] == '-':
			if at >= len(old) || old[at] != l[1:] {
				return "", fmt.Errorf("line %d is not %q", at+1, l[1:])
			}
			if l[0] == ' ' {
				out = append(out, old[at])
			}
			at++
		default:
			return "", fmt.Errorf("not a diff line: %q", l)
		}
	}
	return strings.Join(append(out, old[at:]...), ""), nil
}

func read(t *testing.T, p string) string {
	t.Helper()
	b, err := os.ReadFile(p)
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

// TestAdoptDemo previews, then adopts, the demo's recommendations in a copy: the dry run
// writes nothing and its diff, applied to the file, gives exactly what adopt then
// writes; a second adopt has nothing left to do, and check no longer warns.
func TestAdoptDemo(t *testing.T) {
	demo := read(t, filepath.Join(root(t), "testdata/demo/meter-telemetry.yaml"))
	dir := repo(t, map[string]string{"meter-telemetry.yaml": demo})
	r := scangate(t, dir, "", nil, "adopt", "--dry-run", "meter-telemetry.yaml")
	wantCode(t, r, 0)
	for _, want := range []string{
		"meter_reads: keep day partitions for 14 days",
		"rewrites partitions.tiers (line 25), engine.segment_rows (line 7)",
		"meters: nothing to adopt",
		"--- a/meter-telemetry.yaml\n+++ b/meter-telemetry.yaml\n",
		"-  segment_rows: 8Mi\n+  segment_rows: 16Mi\n",
		"dry run: 1 file would change; nothing was written",
	} {
		if !strings.Contains(r.stdout, want) {
			t.Errorf("dry run output lacks %q:\n%s", want, r.stdout)
		}
	}
	if read(t, filepath.Join(dir, "meter-telemetry.yaml")) != demo {
		t.Fatal("the dry run wrote the manifest")
	}
	want, err := applyPatch(printedDiff(t, r.stdout), demo)
	if err != nil {
		t.Fatal(err)
	}
	r = scangate(t, dir, "", nil, "adopt", "meter-telemetry.yaml")
	wantCode(t, r, 0)
	if !strings.Contains(r.stdout, "wrote meter-telemetry.yaml\n") {
		t.Errorf("no word of the file written:\n%s", r.stdout)
	}
	if got := read(t, filepath.Join(dir, "meter-telemetry.yaml")); got != want {
		t.Fatalf("adopt wrote what its dry run did not show:\n%s", udiff.Unified("shown", "written", want, got))
	}
	r = scangate(t, dir, "", nil, "adopt", "meter-telemetry.yaml")
	wantCode(t, r, 0)
	if !strings.Contains(r.stdout, "nothing to adopt; no file changed") {
		t.Errorf("a second adopt did something:\n%s", r.stdout)
	}
	r = scangate(t, dir, "", nil, "check", "--today", "2026-01-01", "--format", "json", "meter-telemetry.yaml")
	wantCode(t, r, 0)
	if d := parseJSON(t, r); d.Summary.Errors+d.Summary.Warnings > 0 {
		t.Errorf("check after adopt: %d errors, %d warnings\n%s", d.Summary.Errors, d.Summary.Warnings, r.stdout)
	}
}

// A manifest whose segment size comes from an engine profile gets a segment_rows of its
// own; the project config, shared by other manifests, is left alone.
func TestAdoptOverridesProfile(t *testing.T) {
	manifest := "format: 1\nmodel: m\nengine:\n  profile: shared-east # the team's engine\nbudgets: {scan_overhead_ms: 100}\ntables:\n  - name: t\n    rows: 10M\n    partitions: {scheme: none}\n"
	dir := repo(t, map[string]string{".scangate.yaml": profileConfig, "m.yaml": manifest})
	r := scangate(t, dir, "", nil, "adopt", "m.yaml")
	wantCode(t, r, 0)
	if !strings.Contains(r.stdout, `overriding engine profile "shared-east" (1k) for this model only`) {
		t.Errorf("the override is not said:\n%s", r.stdout)
	}
	want := strings.Replace(manifest, "  profile: shared-east # the team's engine\n", "  profile: shared-east # the team's engine\n  segment_rows: 1Mi\n", 1)
	if got := read(t, filepath.Join(dir, "m.yaml")); got != want {
		t.Errorf("got\n%s\nwant\n%s", got, want)
	}
	if read(t, filepath.Join(dir, ".scangate.yaml")) != profileConfig {
		t.Error("adopt changed the project config")
	}
	r = scangate(t, dir, "", nil, "check", "m.yaml")
	wantCode(t, r, 0)
}

// JSON manifests stay JSON; CR LF line breaks stay on every line.
func TestAdoptKeepsJSONAndLineBreaks(t *testing.T) {
	js := "{\n  \"format\": 1,\n  \"model\": \"m\",\n  \"engine\": {\"segment_rows\": \"8Mi\"},\n  \"tables\": [\n    {\"name\": \"t\", \"rows\": \"4.8G\",\n     \"partitions\": {\"scheme\": \"time\", \"tiers\": [{\"grain\": \"day\", \"keep\": 730}]}}\n  ]\n}\n"
	crlf := strings.ReplaceAll("format: 1\nmodel: m\nengine: {segment_rows: 8Mi}\ntables:\n  - name: t # comment\n    rows: 48M\n    partitions: {scheme: even, count: 40}\n", "\n", "\r\n")
	dir := repo(t, map[string]string{"m.json": js, "crlf.yaml": crlf})
	r := scangate(t, dir, "", nil, "adopt", "m.json", "crlf.yaml")
	wantCode(t, r, 0)
	var v any
	if err := json.Unmarshal([]byte(read(t, filepath.Join(dir, "m.json"))), &v); err != nil {
		t.Fatalf("the JSON manifest is no longer JSON: %v\n%s", err, read(t, filepath.Join(dir, "m.json")))
	}
	got := read(t, filepath.Join(dir, "crlf.yaml"))
	if got == crlf || strings.Count(got, "\n") != strings.Count(got, "\r\n") || !strings.Contains(got, "  - name: t # comment\r\n") {
		t.Errorf("CR LF file:\n%q", got)
	}
	wantCode(t, scangate(t, dir, "", nil, "check", "m.json", "crlf.yaml"), 0)
}

// What adopt refuses: exit 2, a message that says why and where, nothing written.
func TestAdoptRefuses(t *testing.T) {
	bad := "format: 1\nmodel: m\nengine: {segment_rows: 8Mi}\ntables:\n  - name: t\n    rows: -5\n    partitions: {scheme: none}\n"
	aliased := "format: 1\nmodel: m\nengine: {segment_rows: 1Mi}\nbudgets: {scan_overhead_ms: 10}\ntables:\n  - {name: a, rows: 1M, partitions: &p {scheme: even, count: 40}}\n  - {name: b, rows: 2M, partitions: *p}\n"
	good := read(t, filepath.Join(root(t), "testdata/demo/network-assets.yaml"))
	files := map[string]string{"bad.yaml": bad, "aliased.yaml": aliased, "good.yaml": good, "target.yaml": good, "shared.yaml": good}
	cases := []struct {
		name string
		args []string
		want string
	}{
		{"schema error", []string{"good.yaml", "bad.yaml"}, "bad.yaml:6:11: error:"},
		{"alias", []string{"aliased.yaml"}, `aliased.yaml:6:37: "tables" > table "a" > "partitions" is the anchor &p, also used at line 7`},
		{"standard input", []string{"-"}, "name a file, not -"},
		{"unknown table", []string{"good.yaml", "--table", "pipez"}, `--table "pipez": good.yaml has no such table; it has pipes, hydrant_inspections, pressure_zones`},
		{"symbolic link", []string{"link.yaml"}, "link.yaml is a symbolic link to target.yaml; adopt rewrites regular files only"},
		{"fifo", []string{"fifo.yaml"}, "fifo.yaml is not a regular file or a directory"},
		{"hard link", []string{"hard.yaml"}, "hard.yaml has 2 hard links"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			dir := repo(t, files)
			if err := os.Symlink("target.yaml", filepath.Join(dir, "link.yaml")); err != nil {
				t.Fatal(err)
			}
			if err := syscall.Mkfifo(filepath.Join(dir, "fifo.yaml"), 0o644); err != nil {
				t.Fatal(err)
			}
			if err := os.Link(filepath.Join(dir, "shared.yaml"), filepath.Join(dir, "hard.yaml")); err != nil {
				t.Fatal(err)
			}
			r := scangate(t, dir, good, nil, append([]string{"adopt"}, c.args...)...)
			wantCode(t, r, 2)
			if !strings.Contains(r.stderr, c.want) {
				t.Errorf("stderr lacks %q:\n%s", c.want, r.stderr)
			}
			for name, body := range files {
				if read(t, filepath.Join(dir, name)) != body {
					t.Errorf("%s was written", name)
				}
			}
		})
	}
}

// The README's adopt excerpt is what the command it shows prints.
func TestReadmeAdoptExcerpt(t *testing.T) {
	const cmd = "$ scangate adopt --dry-run testdata/demo/network-assets.yaml\n"
	readme := read(t, filepath.Join(root(t), "README.md"))
	i := strings.Index(readme, cmd)
	if i < 0 {
		t.Fatalf("README.md lacks %q", cmd)
	}
	shown := readme[i+len(cmd):]
	shown = shown[:strings.Index(shown, "```")]
	r := scangate(t, root(t), "", nil, "adopt", "--dry-run", "testdata/demo/network-assets.yaml")
	wantCode(t, r, 0)
	if r.stdout != shown {
		t.Errorf("README.md's adopt excerpt differs from the output; paste this in its place:\n%s", r.stdout)
	}
}
