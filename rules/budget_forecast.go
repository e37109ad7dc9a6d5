package rules

import (
	"fmt"

	"github.com/scangate/scangate/schema"

	"github.com/scangate/scangate/internal/analysis"

	"github.com/scangate/scangate/internal/units"

	"github.com/scangate/scangate/internal/advisor"
)

// BudgetForecast fires when growth takes a table across a budget within the forecast
// horizon (horizon_months, 12 by default).
var BudgetForecast = Rule{
	ID:      budgetForecastID,
	Default: Warning,
	Title:   "Growth crosses a budget within the forecast horizon (12 months by default)",
	Params:  []Param{forecastHorizon},
	Why: "With growth_per_year a table holds more rows every month: more segments, longer " +
		"scans, a larger refresh. A layout that fits today can break a budget soon after. The " +
		"forecast grows every table of the model by its own rate, rows x (1+g)^(months/12), " +
		"re-lays it out month by month from the run's date and reports the first month a " +
		"budget (scan overhead, scan time, refresh memory, engine memory) is crossed. Budgets " +
		"already broken today are left to the other rules.",
	Fix: "Change the layout before that month: the first hint is the table's one " +
		"recommendation and says until when it holds every budget within the horizon " +
		"(horizon_months, 12 by default; `scangate plan` uses the same); `scangate plan` shows " +
		"the month by month forecast and every option. Or raise the budget if the growth is " +
		"planned for.",
	Check: checkBudgetForecast,
	How: "Month t from the run's date (--today) holds rows x (1+g)^(t/12) rows for every table of " +
		"the model, g its growth_per_year (listed items and measured encoded_bytes alike). Each " +
		"month is laid out again; the rule reports the first month within 12 where the fixed CPU " +
		"of a full scan, the scan wall time of the widest column, or the model's refresh peak " +
		"(2 x encoded size + refresh_parallelism x segment_rows x row width) passes its budget or " +
		"the engine's memory.",
	Bad: `engine: {segment_rows: 1000}
budgets: {scan_overhead_ms: 1500}
tables:
  - name: events
    rows: 700k                 # 700 segments, 1,050 ms today
    growth_per_year: 0.5       # 1,016 segments, 1,524 ms in month 11
    partitions: {scheme: none}`,
	Good: `engine: {segment_rows: 1Mi}  # 1 segment through the next 12 months
budgets: {scan_overhead_ms: 1500}
tables:
  - name: events
    rows: 700k
    growth_per_year: 0.5
    partitions: {scheme: none}`,
}

func init() { register(BudgetForecast) }

const budgetForecastID = "budget-forecast"

// forecastHorizon is how far ahead a crossing is warned of.
var forecastHorizon = Param{Name: "horizon_months", Default: advisor.ForecastMonths, Doc: "Months ahead a budget crossing is warned of (default 12).",
	// Twenty years: a forecast month by month beyond that says nothing a plan can act on,
	// and each month lays out every growing table again.
	Range: schema.Range{Min: 1, Max: maxHorizonMonths, Integer: true}}

// maxHorizonMonths bounds horizon_months (20 years).
const maxHorizonMonths = 240

func checkBudgetForecast(t *analysis.Table, cfg Config) []Finding {
	horizon := units.Int(cfg.Value(budgetForecastID, forecastHorizon))
	md := t.Advisor()
	if md == nil {
		return nil
	}
	// Only growth moves a table's own figures; the model's refresh peak, which every
	// growing table moves, is reported once, on the first of them.
	first := t.Model().FirstGrowing
	if t.Spec.GrowthPerYear == 0 && first != t.Index {
		return nil
	}
	// Most tables break no new budget by the end of the window: two projections settle
	// that before the month-by-month forecast.
	if !md.NewlyBroken(t.Index, t.Spec, t.Engine.SegmentRows, horizon) {
		return nil
	}
	today := cfg.today()
	fc, err := md.Crossings(t.Index, t.Spec, t.Engine.SegmentRows, today, horizon)
	if err != nil {
		return nil
	}
	end := advisor.Month(advisor.AddMonths(today, horizon))
	var out []Finding
	for _, c := range fc.Crossings {
		if c.Month < 1 || (c.Model && first != t.Index) || (!c.Model && t.Spec.GrowthPerYear == 0) {
			continue
		}
		p := fc.Months[c.Month]
		var msg string
		switch c.Budget {
		case "scan_overhead_ms":
			msg = fmt.Sprintf("growing %s a year, it crosses the %s in %s: %s rows in %s segments pay %s of fixed CPU per scan (today %s)",
				units.Pct(t.Spec.GrowthPerYear), budgetWords(c), advisor.Month(c.Date), units.Count(p.Rows), units.Num(p.Layout.Segments), c.Format(c.Value), c.Format(c.Now))
		case "scan_ms":
			msg = fmt.Sprintf("growing %s a year, it crosses the %s in %s: a full scan of column %s takes about %s with %s rows (today %s)",
				units.Pct(t.Spec.GrowthPerYear), budgetWords(c), advisor.Month(c.Date), p.Widest, c.Format(c.Value), units.Count(p.Rows), c.Format(c.Now))
		default:
			msg = fmt.Sprintf("with the model's growth, the refresh peak crosses the %s in %s: %s (today %s)",
				budgetWords(c), advisor.Month(c.Date), c.Format(c.Value), c.Format(c.Now))
		}
		out = append(out, advised(t, Warning, t.Spec.Pos, "forecast "+c.Budget, msg, []string{fmt.Sprintf("`scangate plan` shows the forecast month by month through %s (%d-month horizon)", end, horizon)}, map[string]float64{
			"month":  float64(c.Month),
			"limit":  c.Limit,
			"value":  c.Value,
			"today":  c.Now,
			"growth": t.Spec.GrowthPerYear,
		}))
	}
	return out
}

// budgetWords names the crossed limit with its value: "500 ms scan-overhead budget".
func budgetWords(c advisor.Crossing) string {
	return c.Format(c.Limit) + " " + c.Name
}
