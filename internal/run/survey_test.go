package run_test

import (
	"bytes"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/scangate/scangate/internal/datafile"
	"github.com/scangate/scangate/internal/run"
	"github.com/scangate/scangate/schema"
)

const intoManifest = `# Water utility, hand-kept.
format: 1
model: water
engine:
  segment_rows: 1M   # the engine's default
tables:
  # Meters, one row each.
  - name: meters
    rows: 400k   # from last year's count
    partitions: {scheme: none}
  # Readings, by month.
  - name: reads
    rows: 7.2G
    partitions:
      scheme: time
      tiers: [{grain: day, keep: 14}, {grain: month, keep: 23}]
`

// writeMeters writes a small CSV data set of n meters in two key=value folders.
func writeMeters(t *testing.T, dir string, n int) string {
	t.Helper()
	root := filepath.Join(dir, "meters")
	for _, region := range []string{"north", "south"} {
		var b strings.Builder
		b.WriteString("meter_id,kind,installed\n")
		for i := 0; i < n/2; i++ {
			kind := "a"
			if i%3 == 0 {
				kind = "bb"
			}
			b.WriteString(strconv.Itoa(i) + "," + kind + ",2024-0" + strconv.Itoa(1+i%9) + "-01\n")
		}
		p := filepath.Join(root, "region="+region, "part.csv")
		if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(p, []byte(b.String()), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return root
}

func surveyOpts(data []string) (run.SurveyOptions, *bytes.Buffer, *bytes.Buffer) {
	var out, errs bytes.Buffer
	return run.SurveyOptions{Data: data, Format: "yaml", Dialect: "ansi", DataLimits: datafile.DefaultLimits,
		Manifest: schema.DefaultLimits, Stdout: &out, Stderr: &errs, Stdin: strings.NewReader("")}, &out, &errs
}

func TestSurveyIntoReplacesKeepingOtherBytes(t *testing.T) {
	dir := t.TempDir()
	data := writeMeters(t, dir, 1000)
	man := filepath.Join(dir, "water.yaml")
	if err := os.WriteFile(man, []byte(intoManifest), 0o644); err != nil {
		t.Fatal(err)
	}
	o, out, errs := surveyOpts([]string{data})
	o.Into = man
	if err := run.Survey(o); err != nil {
		t.Fatal(err)
	}
	if out.Len() != 0 || !strings.Contains(errs.String(), "wrote table meters (1000 rows) into") {
		t.Errorf("stdout %q stderr %q", out, errs)
	}
	got, _ := os.ReadFile(man)
	// The bytes before the meters entry and from the reads comment on are untouched.
	start := strings.Index(intoManifest, "  - name: meters")
	end := strings.Index(intoManifest, "  # Readings, by month.")
	if !bytes.HasPrefix(got, []byte(intoManifest[:start])) || !bytes.HasSuffix(got, []byte(intoManifest[end:])) {
		t.Fatalf("bytes outside the meters entry moved:\n%s", got)
	}
	m, err := schema.Load("water.yaml", got, schema.DefaultLimits)
	if err != nil {
		t.Fatal(err)
	}
	meters := m.Tables[0]
	if meters.Name != "meters" || meters.Rows != 1000 || len(meters.Partitions.Items) != 2 || meters.Partitions.Items[0].Rows != 500 || len(meters.Columns) != 3 {
		t.Errorf("meters as written: %+v", meters)
	}
	if len(m.Tables) != 2 || m.Tables[1].Name != "reads" {
		t.Errorf("tables %d", len(m.Tables))
	}

	// A new name is appended: the whole manifest is kept as it was, the table follows.
	before, _ := os.ReadFile(man)
	o.Name = "meters_copy"
	if err := run.Survey(o); err != nil {
		t.Fatal(err)
	}
	after, _ := os.ReadFile(man)
	if !bytes.HasPrefix(after, before) || !bytes.Contains(after[len(before):], []byte("name: meters_copy")) {
		t.Errorf("append changed the manifest's bytes:\n%s", after)
	}
}

func TestSurveyWritesNothingWithoutInto(t *testing.T) {
	dir := t.TempDir()
	data := writeMeters(t, dir, 10)
	o, out, _ := surveyOpts([]string{data})
	o.Grain = "month"
	o.PartitionBy = "installed"
	if err := run.Survey(o); err != nil {
		t.Fatal(err)
	}
	if !strings.HasPrefix(out.String(), "tables:\n  - name: meters\n    rows: 10\n    partitions:\n      scheme: time\n      tiers:\n        - {grain: month, keep: 5}") {
		t.Errorf("fragment:\n%s", out)
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 1 {
		t.Errorf("survey wrote into %s: %v", dir, entries)
	}
	o.Format, o.Grain, o.PartitionBy = "json", "", ""
	out.Reset()
	if err := run.Survey(o); err != nil {
		t.Fatal(err)
	}
	s, err := schema.LoadSurvey("survey.json", out.Bytes(), schema.DefaultLimits)
	if err != nil || s.Table("meters") == nil || s.Table("meters").Rows != 10 {
		t.Errorf("json output does not load: %v\n%s", err, out)
	}
}

func TestSurveyRefusals(t *testing.T) {
	dir := t.TempDir()
	data := writeMeters(t, dir, 10)
	broken := filepath.Join(dir, "broken.yaml")
	_ = os.WriteFile(broken, []byte("format: 1\nmodel: x\n"), 0o644)
	csvFile := filepath.Join(data, "region=north", "part.csv")
	for _, c := range []struct {
		name string
		edit func(*run.SurveyOptions)
		want string
	}{
		{"no mode", func(o *run.SurveyOptions) { o.Data = nil }, "exactly one of them"},
		{"two modes", func(o *run.SurveyOptions) { o.SQL = "t" }, "exactly one of them"},
		{"grain", func(o *run.SurveyOptions) { o.Grain = "fortnight" }, `--grain "fortnight"`},
		{"broken manifest", func(o *run.SurveyOptions) { o.Into = broken }, "must load as a manifest"},
		{"into an input", func(o *run.SurveyOptions) { o.Data = []string{csvFile}; o.Into = csvFile }, "one of the inputs"},
		{"sql without columns", func(o *run.SurveyOptions) { o.Data = nil; o.SQL = "t" }, "--sql needs --columns"},
		{"bad dialect", func(o *run.SurveyOptions) { o.Data = nil; o.SQL = "t"; o.Dialect = "x" }, "--dialect"},
	} {
		o, _, _ := surveyOpts([]string{data})
		c.edit(&o)
		err := run.Survey(o)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: %v, want %q", c.name, err, c.want)
		}
	}
	if b, _ := os.ReadFile(broken); string(b) != "format: 1\nmodel: x\n" {
		t.Errorf("the broken manifest was changed")
	}
}

func TestSurveyProgressLines(t *testing.T) {
	dir := t.TempDir()
	data := writeMeters(t, dir, 10)
	o, _, errs := surveyOpts([]string{data})
	o.Lines = true
	if err := run.Survey(o); err != nil {
		t.Fatal(err)
	}
	want := "survey: read " + filepath.ToSlash(filepath.Join(data, "region=north", "part.csv")) + " (1 of 2 files)\n" +
		"survey: read " + filepath.ToSlash(filepath.Join(data, "region=south", "part.csv")) + " (2 of 2 files)\n"
	if errs.String() != want {
		t.Errorf("progress lines %q, want %q", errs, want)
	}
}
