package survey

import (
	"fmt"
	"strings"
)

// Dialect is one flavour of the survey query, named by the function it counts distinct
// values with or the one it reads a date with.
type Dialect struct {
	Name     string
	distinct string // the distinct count of %s
	day      string // the date of %s, written YYYY-MM-DD
	Exact    bool   // the distinct count is exact
}

// Dialects are the query flavours survey writes.
var Dialects = []Dialect{
	{Name: "ansi", distinct: "COUNT(DISTINCT %s)", day: "CAST(%s AS DATE)", Exact: true},
	{Name: "approx_count_distinct", distinct: "APPROX_COUNT_DISTINCT(%s)", day: "CAST(%s AS DATE)"},
	{Name: "approx_distinct", distinct: "APPROX_DISTINCT(%s)", day: "CAST(%s AS DATE)"},
	{Name: "strftime", distinct: "COUNT(DISTINCT %s)", day: "strftime('%%Y-%%m-%%d', %s)", Exact: true},
}

// DialectNames lists the dialects for help text and errors.
func DialectNames() string {
	names := make([]string, len(Dialects))
	for i, d := range Dialects {
		names[i] = d.Name
	}
	return strings.Join(names, ", ")
}

// LookupDialect finds a dialect by name.
func LookupDialect(name string) (Dialect, error) {
	for _, d := range Dialects {
		if d.Name == name {
			return d, nil
		}
	}
	return Dialect{}, fmt.Errorf("--dialect %q: use one of %s", name, DialectNames())
}

// SQLColumn is one column the query measures.
type SQLColumn struct{ Name, Type string }

// ParseSQLColumns reads --columns: NAME:TYPE pairs separated by commas, TYPE one of the
// manifest's column types.
func ParseSQLColumns(s string) ([]SQLColumn, error) {
	var out []SQLColumn
	seen := map[string]bool{}
	for _, part := range strings.Split(s, ",") {
		part = strings.TrimSpace(part)
		if part == "" {
			continue
		}
		i := strings.LastIndexByte(part, ':')
		if i <= 0 {
			return nil, fmt.Errorf("--columns %q: write NAME:TYPE, e.g. meter_id:int64,site:string", part)
		}
		c := SQLColumn{Name: part[:i], Type: part[i+1:]}
		if !isColumnType(c.Type) {
			return nil, fmt.Errorf("--columns %q: type %q is not one of int64, float64, decimal, string, bool, date, datetime", part, c.Type)
		}
		if seen[c.Name] {
			return nil, fmt.Errorf("--columns names %q twice", c.Name)
		}
		seen[c.Name] = true
		out = append(out, c)
	}
	return out, nil
}

func isColumnType(t string) bool {
	switch t {
	case "int64", "float64", "decimal", "string", "bool", "date", "datetime":
		return true
	}
	return false
}

// Query is the survey query of table in dialect d: one row for the whole table (rows,
// and per column the distinct count, the non-null count and, for strings, the average
// length in bytes) and, with a partition key, one row per key value with its rows. With
// a grain the key is read as a date (its day) and survey --from-result folds the days
// into periods, so the query needs no date arithmetic beyond reading a day. Every name
// is a quoted identifier and every literal a quoted string, so no name can change the
// query. The aliases carry what --from-result needs: NAME:TYPE:MEASURE.
func Query(table string, cols []SQLColumn, key, grain string, d Dialect) string {
	var b strings.Builder
	lit := func(s string) string { return "'" + strings.ReplaceAll(s, "'", "''") + "'" }
	from := quoteTable(table)
	head := []string{lit(table), lit(d.Name), lit(grain), lit(key)}
	b.WriteString("-- scangate survey query: run it where the table lives and save the result, header\n")
	b.WriteString("-- row included, as CSV for `scangate survey --from-result FILE.csv`.\n")
	b.WriteString("SELECT\n")
	fields := []string{
		head[0] + ` AS "table"`, head[1] + ` AS "dialect"`, head[2] + ` AS "grain"`, head[3] + ` AS "key"`,
		`'table' AS "scope"`, `NULL AS "partition"`, `COUNT(*) AS "rows"`,
	}
	nulls := make([]string, 0, 3*len(cols))
	for _, c := range cols {
		q := quoteIdent(c.Name)
		fields = append(fields, fmt.Sprintf(d.distinct, q)+" AS "+quoteIdent(c.Name+":"+c.Type+":distinct"))
		fields = append(fields, "COUNT("+q+") AS "+quoteIdent(c.Name+":"+c.Type+":values"))
		nulls = append(nulls, "NULL", "NULL")
		if c.Type == "string" {
			fields = append(fields, "AVG(OCTET_LENGTH("+q+")) AS "+quoteIdent(c.Name+":"+c.Type+":avg_length"))
			nulls = append(nulls, "NULL")
		}
	}
	b.WriteString("  " + strings.Join(fields, ",\n  ") + "\n")
	b.WriteString("FROM " + from + "\n")
	if key != "" {
		k := quoteIdent(key)
		if grain != "" {
			k = fmt.Sprintf(d.day, k)
		}
		b.WriteString("UNION ALL\nSELECT\n")
		part := append(append([]string{}, head...), `'partition'`, k, `COUNT(*)`)
		part = append(part, nulls...)
		b.WriteString("  " + strings.Join(part, ", ") + "\n")
		b.WriteString("FROM " + from + "\n")
		b.WriteString("GROUP BY " + k + "\n")
	}
	return b.String()
}

// quoteIdent is a delimited identifier: double quotes, inner ones doubled (SQL-92).
func quoteIdent(s string) string { return `"` + strings.ReplaceAll(s, `"`, `""`) + `"` }

// quoteTable quotes each dot-separated part of a table name (schema.table).
func quoteTable(s string) string {
	parts := strings.Split(s, ".")
	for i, p := range parts {
		parts[i] = quoteIdent(p)
	}
	return strings.Join(parts, ".")
}
