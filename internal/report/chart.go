package report

import (
	"fmt"
	"math"
	"sort"
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

// bar is one layout in a chart.
type bar struct {
	label   string
	fixedMs float64
}

// charts draws, for the first tables with a segment finding that is not waived, a bar
// chart of fixed ms per scan by layout. It is a Mermaid xychart, which pull-request and
// job-summary pages render.
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
			if drawn == maxCharts || !flagged[[2]string{t.File, t.Spec.Name}] {
				continue
			}
			bars := chartBars(t.Layouts())
			if len(bars) < 2 {
				continue
			}
			if drawn == 0 {
				b.WriteString("#### Fixed ms per scan by layout\n\n")
			}
			drawn++
			labels := make([]string, len(bars))
			values := make([]string, len(bars))
			for i, bar := range bars {
				labels[i] = chartString(bar.label)
				values[i] = fmt.Sprintf("%.0f", math.Round(bar.fixedMs))
			}
			fmt.Fprintf(b, "```mermaid\nxychart-beta\n    title %s\n    x-axis [%s]\n    y-axis \"fixed ms per scan\"\n    bar [%s]\n```\n\n",
				chartString(t.Spec.Name+" (today first)"), strings.Join(labels, ", "), strings.Join(values, ", "))
		}
	}
}

// chartString quotes s for the chart: one visible line (escape.Text) with no double
// quote, which would end the chart's string early.
func chartString(s string) string {
	return `"` + strings.ReplaceAll(escape.Text(s), `"`, "'") + `"`
}

// chartBars is today's layout, the recommended one, then the members of the Pareto front
// that scan faster than today, by fewest ms; nil without a sweep.
func chartBars(l *analysis.Layouts) []bar {
	if l == nil {
		return nil
	}
	label := func(prefix string, f analysis.LayoutFigure) bar {
		s := prefix + f.Label + " @" + units.Count(f.SegmentRows)
		return bar{label: s, fixedMs: f.FixedMs}
	}
	bars := []bar{label("today: ", l.Today)}
	if l.Recommended != nil {
		bars = append(bars, label("recommended: ", *l.Recommended))
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
		bars = append(bars, label("", f))
	}
	if len(bars) < 2 {
		return nil
	}
	return bars
}
