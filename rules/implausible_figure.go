package rules

import (
	"fmt"

	"github.com/scangate/scangate/internal/analysis"
	"github.com/scangate/scangate/internal/units"
	"github.com/scangate/scangate/schema"
)

// ImplausibleFigure fires at a figure the schema accepts but that cannot be true, or is
// almost surely a slip (a fraction written as a percentage, a unit off by 1024), since
// every estimate scangate makes for the table rests on it.
var ImplausibleFigure = Rule{
	ID:      implausibleFigureID,
	Default: Warning,
	Title:   "A figure that cannot be true or is almost surely a slip",
	Why: "The schema accepts any value in a wide range, so a slip such as growth_per_year: 15 " +
		"(meant as 15%, read as 1,500% a year) or a distinct count above the table's rows passes " +
		"validation and quietly steers the forecast, the encoded sizes and every hint. Each " +
		"figure below is impossible or far outside what tables hold.",
	How: "Per table: growth_per_year above max_growth (default 3, 300% a year: a table that " +
		"quadruples every year; common practice); a column's distinct above the table's rows " +
		"(impossible: each value needs a row), or above 2 for a bool column; a run_length above " +
		"the table's rows (a run cannot be longer than the table); a refresh.routine that " +
		"reaches every partition (the routine refresh is then a full refresh; drop it or narrow it).",
	Fix: "Correct the figure (growth is a fraction: 0.15 is 15%; distinct counts are per table), " +
		"or, when it is right, say so with a waiver and its reason.",
	Params: []Param{implausibleGrowth},
	Check:  checkImplausibleFigure,
	Bad: `  - name: baskets
    rows: 40M
    growth_per_year: 15        # 1,500% a year
    partitions: {scheme: none}
    columns:
      - {name: basket_id, type: int64, distinct: 400M}   # more values than rows`,
	Good: `  - name: baskets
    rows: 40M
    growth_per_year: 0.15
    partitions: {scheme: none}
    columns:
      - {name: basket_id, type: int64, distinct: 40M}`,
}

func init() { register(ImplausibleFigure) }

const implausibleFigureID = "implausible-figure"

var implausibleGrowth = Param{Name: "max_growth", Default: 3,
	Doc:   "Highest growth_per_year (a fraction) taken as plausible (default 3, 300% a year).",
	Range: schema.Range{Min: 0, MinExclusive: true, Max: 100}}

func checkImplausibleFigure(t *analysis.Table, cfg Config) []Finding {
	var out []Finding
	spec := t.Spec
	add := func(pos schema.Pos, subject, msg, hint string, nums map[string]float64) {
		out = append(out, finding(t, Warning, pos, subject, msg, []string{hint}, nums))
	}
	if g, limit := spec.GrowthPerYear, cfg.Value(implausibleFigureID, implausibleGrowth); g > limit {
		add(spec.GrowthPos, "growth_per_year", fmt.Sprintf("growth_per_year %s is %s a year, the table x%s every year; above %s is taken as a slip",
			units.Short(g), units.Pct(g), units.Short(1+g), units.Pct(limit)),
			fmt.Sprintf("growth_per_year is a fraction: write %s for %s%% a year", units.Short(g/100), units.Short(g)),
			map[string]float64{"growth_per_year": g, "max_growth": limit})
	}
	rows := t.Layout.Rows
	for _, c := range spec.Columns {
		subject := func() string { return "column:" + c.Name } // made only for a finding
		switch {
		case c.Type == "bool" && c.Distinct > 2:
			add(c.Pos, subject(), fmt.Sprintf("bool column %s declares %s distinct values; a bool has at most 2", c.Name, units.Count(c.Distinct)),
				"set distinct: 2 or drop it (2 is the default for bool)", map[string]float64{"distinct": float64(c.Distinct)})
		case c.Distinct > rows:
			add(c.Pos, subject(), fmt.Sprintf("column %s declares %s distinct values in a table of %s rows; each value needs a row",
				c.Name, units.Count(c.Distinct), units.Count(rows)),
				fmt.Sprintf("set distinct to at most %s (the rows), or drop it: the default is every value unique", units.Count(rows)),
				map[string]float64{"distinct": float64(c.Distinct), "rows": float64(rows)})
		}
		if c.RunLength > rows && rows > 0 {
			add(c.Pos, subject(), fmt.Sprintf("column %s declares runs of %s rows in a table of %s rows", c.Name, units.Count(c.RunLength), units.Count(rows)),
				fmt.Sprintf("set run_length to at most %s, or drop it", units.Count(rows)),
				map[string]float64{"run_length": float64(c.RunLength), "rows": float64(rows)})
		}
	}
	if r := spec.Routine; r.Declared() && t.Routine.Partitions >= t.Layout.Partitions {
		add(r.Pos, "refresh.routine", fmt.Sprintf("refresh.routine reaches all %s partitions, so the routine refresh is a full refresh", units.Num(int64(t.Layout.Partitions))),
			"narrow it to the partitions the routine refresh really rebuilds, or drop refresh.routine", map[string]float64{"partitions": float64(t.Layout.Partitions)})
	}
	return out
}
