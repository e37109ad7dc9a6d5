package datafile_test

import (
	"encoding/csv"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/parquet-go/parquet-go"

	"github.com/scangate/scangate/internal/datafile"
	"github.com/scangate/scangate/internal/survey"
	"github.com/scangate/scangate/schema"
)

// reading is one generated row. The generator is seeded, so each data set is the same on
// every run; the test counts its truth (rows, rows per month, distinct values) itself
// while generating, independently of the code under test.
type reading struct {
	ID      int64     `parquet:"id"`
	Site    string    `parquet:"site"`
	Code    string    `parquet:"code"`
	Litres  float64   `parquet:"litres"`
	Flag    bool      `parquet:"flag"`
	ReadOn  int32     `parquet:"read_on,date"`
	ReadAt  int64     `parquet:"read_at,timestamp(millisecond)"`
	Comment *string   `parquet:"comment,optional"`
	_       time.Time `parquet:"-"`
}

// truth is what the generator knows about the data it wrote.
type truth struct {
	rows     int64
	perMonth map[string]int64 // YYYY-MM -> rows
	distinct map[string]map[string]bool
	months   []string
}

func (t *truth) see(r reading) {
	t.rows++
	day := time.Unix(int64(r.ReadOn)*86400, 0).UTC()
	t.perMonth[day.Format("2006-01")]++
	add := func(col, v string) {
		if t.distinct[col] == nil {
			t.distinct[col] = map[string]bool{}
		}
		t.distinct[col][v] = true
	}
	add("id", strconv.FormatInt(r.ID, 10))
	add("site", r.Site)
	add("code", r.Code)
	add("litres", strconv.FormatFloat(r.Litres, 'g', -1, 64))
	add("flag", strconv.FormatBool(r.Flag))
	add("read_on", day.Format("2006-01-02"))
	add("read_at", strconv.FormatInt(r.ReadAt, 10))
	if r.Comment != nil {
		add("comment", *r.Comment)
	}
}

// generate writes months of readings, growing 20% a year, rows sorted by time (so id,
// read_on and read_at are sorted), sites in runs of about 40 rows (clustered), code
// drawn from 300,000 values (sketched: above survey.ExactLimit), litres from 5,000.
// Each month is written by write (one file per month, or all to one sink).
func generate(seed uint64, months, firstMonthRows int, write func(month string, rows []reading)) *truth {
	rng := rand.New(rand.NewPCG(seed, 7))
	tr := &truth{perMonth: map[string]int64{}, distinct: map[string]map[string]bool{}}
	start := time.Date(2024, 1, 1, 0, 0, 0, 0, time.UTC)
	var id int64
	site := "site-0"
	for m := 0; m < months; m++ {
		ms := start.AddDate(0, m, 0)
		me := ms.AddDate(0, 1, 0)
		// Rows per day grow 20% a year, taken at the month's midpoint (the manifest's model).
		days := me.Sub(ms).Hours() / 24
		n := int(float64(firstMonthRows) / 30 * days * math.Pow(1.2, (float64(m)+0.5)/12))
		span := me.Sub(ms).Milliseconds()
		var rows []reading
		for i := 0; i < n; i++ {
			at := ms.UnixMilli() + span*int64(i)/int64(n)
			if rng.IntN(40) == 0 {
				site = "site-" + strconv.Itoa(rng.IntN(500))
			}
			r := reading{ID: id, Site: site, Code: fmt.Sprintf("c%06d", rng.IntN(300_000)),
				Litres: float64(rng.IntN(5000)) / 4, Flag: rng.IntN(3) == 0,
				ReadOn: int32(at / 86_400_000), ReadAt: at}
			if rng.IntN(4) == 0 {
				c := "note " + strconv.Itoa(rng.IntN(50))
				r.Comment = &c
			}
			id++
			rows = append(rows, r)
			tr.see(r)
		}
		tr.months = append(tr.months, ms.Format("2006-01"))
		write(ms.Format("2006-01"), rows)
	}
	return tr
}

// create makes path and its folders.
func create(t testing.TB, path string) *os.File {
	t.Helper()
	if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
		t.Fatal(err)
	}
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	return f
}

func writeParquet(t testing.TB, path string, rows []reading) {
	t.Helper()
	f := create(t, path)
	w := parquet.NewGenericWriter[reading](f, parquet.MaxRowsPerRowGroup(3000))
	if _, err := w.Write(rows); err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	if err := f.Close(); err != nil {
		t.Fatal(err)
	}
}

func writeCSV(t testing.TB, path string, rows []reading) {
	t.Helper()
	f := create(t, path)
	w := csv.NewWriter(f)
	_ = w.Write([]string{"id", "site", "code", "litres", "flag", "read_on", "read_at", "comment"})
	for _, r := range rows {
		c := ""
		if r.Comment != nil {
			c = *r.Comment
		}
		_ = w.Write([]string{strconv.FormatInt(r.ID, 10), r.Site, r.Code, strconv.FormatFloat(r.Litres, 'g', -1, 64),
			strconv.FormatBool(r.Flag), time.Unix(int64(r.ReadOn)*86400, 0).UTC().Format("2006-01-02"),
			time.UnixMilli(r.ReadAt).UTC().Format("2006-01-02T15:04:05.000Z"), c})
	}
	w.Flush()
	if err := w.Error(); err != nil {
		t.Fatal(err)
	}
	if err := f.Close(); err != nil {
		t.Fatal(err)
	}
}

func surveyed(t *testing.T, args []string, by, grain string) schema.SurveyTable {
	t.Helper()
	files, err := datafile.Find(args, datafile.DefaultLimits)
	if err != nil {
		t.Fatal(err)
	}
	tb := survey.NewTable()
	tb.Grain = grain
	key, err := datafile.Read(files, tb, datafile.Options{PartitionBy: by, Limits: datafile.DefaultLimits})
	if err != nil {
		t.Fatal(err)
	}
	res, err := tb.Result("meter_reads", key, grain)
	if err != nil {
		t.Fatal(err)
	}
	return res
}

// check holds a survey to the generator's truth: rows and rows per month exactly, every
// distinct count exact below survey.ExactLimit and within 3 standard errors of the
// sketch above it (exact for sorted columns), the types, the orders and a fragment that loads as a manifest.
func check(t *testing.T, tr *truth, got schema.SurveyTable, wantTypes map[string]string) {
	t.Helper()
	if got.Rows != tr.rows {
		t.Errorf("rows %d, want %d", got.Rows, tr.rows)
	}
	if got.Partitions.Scheme != "time" || got.Partitions.Grain != "month" || len(got.Partitions.Items) != len(tr.months) {
		t.Fatalf("partitions %+v, want time by month, %d periods", got.Partitions, len(tr.months))
	}
	for i, it := range got.Partitions.Items {
		if it.Name != tr.months[i] || it.Rows != tr.perMonth[tr.months[i]] {
			t.Errorf("period %d: %s %d rows, want %s %d", i, it.Name, it.Rows, tr.months[i], tr.perMonth[tr.months[i]])
		}
	}
	// The generator grows 20% a year; rounding the rows of each month moves the fit little.
	if got.GrowthPerYear == nil || math.Abs(*got.GrowthPerYear-0.2) > 0.01 {
		t.Errorf("growth_per_year %v, want about 0.2", deref(got.GrowthPerYear))
	}
	for _, c := range got.Columns {
		want := int64(len(tr.distinct[c.Name]))
		// A sorted column's distinct values are its runs, counted exactly at any size.
		if want <= survey.ExactLimit || sortedColumns[c.Name] {
			if !c.DistinctExact || c.Distinct != want {
				t.Errorf("%s: distinct %d (exact %v), want exactly %d", c.Name, c.Distinct, c.DistinctExact, want)
			}
		} else if rel := math.Abs(float64(c.Distinct)-float64(want)) / float64(want); c.DistinctExact || rel > 3*survey.SketchError {
			t.Errorf("%s: distinct %d (exact %v), want %d within %.2f%%: off by %.2f%%", c.Name, c.Distinct, c.DistinctExact, want, 300*survey.SketchError, 100*rel)
		}
		if wt := wantTypes[c.Name]; c.Type != wt {
			t.Errorf("%s: type %s, want %s", c.Name, c.Type, wt)
		}
	}
	orders := map[string]string{"id": "sorted", "read_on": "sorted", "read_at": "sorted", "site": "clustered", "code": "random", "litres": "random", "flag": "random"}
	for _, c := range got.Columns {
		if w, ok := orders[c.Name]; ok && c.Order != w {
			t.Errorf("%s: order %s, want %s", c.Name, c.Order, w)
		}
		if c.Name == "site" && (c.RunLength < 30 || c.RunLength > 50) {
			t.Errorf("site: run_length %d, want about 40 (runs change with chance 1/40)", c.RunLength)
		}
		if c.Name == "comment" && (c.Nulls < tr.rows*7/10 || c.Nulls > tr.rows*8/10) {
			t.Errorf("comment: %d nulls of %d rows, want about 3/4", c.Nulls, tr.rows)
		}
	}
	loads(t, got)
}

// loads puts the fragment under a manifest header and loads it through the schema.
func loads(t *testing.T, tb schema.SurveyTable) {
	t.Helper()
	doc := "format: 1\nmodel: m\nengine: {segment_rows: 1M}\n" + string(survey.Fragment([]schema.SurveyTable{tb}))
	if _, err := schema.Load("fragment.yaml", []byte(doc), schema.DefaultLimits); err != nil {
		t.Errorf("the fragment does not load as a manifest: %v\n%s", err, doc)
	}
}

var sortedColumns = map[string]bool{"id": true, "read_on": true, "read_at": true}

var parquetTypes = map[string]string{"id": "int64", "site": "string", "code": "string", "litres": "float64", "flag": "bool", "read_on": "date", "read_at": "datetime", "comment": "string"}

func TestParquetFolders(t *testing.T) {
	dir := t.TempDir()
	tr := generate(1, 14, 12_000, func(month string, rows []reading) {
		writeParquet(t, filepath.Join(dir, "meter_reads", "month="+month, "part-0.parquet"), rows[:len(rows)/2])
		writeParquet(t, filepath.Join(dir, "meter_reads", "month="+month, "part-1.parquet"), rows[len(rows)/2:])
	})
	if err := os.WriteFile(filepath.Join(dir, "meter_reads", "_SUCCESS"), nil, 0o644); err != nil {
		t.Fatal(err)
	}
	got := surveyed(t, []string{filepath.Join(dir, "meter_reads")}, "", "month")
	if got.Partitions.Key != "month" {
		t.Errorf("key %q, want the folder key month", got.Partitions.Key)
	}
	check(t, tr, got, parquetTypes)
}

func TestParquetPartitionByColumn(t *testing.T) {
	dir := t.TempDir()
	var all []reading
	tr := generate(2, 14, 12_000, func(_ string, rows []reading) { all = append(all, rows...) })
	writeParquet(t, filepath.Join(dir, "meter_reads.parquet"), all)
	check(t, tr, surveyed(t, []string{filepath.Join(dir, "meter_reads.parquet")}, "read_on", "month"), parquetTypes)
	// The timestamp column folds the same way.
	check(t, tr, surveyed(t, []string{filepath.Join(dir, "meter_reads.parquet")}, "read_at", "month"), parquetTypes)
}

func TestCSVFolders(t *testing.T) {
	dir := t.TempDir()
	tr := generate(3, 14, 12_000, func(month string, rows []reading) {
		writeCSV(t, filepath.Join(dir, "meter_reads", "year="+month[:4], "month="+month[5:], "data.csv"), rows)
	})
	types := map[string]string{}
	for k, v := range parquetTypes {
		types[k] = v
	}
	got := surveyed(t, []string{filepath.Join(dir, "meter_reads")}, "", "month")
	check(t, tr, got, types)
	if got.Partitions.Key != "year/month" {
		t.Errorf("key %q, want year/month", got.Partitions.Key)
	}
	// Listed by folder without a grain: one item per month, exact rows.
	list := surveyed(t, []string{filepath.Join(dir, "meter_reads")}, "", "")
	if list.Partitions.Scheme != "list" || len(list.Partitions.Items) != 14 || list.Partitions.Items[0].Name != "2024/01" ||
		list.Partitions.Items[0].Rows != tr.perMonth["2024-01"] {
		t.Errorf("listed partitions %+v", list.Partitions)
	}
	loads(t, list)
	// By the column, with a missing month: a list of periods, not a time scheme.
	if err := os.RemoveAll(filepath.Join(dir, "meter_reads", "year=2024", "month=05")); err != nil {
		t.Fatal(err)
	}
	gap := surveyed(t, []string{filepath.Join(dir, "meter_reads")}, "read_on", "quarter")
	if gap.Partitions.Scheme != "time" || len(gap.Partitions.Items) != 5 {
		t.Errorf("quarters %+v, want 5 consecutive quarters", gap.Partitions)
	}
	gap = surveyed(t, []string{filepath.Join(dir, "meter_reads")}, "read_on", "month")
	if gap.Partitions.Scheme != "list" || len(gap.Partitions.Items) != 13 {
		t.Errorf("months %+v, want 13 listed months", gap.Partitions)
	}
	loads(t, gap)
}

func TestBadInput(t *testing.T) {
	dir := t.TempDir()
	cases := map[string]string{
		"ragged.csv":   "a,b\n1,2\n3\n",
		"quote.csv":    "a,b\n1,\"x\"y\n",
		"empty.csv":    "",
		"nameless.csv": "a,,c\n1,2,3\n",
		"twice.csv":    "a,a\n1,2\n",
		"latin1.csv":   "a,caf\xe9\n1,2\n", // not UTF-8: the manifest could not hold the name
		"bad.parquet":  "PAR1 not really",
		"foot.parquet": "PAR1xxxxxxxxxxxx\xff\xff\xff\x7fPAR1",
	}
	want := map[string]string{
		"ragged.csv": "ragged.csv:3:1:", "quote.csv": "quote.csv:2:", "empty.csv": "empty.csv:1:1: the file is empty",
		"nameless.csv": "nameless.csv:1:2: column 2 has no name", "twice.csv": "twice.csv:1:2:",
		"latin1.csv":  "latin1.csv:1:2: column name \"caf\uFFFD\" is not UTF-8 text",
		"bad.parquet": "not a Parquet file", "foot.parquet": "footer claims",
	}
	for name, body := range cases {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
		files, err := datafile.Find([]string{p}, datafile.DefaultLimits)
		if err == nil {
			_, err = datafile.Read(files, survey.NewTable(), datafile.Options{Limits: datafile.DefaultLimits})
		}
		if err == nil || !strings.Contains(err.Error(), want[name]) {
			t.Errorf("%s: error %v, want one containing %q", name, err, want[name])
		}
	}
	long := filepath.Join(dir, "long.csv")
	if err := os.WriteFile(long, []byte("a\n"+string(make([]byte, 3000))+"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	lim := datafile.DefaultLimits
	lim.MaxRecordBytes = 1000
	files, _ := datafile.Find([]string{long}, lim)
	if _, err := datafile.Read(files, survey.NewTable(), datafile.Options{Limits: lim}); err == nil || !strings.Contains(err.Error(), "long.csv:2:1: a line is longer than 1000 bytes") {
		t.Errorf("long line: %v", err)
	}
	lim.MaxFileBytes = 10
	if _, err := datafile.Find([]string{long}, lim); err == nil || !strings.Contains(err.Error(), "--max-data-size") {
		t.Errorf("large file: %v", err)
	}
}

func deref(p *float64) any {
	if p == nil {
		return nil
	}
	return *p
}

// BenchmarkSurveyParquet measures reading one generated month (about 12,000 rows, eight
// columns) of Parquet into a survey: b.N files' worth, rows per second in the report.
func BenchmarkSurveyParquet(b *testing.B) {
	benchmarkSurvey(b, func(t testing.TB, p string, rows []reading) { writeParquet(t, p+".parquet", rows) }, ".parquet")
}

// BenchmarkSurveyCSV is BenchmarkSurveyParquet for the same rows as CSV.
func BenchmarkSurveyCSV(b *testing.B) {
	benchmarkSurvey(b, func(t testing.TB, p string, rows []reading) { writeCSV(t, p+".csv", rows) }, ".csv")
}

func benchmarkSurvey(b *testing.B, write func(testing.TB, string, []reading), ext string) {
	dir := b.TempDir()
	var n int
	generate(1, 1, 12_000, func(_ string, rows []reading) {
		n = len(rows)
		write(b, filepath.Join(dir, "m"), rows)
	})
	files, err := datafile.Find([]string{filepath.Join(dir, "m"+ext)}, datafile.DefaultLimits)
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	for b.Loop() {
		if _, err := datafile.Read(files, survey.NewTable(), datafile.Options{Limits: datafile.DefaultLimits}); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(n)*float64(b.N)/b.Elapsed().Seconds(), "rows/s")
}

// odd holds the Parquet shapes a data set from elsewhere may have: a nested group and a
// repeated column (skipped: not one value a row), a decimal, unsigned and 32-bit
// numbers, raw bytes, a nanosecond timestamp, compressed pages.
type odd struct {
	N     int32     `parquet:"n"`
	U     uint32    `parquet:"u"`
	F     float32   `parquet:"f"`
	Price int64     `parquet:"price,decimal(2:12)"`
	Raw   []byte    `parquet:"raw"`
	At    time.Time `parquet:"at,timestamp(nanosecond)"`
	Tags  []string  `parquet:"tags,list"`
	Where struct {
		Lat, Lon float64
	} `parquet:"where"`
	Maybe *int64 `parquet:"maybe,optional"`
}

func TestParquetShapes(t *testing.T) {
	dir := t.TempDir()
	rows := make([]odd, 5000)
	for i := range rows {
		rows[i] = odd{N: int32(i % 70), U: uint32(i), F: float32(i%9) / 2, Price: int64(i % 300), Raw: []byte{byte(i), byte(i >> 8)},
			At: time.Date(2026, 1, 1, 0, 0, 0, 0, time.UTC).Add(time.Duration(i) * time.Hour), Tags: []string{"a", "b"}}
		if i%2 == 0 {
			v := int64(i % 11)
			rows[i].Maybe = &v
		}
	}
	f := create(t, filepath.Join(dir, "odd.parquet"))
	w := parquet.NewGenericWriter[odd](f, parquet.Compression(&parquet.Zstd), parquet.MaxRowsPerRowGroup(1000))
	if _, err := w.Write(rows); err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	f.Close()
	// An empty file of the same schema adds no rows.
	e := create(t, filepath.Join(dir, "zz-empty.parquet"))
	ew := parquet.NewGenericWriter[odd](e)
	if err := ew.Close(); err != nil {
		t.Fatal(err)
	}
	e.Close()
	got := surveyed(t, []string{dir}, "at", "week")
	files, _ := datafile.Find([]string{filepath.Join(dir, "odd.parquet")}, datafile.DefaultLimits)
	var skipped []string
	_, _ = datafile.Read(files, survey.NewTable(), datafile.Options{Limits: datafile.DefaultLimits,
		Skipped: func(_ datafile.File, col string) { skipped = append(skipped, col) }})
	if strings.Join(skipped, ",") != "tags,where" {
		t.Errorf("skipped %v, want tags and where", skipped)
	}
	want := map[string]string{"n": "int64", "u": "int64", "f": "float64", "price": "decimal", "raw": "string", "at": "datetime", "maybe": "int64"}
	if len(got.Columns) != len(want) {
		t.Errorf("columns %+v, want %d (tags and where skipped)", got.Columns, len(want))
	}
	for _, c := range got.Columns {
		if c.Type != want[c.Name] {
			t.Errorf("%s: type %s, want %s", c.Name, c.Type, want[c.Name])
		}
	}
	d := map[string]int64{}
	for _, c := range got.Columns {
		d[c.Name] = c.Distinct
	}
	// 5000 hours from 2026-01-01 (a Thursday, ISO week 1) reach 2026-07-28: weeks 1 to 31.
	if got.Rows != 5000 || got.Partitions.Scheme != "time" || len(got.Partitions.Items) != 31 || d["n"] != 70 || d["f"] != 9 || d["price"] != 300 ||
		d["raw"] != 5000 || d["maybe"] != 11 || got.Columns[len(got.Columns)-1].Nulls != 2500 {
		t.Errorf("survey %+v", got)
	}
}

// Files of one table may order their columns differently or lack one: columns match by
// name, and a file without a column holds nulls for it.
func TestCSVHeadersDiffer(t *testing.T) {
	dir := t.TempDir()
	_ = os.WriteFile(filepath.Join(dir, "a.csv"), []byte("id,name,score\n1,ann,3\n2,bob,4\n"), 0o644)
	_ = os.WriteFile(filepath.Join(dir, "b.csv"), []byte("\uFEFFname,id\ncy,3\n"), 0o644)
	got := surveyed(t, []string{dir}, "", "")
	byName := map[string]schema.SurveyColumn{}
	for _, c := range got.Columns {
		byName[c.Name] = c
	}
	if got.Rows != 3 || len(got.Columns) != 3 || byName["id"].Distinct != 3 || byName["name"].Distinct != 3 ||
		byName["score"].Nulls != 1 || byName["score"].Distinct != 2 || byName["id"].Order != "sorted" {
		t.Errorf("survey %+v", got)
	}
}
