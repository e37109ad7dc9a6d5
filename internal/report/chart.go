package report

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"github.com/scangate/scangate/internal/analysis"
	"github.com/scangate/scangate/internal/escape"
	"github.com/scangate/scangate/internal/units"
	"github.com/scangate/scangate/rules"
)

// maxCharts keeps the Markdown summary short enough for a job page; maxBars keeps one
// chart readable.
const (
	maxCharts = 3
	maxBars   = 6
)

// bar is one layout in a chart: key is its short name on the x axis, label the
// layout in full for the table under the chart.
type bar struct {
	key     string
	label   string
	fixedMs float64
}

// charts draws, for the first tables with a segment finding that is not waived, a bar
// chart of fixed ms per scan by layout. It is a Mermaid xychart, which pull-request and
// job-summary pages render; a plain table under each carries the same figures for the
// renderers that show the chart's source instead.
func charts(b *strings.Builder, r *Result) {
	flagged := map[[2]string]bool{} // (file, table) with a segment finding
	for _, f := range r.Findings {
		if f.Waiver == nil && (f.Rule == rules.ScanOverhead.ID || f.Rule == rules.TruncatedSegments.ID) {
			flagged[[2]string{f.File, f.Table}] = true
		}
	}
	drawn := 0
	for _, f := range r.Files {
		for _, t := range f.Tables {
			if drawn == maxCharts || !flagged[[2]string{f.Name, t.Name}] {
				continue
			}
			bars := chartBars(rowReport(t).Layouts)
			if len(bars) < 2 {
				continue
			}
			if drawn == 0 {
				b.WriteString("#### Fixed ms per scan by layout\n\n")
			}
			drawn++
			chart(b, t.Name, bars, rowReport(t).ScanOverheadBudgetMs)
		}
	}
}

// chart writes one xychart with its y axis from 0, each bar's value in its x label and
// the budget as a line across the bars, then the table of the same figures.
func chart(b *strings.Builder, table string, bars []bar, budget *float64) {
	labels := make([]string, len(bars))
	values := make([]string, len(bars))
	top := 0.0
	for i, x := range bars {
		labels[i] = chartString(x.key + " " + units.Ms(x.fixedMs) + " ms")
		values[i] = chartNumber(x.fixedMs)
		top = max(top, x.fixedMs)
	}
	title := table + ": fixed ms per scan"
	var line []string
	if budget != nil {
		top = max(top, *budget)
		title += ", budget " + units.Ms(*budget) + " ms (line)"
		for range bars {
			line = append(line, chartNumber(*budget))
		}
	}
	fmt.Fprintf(b, "```mermaid\nxychart-beta\n    title %s\n    x-axis [%s]\n    y-axis \"fixed ms per scan\" 0 --> %s\n    bar [%s]\n",
		chartString(title), strings.Join(labels, ", "), chartNumber(niceCeil(top*1.05)), strings.Join(values, ", "))
	if line != nil {
		fmt.Fprintf(b, "    line [%s]\n", strings.Join(line, ", "))
	}
	b.WriteString("```\n\n")
	share := budget != nil && *budget > 0
	b.WriteString("| bar | layout | fixed ms per scan |")
	if share {
		b.WriteString(" of the budget |")
	}
	b.WriteString("\n|---|---|--:|")
	if share {
		b.WriteString("--:|")
	}
	b.WriteString("\n")
	for _, x := range bars {
		fmt.Fprintf(b, "| %s | %s | %s |", mdEscape(x.key), mdEscape(x.label), units.Ms(x.fixedMs))
		if share {
			fmt.Fprintf(b, " %s |", units.Pct(x.fixedMs / *budget))
		}
		b.WriteString("\n")
	}
	b.WriteString("\n")
}

// chartString quotes s for the chart: one visible line (escape.Text) with no double
// quote, which would end the chart's string early.
func chartString(s string) string {
	return `"` + strings.ReplaceAll(escape.Text(s), `"`, "'") + `"`
}

// chartNumber is a chart value to a tenth, so a 1.5 ms bar is not drawn as 2.
func chartNumber(x float64) string {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return "0"
	}
	return strconv.FormatFloat(math.Round(x*10)/10, 'f', -1, 64)
}

// niceCeil is the smallest of 1, 1.2, 1.5, 2, 2.5, 3, 4, 5, 6, 8 times a power of ten
// that is at least x: a round top for the y axis (common practice).
func niceCeil(x float64) float64 {
	if !(x > 0) || math.IsInf(x, 0) {
		return 1
	}
	p := math.Pow(10, math.Floor(math.Log10(x)))
	for _, m := range []float64{1, 1.2, 1.5, 2, 2.5, 3, 4, 5, 6, 8, 10} {
		if m*p >= x*(1-1e-12) {
			return m * p
		}
	}
	return 10 * p
}

// chartBars is today's layout, the recommended one, then the members of the Pareto front
// that scan faster than today, by fewest ms; nil without a sweep. Their keys are
// "today", "rec." and letters by place, short enough that x labels do not overlap.
func chartBars(l *analysis.Layouts) []bar {
	if l == nil {
		return nil
	}
	label := func(key string, f analysis.LayoutFigure) bar {
		return bar{key: key, label: f.Label + " @" + units.Count(f.SegmentRows), fixedMs: f.FixedMs}
	}
	bars := []bar{label("today", l.Today)}
	if l.Recommended != nil {
		bars = append(bars, label("rec.", *l.Recommended))
	}
	var faster []analysis.LayoutFigure
	for _, f := range l.Front {
		if f.FixedMs < l.Today.FixedMs {
			faster = append(faster, f)
		}
	}
	sort.SliceStable(faster, func(a, b int) bool { return faster[a].FixedMs < faster[b].FixedMs })
	for _, f := range faster {
		if len(bars) == maxBars {
			break
		}
		bars = append(bars, label(string(rune('A'+len(bars))), f))
	}
	if len(bars) < 2 {
		return nil
	}
	return bars
}
