package main

import (
	"bytes"
	"context"
	"encoding/json"
	"encoding/xml"
	"io"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/scangate/scangate/internal/report"
)

// hugeFigures holds every figure at a documented limit at once: 10^15 rows in segments of
// one row at 100,000 ms each, 10^20 ms of fixed CPU, beyond int64. It once crashed check
// and plan with a stack overflow after 5-14 s and 1 GB, then printed a wrapped
// -9,223,372,036,854,775,808 ms.
const hugeFigures = "testdata/hostile/huge-figures.yaml"

// hugeLimit is generous: a run on this file takes milliseconds.
const hugeLimit = 20 * time.Second

// wrapped matches what an out-of-range conversion or a 19-digit group prints; beyond
// 10^15 every figure is written as 1e20.
var wrapped = regexp.MustCompile(`9,223,372,036,854,775,80|\d{1,3}(,\d{3}){6,}`)

// within runs scangate, killed at hugeLimit, and fails on a timeout, a crash, or a
// wrapped or overlong figure in what it printed.
func within(t *testing.T, dir string, args ...string) result {
	t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), hugeLimit)
	defer cancel()
	start := time.Now()
	r := scangateCtx(t, ctx, dir, "", nil, args...)
	if ctx.Err() != nil {
		t.Fatalf("scangate %s: still running after %v", strings.Join(args, " "), hugeLimit)
	}
	t.Logf("scangate %s: %v", strings.Join(args, " "), time.Since(start).Round(time.Millisecond))
	if strings.Contains(r.stderr, "goroutine ") || strings.Contains(r.stderr, "panic") {
		t.Fatalf("scangate %s crashed:\n%s", strings.Join(args, " "), r.stderr)
	}
	if m := wrapped.FindString(r.stdout + r.stderr); m != "" {
		t.Errorf("scangate %s printed %q:\n%s", strings.Join(args, " "), m, r.stdout)
	}
	return r
}

// check and plan finish at once, check fails with its findings (exit 1, not 2), plan
// prints its plan (exit 0, as the README says), and the figures are the real ones.
func TestHugeFigures(t *testing.T) {
	r := within(t, root(t), "check", "--today", "2026-01-01", hugeFigures)
	wantCode(t, r, 1)
	for _, want := range []string{"a full scan pays 1e20 ms of fixed CPU", "1e22% of the 1.0 ms budget",
		// Larger segments would cut the fixed ms but add to a refresh peak already far over
		// the engine's memory: no layout is nearer every budget at once.
		"no layout tried fits every budget, or comes nearer to them than today's without breaking another or making one worse (segment sizes up to 128Mi tried)"} {
		if !strings.Contains(r.stdout, want) {
			t.Errorf("check lacks %q:\n%s", want, r.stdout)
		}
	}
	r = within(t, root(t), "plan", "--today", "2026-01-01", hugeFigures)
	wantCode(t, r, 0)
	if !regexp.MustCompile(`(?m)^   fixed CPU per full scan +1e20 ms +budget 1\.0 ms +1e22%$`).MatchString(r.stdout) {
		t.Errorf("plan should show today's 1e20 ms against the budget:\n%s", r.stdout)
	}
}

// Every number of the JSON report is finite and the report matches its schema; the fixed
// cost is the real 10^20, not a saturated or zeroed stand-in.
func TestHugeFiguresJSON(t *testing.T) {
	r := within(t, root(t), "check", "--today", "2026-01-01", "--format", "json", hugeFigures)
	wantCode(t, r, 1)
	validateJSONReport(t, []byte(r.stdout))
	dec := json.NewDecoder(strings.NewReader(r.stdout))
	dec.UseNumber()
	var doc any
	if err := dec.Decode(&doc); err != nil {
		t.Fatal(err)
	}
	n := 0
	walkNumbers(doc, func(path string, v json.Number) {
		n++
		f, err := strconv.ParseFloat(string(v), 64)
		if err != nil || math.IsInf(f, 0) || math.IsNaN(f) {
			t.Errorf("%s = %s: not a finite number", path, v)
		}
		if strings.HasSuffix(path, "/fixed_ms") && f != 1e20 {
			t.Errorf("%s = %s, want 1e20 (10^15 segments x 100,000 ms)", path, v)
		}
	})
	if n == 0 {
		t.Fatal("the report holds no numbers")
	}
}

// walkNumbers calls fn with every number of a decoded JSON document and its path.
func walkNumbers(v any, fn func(string, json.Number)) {
	var walk func(string, any)
	walk = func(path string, v any) {
		switch x := v.(type) {
		case json.Number:
			fn(path, x)
		case map[string]any:
			for k, e := range x {
				walk(path+"/"+k, e)
			}
		case []any:
			for i, e := range x {
				walk(path+"/"+strconv.Itoa(i), e)
			}
		}
	}
	walk("", v)
}

// Every format renders each valid manifest of extreme figures under testdata/hostile
// (the others there break the schema on purpose): each check format (the
// registry's list, so a new format is covered), plan's text and SVG, and each diff format
// from an ordinary layout to the huge one.
func TestHostileFiguresEveryFormat(t *testing.T) {
	var files []string
	for _, name := range []string{"huge-figures.yaml", "tiny-budgets.yaml"} {
		files = append(files, filepath.Join(root(t), "testdata", "hostile", name))
	}
	for _, f := range files {
		rel, _ := filepath.Rel(root(t), f)
		rel = filepath.ToSlash(rel)
		for _, name := range report.Names(report.CheckReport) {
			t.Run(filepath.Base(rel)+"/check-"+name, func(t *testing.T) {
				r := within(t, root(t), "check", "--today", "2026-01-01", "--format", name, rel)
				wantCode(t, r, 1)
				if rel == hugeFigures && !strings.Contains(r.stdout, "1e20") {
					t.Errorf("the %s report lacks the 1e20 ms figure:\n%s", name, r.stdout)
				}
				switch name {
				case "json":
					validateJSONReport(t, []byte(r.stdout))
				case "sarif":
					if !json.Valid([]byte(r.stdout)) {
						t.Errorf("the SARIF report is not JSON")
					}
				case "junit":
					wellFormedXML(t, r.stdout)
				}
			})
		}
		t.Run(filepath.Base(rel)+"/plan-svg", func(t *testing.T) {
			out := filepath.Join(t.TempDir(), "plan.svg")
			r := within(t, root(t), "plan", "--today", "2026-01-01", "--svg", out, rel)
			wantCode(t, r, 0)
			data, err := os.ReadFile(out)
			if err != nil {
				t.Fatal(err)
			}
			wellFormedXML(t, string(data))
			if m := wrapped.Find(data); m != nil {
				t.Errorf("the SVG holds %q", m)
			}
			if rel == hugeFigures && !bytes.Contains(data, []byte("1e20")) {
				t.Errorf("the SVG lacks the 1e20 ms figure")
			}
		})
	}
	src, err := os.ReadFile(filepath.Join(root(t), hugeFigures))
	if err != nil {
		t.Fatal(err)
	}
	dir := repo(t, map[string]string{
		"before/m.yaml": strings.Replace(string(src), "segment_rows: 1,", "segment_rows: 16Mi,", 1),
		"after/m.yaml":  string(src),
	})
	for _, name := range report.Names(report.DiffReport) {
		t.Run("diff-"+name, func(t *testing.T) {
			r := within(t, dir, "diff", "--format", name, "--max-added-ms", "1", "before", "after")
			wantCode(t, r, 1)
			if !strings.Contains(r.stdout, "1e20") {
				t.Errorf("the %s diff lacks the added 1e20 ms:\n%s", name, r.stdout)
			}
		})
	}
}

func wellFormedXML(t *testing.T, s string) {
	t.Helper()
	d := xml.NewDecoder(strings.NewReader(s))
	for {
		_, err := d.Token()
		if err == io.EOF {
			return
		}
		if err != nil {
			t.Fatalf("not well-formed XML: %v", err)
		}
	}
}
