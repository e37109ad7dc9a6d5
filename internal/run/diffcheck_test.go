package run

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/scangate/scangate/internal/change"
	"github.com/scangate/scangate/schema"
)

// sidesOf keys two sides of inputs (name -> key) as PathSides does.
func sidesOf(base, head map[string][]byte) [2]Side {
	var s [2]Side
	for i, files := range []map[string][]byte{base, head} {
		s[i].label = fmt.Sprint(i)
		for _, in := range benchInputs(files) {
			s[i].add(in, strings.TrimPrefix(strings.TrimPrefix(in.name, "old/"), "new/"), "")
		}
	}
	return s
}

const oneTable = "format: 1\nmodel: %s\nengine: {segment_rows: 1000}\ntables:\n  - {name: orders, rows: 10k, partitions: {scheme: even, count: %d}}\n"

// Every kind of job at once (same bytes, other bytes, head only, base only), several
// times over so the workers interleave: the sides come back whole, a file of the same
// bytes quotes the head's analysis under the base's name, and nothing deadlocks.
func TestCheckSidesReusesIdenticalFiles(t *testing.T) {
	base, head := map[string][]byte{}, map[string][]byte{}
	for i := range 40 {
		same := []byte(fmt.Sprintf(oneTable, fmt.Sprint("same", i), 4))
		base[fmt.Sprintf("old/same%02d.yaml", i)], head[fmt.Sprintf("new/same%02d.yaml", i)] = same, same
		base[fmt.Sprintf("old/moved%02d.yaml", i)] = []byte(fmt.Sprintf(oneTable, fmt.Sprint("moved", i), 4))
		head[fmt.Sprintf("new/moved%02d.yaml", i)] = []byte(fmt.Sprintf(oneTable, fmt.Sprint("moved", i), 20))
		head[fmt.Sprintf("new/fresh%02d.yaml", i)] = []byte(fmt.Sprintf(oneTable, fmt.Sprint("fresh", i), 1))
		base[fmt.Sprintf("old/gone%02d.yaml", i)] = []byte(fmt.Sprintf(oneTable, fmt.Sprint("gone", i), 1))
	}
	cfg, _ := PlainConfig("2026-01-01")
	got := CheckSides(sidesOf(base, head), cfg, Project{}, schema.DefaultLimits)
	if len(got[0].Files) != 120 || len(got[1].Files) != 120 {
		t.Fatalf("files %d and %d, want 120 a side", len(got[0].Files), len(got[1].Files))
	}
	heads := map[string]change.File{}
	for _, f := range got[1].Files {
		heads[f.Key] = f
	}
	for _, b := range got[0].Files {
		h, ok := heads[b.Key]
		shared := ok && len(b.Tables) == 1 && len(h.Tables) == 1 && &b.Tables[0] == &h.Tables[0]
		if want := strings.HasPrefix(b.Key, "same"); shared != want {
			t.Errorf("%s: analysis shared with the head %v, want %v", b.Name, shared, want)
		}
		if !strings.HasPrefix(b.Name, "old/") || b.Invalid {
			t.Errorf("base file %+v", b)
		}
	}
	// 4 even partitions of 2,500 rows: 12 segments where 10 would do, a note of
	// truncated-segments, once per side for every same and moved file: the base's point
	// at the base's files.
	for s, side := range got {
		n := 0
		for _, f := range side.Findings {
			if f.Rule == "truncated-segments" && strings.Contains(f.File, "same") {
				n++
				if prefix := []string{"old/", "new/"}[s]; !strings.HasPrefix(f.File, prefix) {
					t.Errorf("side %d: finding of %s", s, f.File)
				}
			}
		}
		if n != 40 {
			t.Errorf("side %d: %d truncated-segments findings on the same files, want 40", s, n)
		}
	}
	d := change.Compare(got[0], got[1])
	if len(d.Unchanged) != 40 {
		t.Errorf("%d unchanged findings, want the 40 of the same files", len(d.Unchanged))
	}
}

// Each side keeps its own partition budget when a pair of the same bytes is analysed
// once: over the budget, both are refused.
func TestCheckSidesBudget(t *testing.T) {
	same := []byte(fmt.Sprintf(oneTable, "m", 40))
	lim := schema.DefaultLimits
	lim.MaxRunPartitions = 39
	cfg, _ := PlainConfig("2026-01-01")
	got := CheckSides(sidesOf(map[string][]byte{"old/m.yaml": same}, map[string][]byte{"new/m.yaml": same}), cfg, Project{}, lim)
	for s, side := range got {
		if len(side.Files) != 1 || !side.Files[0].Invalid || len(side.Findings) != 1 || !strings.Contains(side.Findings[0].Message, "not checked: its 40 partitions") {
			t.Errorf("side %d: files %+v findings %+v", s, side.Files, side.Findings)
		}
	}
}

// A base file of two directories keeps its own path for people; its key is the new
// directory's.
func TestPathSidesOwnPath(t *testing.T) {
	dir := t.TempDir()
	for _, p := range []string{"old/a.yaml", "new/b.yaml"} {
		os.MkdirAll(filepath.Join(dir, filepath.Dir(p)), 0o755)
		if err := os.WriteFile(filepath.Join(dir, p), []byte(fmt.Sprintf(oneTable, "m", 1)), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	t.Chdir(dir)
	sides, err := PathSides("old", "new", nil, 1<<20, nil)
	if err != nil {
		t.Fatal(err)
	}
	cfg, _ := PlainConfig("2026-01-01")
	got := CheckSides(sides, cfg, Project{}, schema.DefaultLimits)
	b := got[0].Files[0]
	if !strings.HasSuffix(b.Key, "new/a.yaml") || !strings.HasSuffix(b.RepoPath(), "old/a.yaml") {
		t.Errorf("base file key %q, own path %q", b.Key, b.RepoPath())
	}
	d := change.Compare(got[0], got[1])
	if len(d.Files) != 1 || d.Files[0].Status != change.FileRenamed || !strings.HasSuffix(d.Files[0].Base.RepoPath(), "old/a.yaml") {
		t.Errorf("files %+v", d.Files)
	}
}
