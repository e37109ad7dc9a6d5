package survey_test

import (
	"math"
	"math/rand/v2"
	"slices"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/stat"

	"github.com/scangate/scangate/internal/survey"
	"github.com/scangate/scangate/schema"
)

// TestDistinctWithinBound feeds seeded values of known cardinality: exact up to
// survey.ExactLimit, and past it within 3 standard errors of the sketch (1.04/sqrt(2^14),
// Flajolet et al. 2007) in every case.
func TestDistinctWithinBound(t *testing.T) {
	for _, card := range []int{1, 1000, survey.ExactLimit, survey.ExactLimit + 1, 100_000, 300_000, 1_000_000} {
		for seed := uint64(1); seed <= 2; seed++ {
			rng := rand.New(rand.NewPCG(seed, uint64(card)))
			tb := survey.NewTable()
			c, _ := tb.Typed("v", "int64", survey.KindInt)
			s, _ := tb.Typed("s", "string", survey.KindBytes)
			// Every value at least once, then repeats, in random order.
			n := card + card/2
			base := rng.Int64N(1 << 40)
			for i := 0; i < n; i++ {
				v := int64(i)
				if i >= card {
					v = rng.Int64N(int64(card))
				}
				c.Int(base + v*7919)
				s.Bytes([]byte("k" + strconv.FormatInt(v, 36)))
			}
			_ = tb.Count("", int64(n))
			res, err := tb.Result("t", "", "")
			if err != nil {
				t.Fatal(err)
			}
			for _, col := range res.Columns {
				rel := math.Abs(float64(col.Distinct)-float64(card)) / float64(card)
				switch {
				case card <= survey.ExactLimit && (!col.DistinctExact || col.Distinct != int64(card)):
					t.Errorf("%s card %d seed %d: %d (exact %v), want exactly %d", col.Name, card, seed, col.Distinct, col.DistinctExact, card)
				case card > survey.ExactLimit && (col.DistinctExact || rel > 3*survey.SketchError || col.DistinctError != 0.0081):
					t.Errorf("%s card %d seed %d: %d off by %.2f%% (exact %v, error %v), want within %.2f%%", col.Name, card, seed, col.Distinct, 100*rel, col.DistinctExact, col.DistinctError, 300*survey.SketchError)
				}
			}
		}
	}
}

// TestGrowthFitMatchesReference compares the fit with gonum's ordinary least squares
// (stat.LinearRegression) on seeded noisy data, and recovers an exact growth.
func TestGrowthFitMatchesReference(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 5))
	var xs, ys []float64
	for i := 0; i < 30; i++ {
		x := 2020 + float64(i)/12
		xs = append(xs, x)
		ys = append(ys, 3+x*math.Log(1.35)+rng.NormFloat64()*0.05)
	}
	_, beta := stat.LinearRegression(xs, ys, nil, false)
	want := math.Round((math.Exp(beta)-1)*1e4) / 1e4
	if got := survey.GrowthFit(xs, ys); got != want {
		t.Errorf("fit %v, reference %v", got, want)
	}
	exact := []float64{math.Log(100), math.Log(110), math.Log(121), math.Log(133.1)}
	if got := survey.GrowthFit([]float64{0, 1, 2, 3}, exact); got != 0.1 {
		t.Errorf("fit %v, want 0.1", got)
	}
	if got := survey.GrowthFit([]float64{0, 1}, []float64{0, 100}); got != 100 {
		t.Errorf("fit %v, want the manifest's maximum 100", got)
	}
}

func TestPartitionPeriods(t *testing.T) {
	cases := []struct {
		keys   []string
		grain  string
		scheme string
		names  []string
	}{
		// ISO 8601: 2024-12-30 is a Monday in week 1 of 2025; 2026-01-01 is in 2026-W01.
		{[]string{"2024-12-30", "2025-01-05", "2025-01-06"}, "week", "time", []string{"2025-W01", "2025-W02"}},
		{[]string{"2025-12-31T23:59:59Z", "2026-01-01 00:00:00+02:00"}, "week", "time", []string{"2026-W01"}},
		{[]string{"2025-01-15", "2025-02-01", "2025-04-30"}, "month", "list", []string{"2025-01", "2025-02", "2025-04"}},
		{[]string{"2025-3", "2025-04", "2025-07"}, "quarter", "time", []string{"2025-Q1", "2025-Q2", "2025-Q3"}},
		{[]string{"2025/11", "2025/12", "2026/01"}, "month", "time", []string{"2025-11", "2025-12", "2026-01"}},
		{[]string{"2025-Q4", "2026-Q1"}, "year", "time", []string{"2025", "2026"}},
		{[]string{"2025-W03", "2025-W05"}, "week", "list", []string{"2025-W03", "2025-W05"}},
	}
	for _, c := range cases {
		rows := map[string]int64{}
		for i, k := range c.keys {
			rows[k] = int64(i + 1)
		}
		p, _, err := survey.Partition(rows, "k", c.grain)
		if err != nil {
			t.Errorf("%v: %v", c.keys, err)
			continue
		}
		var names []string
		var sum int64
		for _, it := range p.Items {
			names = append(names, it.Name)
			sum += it.Rows
		}
		if p.Scheme != c.scheme || !equal(names, c.names) || sum != int64(len(c.keys)*(len(c.keys)+1)/2) {
			t.Errorf("%v by %s: %s %v (sum %d), want %s %v", c.keys, c.grain, p.Scheme, names, sum, c.scheme, c.names)
		}
	}
	for _, bad := range []struct {
		keys  []string
		grain string
	}{{[]string{"2025"}, "month"}, {[]string{"2025-W03"}, "month"}, {[]string{"2025-02-30"}, "day"}, {[]string{"later"}, "day"}} {
		if _, _, err := survey.Partition(map[string]int64{bad.keys[0]: 1}, "k", bad.grain); err == nil {
			t.Errorf("%v by %s: no error", bad.keys, bad.grain)
		}
	}
}

func TestOrder(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 9))
	tb := survey.NewTable()
	sorted, _ := tb.Typed("sorted", "int64", survey.KindInt)
	desc, _ := tb.Typed("desc", "float64", survey.KindFloat)
	clustered, _ := tb.Typed("clustered", "string", survey.KindBytes)
	random, _ := tb.Typed("random", "int64", survey.KindInt)
	skewed, _ := tb.Typed("skewed", "bool", survey.KindInt)
	text, _ := tb.Text("text")
	site := 0
	for i := 0; i < 20000; i++ {
		sorted.Int(int64(i / 3))
		desc.Float(float64(-i))
		if i%100 == 0 {
			site = rng.IntN(50)
		}
		clustered.Bytes([]byte("s" + strconv.Itoa(site)))
		random.Int(rng.Int64N(1000))
		// 95% one value: runs average about 20 rows by chance alone, which is random order.
		b := int64(0)
		if rng.IntN(20) == 0 {
			b = 1
		}
		skewed.Int(b)
		text.Value([]byte(strconv.Itoa(9 + i))) // sorted as numbers, not as text
	}
	_ = tb.Count("", 20000)
	res, _ := tb.Result("t", "", "")
	want := map[string]string{"sorted": "sorted", "desc": "sorted", "clustered": "clustered", "random": "random", "skewed": "random", "text": "sorted"}
	for _, c := range res.Columns {
		if c.Order != want[c.Name] {
			t.Errorf("%s: %s, want %s", c.Name, c.Order, want[c.Name])
		}
		if c.Name == "clustered" && (c.RunLength < 95 || c.RunLength > 110) {
			t.Errorf("clustered: run_length %d, want about 100 (102 with the 1-in-50 chance a run continues)", c.RunLength)
		}
	}
}

func TestTextTypes(t *testing.T) {
	tb := survey.NewTable()
	vals := map[string][]string{
		"int64": {"1", "-20", ""}, "float64": {"1", "2.5", "1e3"}, "bool": {"true", "FALSE"},
		"date": {"2026-01-31", ""}, "datetime": {"2026-01-31T10:00:00Z", "2026-02-01 09:30", "2026-02-01T09:30:00.5+01:00"},
		"string": {"1", "x"}, "string2": {"2026-02-30"},
	}
	for name, vs := range vals {
		c, _ := tb.Text(name)
		for _, v := range vs {
			c.Value([]byte(v))
		}
	}
	res, _ := tb.Result("t", "", "")
	for _, c := range res.Columns {
		want := c.Name
		if want == "string2" {
			want = "string"
		}
		if c.Type != want {
			t.Errorf("%s: inferred %s", c.Name, c.Type)
		}
	}
}

func TestFragmentLoads(t *testing.T) {
	g := 0.25
	avg := 7.0
	tb := schema.SurveyTable{Name: "2026: \"odd\"\nname", Rows: 10, GrowthPerYear: &g,
		Partitions: schema.SurveyPartitions{Scheme: "list", Items: []schema.SurveyItem{{Name: "2026-01-01", Rows: 4}, {Name: "true", Rows: 6}}},
		Columns:    []schema.SurveyColumn{{Name: "null", Type: "string", Distinct: 3, AvgLength: &avg, Order: "clustered", RunLength: 2}}}
	loads(t, tb)
	// Names that read as other types are quoted; whole numbers need no tag.
	got := string(survey.Fragment([]schema.SurveyTable{tb}))
	for _, want := range []string{`{name: "2026-01-01", rows: 4}`, `{name: "true", rows: 6}`, `{name: "null", type: string, distinct: 3, avg_length: 7, order: clustered, run_length: 2}`} {
		if !strings.Contains(got, want) {
			t.Errorf("fragment lacks %s:\n%s", want, got)
		}
	}
	if strings.Contains(got, "!!") {
		t.Errorf("fragment holds a tag:\n%s", got)
	}
}

func equal(a, b []string) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}

// A name that is not UTF-8 (a column, a partition, the table) is refused with the file
// it came from: the manifest fragment could not hold it, and a JSON report would change
// it (FuzzFromResult found the first: the YAML encoder refused it and survey printed
// nothing, exit 0).
func TestCheckTextRefusesNonUTF8(t *testing.T) {
	ok := schema.SurveyTable{Name: "reads", Columns: []schema.SurveyColumn{{Name: "zone"}}, Partitions: schema.SurveyPartitions{Key: "day", Items: []schema.SurveyItem{{Name: "2026-01-01"}}}}
	if err := survey.CheckText("d.csv", ok); err != nil {
		t.Fatalf("a UTF-8 table: %v", err)
	}
	for what, mutate := range map[string]func(*schema.SurveyTable){
		"the table name": func(t *schema.SurveyTable) { t.Name = "r\xffads" },
		"column name":    func(t *schema.SurveyTable) { t.Columns = []schema.SurveyColumn{{Name: "caf\xe9"}} },
		"partition":      func(t *schema.SurveyTable) { t.Partitions.Items = []schema.SurveyItem{{Name: "\xc3"}} },
		"partition key":  func(t *schema.SurveyTable) { t.Partitions.Key = "\x89" },
	} {
		bad := ok
		bad.Columns, bad.Partitions.Items = slices.Clone(ok.Columns), slices.Clone(ok.Partitions.Items)
		mutate(&bad)
		err := survey.CheckText("d.csv", bad)
		if err == nil || !strings.HasPrefix(err.Error(), "d.csv: ") || !strings.Contains(err.Error(), what) || !strings.Contains(err.Error(), "not UTF-8") {
			t.Errorf("%s: %v", what, err)
		}
	}
	if _, err := survey.FromResult("r.csv", []byte("table,dialect,grain,key,scope,partition,rows,\x89:string:avg_length\nt,ansi,,,table,,5,2\n")); err == nil ||
		!strings.Contains(err.Error(), "r.csv:1:8: header") {
		t.Errorf("a result header that is not UTF-8: %v", err)
	}
}

// A result header the survey query never writes is refused at its column (both found by
// FuzzFromResult): avg_length of a column that is not a string (the manifest allows it on
// strings only), and one column given two types.
func TestFromResultRefusesMixedHeaders(t *testing.T) {
	head := "table,dialect,grain,key,scope,partition,rows,"
	for body, want := range map[string]string{
		head + "n:int64:avg_length\nt,ansi,,,table,,5,2\n":                 `r.csv:1:8: header "n:int64:avg_length": avg_length is measured for string columns only`,
		head + "n:int64:distinct,n:string:values\nt,ansi,,,table,,5,2,2\n": `r.csv:1:9: header "n:string:values" types column "n" string, an earlier header int64`,
	} {
		if _, err := survey.FromResult("r.csv", []byte(body)); err == nil || !strings.Contains(err.Error(), want) {
			t.Errorf("%q: %v, want %q", body, err, want)
		}
	}
}
