package survey_test

import (
	"bytes"
	"database/sql"
	"database/sql/driver"
	"encoding/csv"
	"fmt"
	"math"
	"math/rand/v2"
	"strconv"
	"strings"
	"testing"
	"time"

	"modernc.org/sqlite"

	"github.com/scangate/scangate/internal/survey"
	"github.com/scangate/scangate/schema"
)

// The SQL path is tested end to end on the embedded pure-Go SQL engine imported above
// (a test-only dependency, never linked into the binary): seeded rows go into a table, the
// generated query runs on it, its result is written as CSV the way an engine's export
// would, and --from-result's reading of it must match what the generator knows.

type sale struct {
	id     int64
	site   string
	odd    *string // a column whose name needs quoting, with nulls
	amount float64
	day    string // YYYY-MM-DD
}

type saleTruth struct {
	rows     int64
	perMonth map[string]int64
	perSite  map[string]int64
	distinct map[string]map[string]bool
	lenSum   map[string]int64
	nonNull  map[string]int64
}

func sales(seed uint64, n int) ([]sale, *saleTruth) {
	rng := rand.New(rand.NewPCG(seed, 3))
	tr := &saleTruth{perMonth: map[string]int64{}, perSite: map[string]int64{}, distinct: map[string]map[string]bool{},
		lenSum: map[string]int64{}, nonNull: map[string]int64{}}
	see := func(col, v string) {
		if tr.distinct[col] == nil {
			tr.distinct[col] = map[string]bool{}
		}
		tr.distinct[col][v] = true
		tr.lenSum[col] += int64(len(v))
		tr.nonNull[col]++
	}
	start := time.Date(2025, 1, 1, 0, 0, 0, 0, time.UTC)
	out := make([]sale, n)
	for i := range out {
		d := start.AddDate(0, 0, i*424/n) // 14 months, every day present
		s := sale{id: int64(i), site: "site " + strconv.Itoa(rng.IntN(40)) + strings.Repeat("x", rng.IntN(5)),
			amount: float64(rng.IntN(900)) / 4, day: d.Format("2006-01-02")}
		if rng.IntN(3) > 0 {
			o := "o'" + strconv.Itoa(rng.IntN(70))
			s.odd = &o
			see(`odd "name"`, o)
		}
		out[i] = s
		tr.rows++
		tr.perMonth[d.Format("2006-01")]++
		tr.perSite[s.site]++
		see("id", strconv.FormatInt(s.id, 10))
		see("site", s.site)
		see("amount", strconv.FormatFloat(s.amount, 'g', -1, 64))
		see("day", s.day)
	}
	return out, tr
}

var salesColumns = `id:int64,site:string,odd "name":string,amount:float64,day:date`

func loadSales(t *testing.T, rows []sale) *sql.DB {
	t.Helper()
	db, err := sql.Open("sqlite", ":memory:")
	if err != nil {
		t.Fatal(err)
	}
	db.SetMaxOpenConns(1) // one in-memory database
	t.Cleanup(func() { db.Close() })
	if _, err := db.Exec(`CREATE TABLE "sales" (id INTEGER, site TEXT, "odd ""name""" TEXT, amount REAL, day TEXT)`); err != nil {
		t.Fatal(err)
	}
	tx, _ := db.Begin()
	st, err := tx.Prepare(`INSERT INTO "sales" VALUES (?, ?, ?, ?, ?)`)
	if err != nil {
		t.Fatal(err)
	}
	for _, r := range rows {
		var odd any
		if r.odd != nil {
			odd = *r.odd
		}
		if _, err := st.Exec(r.id, r.site, odd, r.amount, r.day); err != nil {
			t.Fatal(err)
		}
	}
	if err := tx.Commit(); err != nil {
		t.Fatal(err)
	}
	return db
}

// resultCSV runs the query and writes its result as CSV with a header row.
func resultCSV(t *testing.T, db *sql.DB, query string) []byte {
	t.Helper()
	rows, err := db.Query(query)
	if err != nil {
		t.Fatalf("the generated query does not run: %v\n%s", err, query)
	}
	defer rows.Close()
	cols, _ := rows.Columns()
	var b bytes.Buffer
	w := csv.NewWriter(&b)
	_ = w.Write(cols)
	vals := make([]any, len(cols))
	ptrs := make([]any, len(cols))
	for i := range vals {
		ptrs[i] = &vals[i]
	}
	for rows.Next() {
		if err := rows.Scan(ptrs...); err != nil {
			t.Fatal(err)
		}
		rec := make([]string, len(cols))
		for i, v := range vals {
			switch v := v.(type) {
			case nil:
			case int64:
				rec[i] = strconv.FormatInt(v, 10)
			case float64:
				rec[i] = strconv.FormatFloat(v, 'g', -1, 64)
			case []byte:
				rec[i] = string(v)
			default:
				rec[i] = fmt.Sprint(v)
			}
		}
		_ = w.Write(rec)
	}
	if err := rows.Err(); err != nil {
		t.Fatal(err)
	}
	w.Flush()
	return b.Bytes()
}

func query(t *testing.T, key, grain, dialect string) string {
	t.Helper()
	cols, err := survey.ParseSQLColumns(salesColumns)
	if err != nil {
		t.Fatal(err)
	}
	d, err := survey.LookupDialect(dialect)
	if err != nil {
		t.Fatal(err)
	}
	return survey.Query("sales", cols, key, grain, d)
}

func checkColumns(t *testing.T, tr *saleTruth, got schema.SurveyTable, exact bool) {
	t.Helper()
	if got.Name != "sales" || got.Rows != tr.rows {
		t.Errorf("table %s rows %d, want sales %d", got.Name, got.Rows, tr.rows)
	}
	if len(got.Columns) != 5 {
		t.Fatalf("columns %+v", got.Columns)
	}
	for _, c := range got.Columns {
		if c.Distinct != int64(len(tr.distinct[c.Name])) || c.DistinctExact != exact || c.Nulls != tr.rows-tr.nonNull[c.Name] || c.Order != "" {
			t.Errorf("%s: distinct %d exact %v nulls %d order %q, want %d %v %d and no order", c.Name, c.Distinct, c.DistinctExact, c.Nulls, c.Order,
				len(tr.distinct[c.Name]), exact, tr.rows-tr.nonNull[c.Name])
		}
		if c.Type == "string" {
			want := math.Round(float64(tr.lenSum[c.Name])/float64(tr.nonNull[c.Name])*100) / 100
			if c.AvgLength == nil || *c.AvgLength != want {
				t.Errorf("%s: avg_length %v, want %v", c.Name, c.AvgLength, want)
			}
		}
	}
}

func TestSQLRoundTripByMonth(t *testing.T) {
	rows, tr := sales(1, 6000)
	db := loadSales(t, rows)
	got, err := survey.FromResult("result.csv", resultCSV(t, db, query(t, "day", "month", "strftime")))
	if err != nil {
		t.Fatal(err)
	}
	checkColumns(t, tr, got, true)
	p := got.Partitions
	if p.Scheme != "time" || p.Grain != "month" || p.Key != "day" || len(p.Items) != 14 {
		t.Fatalf("partitions %+v, want 14 months", p)
	}
	for _, it := range p.Items {
		if it.Rows != tr.perMonth[it.Name] {
			t.Errorf("%s: %d rows, want %d", it.Name, it.Rows, tr.perMonth[it.Name])
		}
	}
	if got.GrowthPerYear == nil || math.Abs(*got.GrowthPerYear) > 0.02 {
		t.Errorf("growth %v, want about 0 (rows are spread evenly over the days)", got.GrowthPerYear)
	}
	loads(t, got)
}

func TestSQLRoundTripList(t *testing.T) {
	rows, tr := sales(2, 3000)
	db := loadSales(t, rows)
	got, err := survey.FromResult("result.csv", resultCSV(t, db, query(t, "site", "", "ansi")))
	if err != nil {
		t.Fatal(err)
	}
	checkColumns(t, tr, got, true)
	if got.Partitions.Scheme != "list" || len(got.Partitions.Items) != len(tr.perSite) {
		t.Fatalf("partitions %+v", got.Partitions)
	}
	for _, it := range got.Partitions.Items {
		if it.Rows != tr.perSite[it.Name] {
			t.Errorf("%s: %d rows, want %d", it.Name, it.Rows, tr.perSite[it.Name])
		}
	}
	loads(t, got)
	// Without a key: one partition.
	got, err = survey.FromResult("result.csv", resultCSV(t, db, query(t, "", "", "ansi")))
	if err != nil || got.Partitions.Scheme != "none" || got.Rows != tr.rows {
		t.Errorf("unpartitioned: %+v %v", got.Partitions, err)
	}
}

// exactDistinct stands in for an engine's approximate distinct function, so the query of
// the approx_count_distinct dialect runs here; the result must say the count is not exact.
type exactDistinct struct{ seen map[any]bool }

func (e *exactDistinct) Step(_ *sqlite.FunctionContext, args []driver.Value) error {
	if args[0] != nil {
		if b, ok := args[0].([]byte); ok {
			e.seen[string(b)] = true
		} else {
			e.seen[args[0]] = true
		}
	}
	return nil
}
func (e *exactDistinct) WindowInverse(*sqlite.FunctionContext, []driver.Value) error { return nil }
func (e *exactDistinct) WindowValue(*sqlite.FunctionContext) (driver.Value, error) {
	return int64(len(e.seen)), nil
}
func (e *exactDistinct) Final(*sqlite.FunctionContext) {}

func TestSQLApproximateDialect(t *testing.T) {
	sqlite.MustRegisterFunction("approx_count_distinct", &sqlite.FunctionImpl{NArgs: 1, Deterministic: true,
		MakeAggregate: func(sqlite.FunctionContext) (sqlite.AggregateFunction, error) {
			return &exactDistinct{seen: map[any]bool{}}, nil
		}})
	rows, tr := sales(3, 2000)
	db := loadSales(t, rows)
	q := query(t, "site", "", "approx_count_distinct")
	if !strings.Contains(q, `APPROX_COUNT_DISTINCT("odd ""name""")`) {
		t.Errorf("query does not quote the column or use the dialect's function:\n%s", q)
	}
	got, err := survey.FromResult("result.csv", resultCSV(t, db, q))
	if err != nil {
		t.Fatal(err)
	}
	checkColumns(t, tr, got, false)
}

func TestFromResultErrors(t *testing.T) {
	head := `table,dialect,grain,key,scope,partition,rows,id:int64:distinct,id:int64:values` + "\n"
	for _, c := range []struct{ body, want string }{
		{"", "r.csv:1:1: the file is empty"},
		{"a,b\n1,2\n", `r.csv:1:1: the header row has no "table" column`},
		{head, "r.csv:1:1: no row of scope table"},
		{head + "t,ansi,,,table,,x,1,1\n", "r.csv:2:17: rows \"x\": want a whole number"},
		{head + "t,ansi,,,table,,5,1,1\nt,ansi,,,table,,5,1,1\n", "r.csv:3:10: a second row of scope table"},
		{head + "t,nope,,,table,,5,1,1\n", `dialect "nope"`},
		{head + "t,ansi,,k,table,,5,1,1\nt,ansi,,k,partition,a,4,,\n", "the partitions hold 4 rows and the table row 5"},
		{head + "t,ansi,month,k,table,,5,1,1\nt,ansi,month,k,partition,soon,5,,\n", `r.csv:3:26: partition key "soon" is not a date`},
		{"table,dialect,grain,key,scope,partition,rows,id:blob:distinct\n", `header "id:blob:distinct" is not one`},
	} {
		_, err := survey.FromResult("r.csv", []byte(c.body))
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%q: error %v, want %q", c.body, err, c.want)
		}
	}
}

func loads(t *testing.T, tb schema.SurveyTable) {
	t.Helper()
	doc := "format: 1\nmodel: m\nengine: {segment_rows: 1M}\n" + string(survey.Fragment([]schema.SurveyTable{tb}))
	if _, err := schema.Load("fragment.yaml", []byte(doc), schema.DefaultLimits); err != nil {
		t.Errorf("the fragment does not load as a manifest: %v\n%s", err, doc)
	}
}
