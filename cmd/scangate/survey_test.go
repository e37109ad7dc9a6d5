package main

import (
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// survey as a user runs it: the entry on stdout (region's values r0..r11 are clustered
// in runs of 100, not sorted as text; (1000x2 + 200x3)/1200 = 2.17 bytes; six months are
// too short a span for a growth fit), JSON for check --observed, drift found,
// bad data refused with exit 2, and in CI one plain progress line per file.
func TestSurveyCommand(t *testing.T) {
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("order_id,region,placed_on\n")
	for i := 0; i < 1200; i++ {
		b.WriteString(strconv.Itoa(i) + ",r" + strconv.Itoa(i/100) + ",2026-0" + strconv.Itoa(1+i/200) + "-15\n")
	}
	data := filepath.Join(dir, "orders.csv")
	if err := os.WriteFile(data, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	r := scangate(t, dir, "", []string{"CI=true"}, "survey", "--partition-by", "placed_on", "--grain", "month", "orders.csv")
	if r.code != 0 || !strings.Contains(r.stdout, "  - name: orders\n    rows: 1200\n") || !strings.Contains(r.stdout, "{grain: month, keep: 6}") ||
		!strings.Contains(r.stdout, "{name: region, type: string, distinct: 12, avg_length: 2.17, order: clustered, run_length: 100}") ||
		strings.Contains(r.stdout, "growth_per_year") || r.stderr != "survey: read orders.csv (1 of 1 files)\n" {
		t.Fatalf("survey: exit %d\n%s\n%s", r.code, r.stdout, r.stderr)
	}
	r = scangate(t, dir, "", nil, "survey", "--format", "json", "orders.csv")
	if r.code != 0 || r.stderr != "" {
		t.Fatalf("survey --format json: exit %d %s", r.code, r.stderr)
	}
	if err := os.WriteFile(filepath.Join(dir, "observed.json"), []byte(r.stdout), 0o644); err != nil {
		t.Fatal(err)
	}
	manifest := "format: 1\nmodel: shop\nengine: {segment_rows: 1M}\ntables:\n  - name: orders\n    rows: 1000\n    partitions: {scheme: none}\n"
	if err := os.WriteFile(filepath.Join(dir, "shop.yaml"), []byte(manifest), 0o644); err != nil {
		t.Fatal(err)
	}
	r = scangate(t, dir, "", nil, "check", "--observed", "observed.json", "--fail-on", "warning", "shop.yaml")
	if r.code != 1 || !strings.Contains(r.stdout, "shop.yaml:6:11: warning: orders: declares 1k rows but the data holds 1.2k (+20.0%), more than 5% apart [observed-drift]") {
		t.Errorf("check --observed: exit %d\n%s%s", r.code, r.stdout, r.stderr)
	}
	if err := os.WriteFile(filepath.Join(dir, "bad.csv"), []byte("a,b\n1\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	r = scangate(t, dir, "", nil, "survey", "bad.csv")
	if r.code != 2 || !strings.Contains(r.stderr, "bad.csv:2:1:") || r.stdout != "" {
		t.Errorf("bad data: exit %d %q %q", r.code, r.stdout, r.stderr)
	}
	r = scangate(t, dir, "", nil, "survey", "--sql", "shop.orders", "--columns", "order_id:int64,region:string", "--partition-by", "placed_on", "--grain", "month")
	if r.code != 0 || !strings.Contains(r.stdout, `FROM "shop"."orders"`) || !strings.Contains(r.stdout, `GROUP BY CAST("placed_on" AS DATE)`) {
		t.Errorf("survey --sql: exit %d\n%s%s", r.code, r.stdout, r.stderr)
	}
	if got, _ := os.ReadFile(filepath.Join(dir, "shop.yaml")); string(got) != manifest {
		t.Error("a command without --into changed the manifest")
	}
}
