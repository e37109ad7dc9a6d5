package report

import (
	"fmt"
	"math"
	"strings"
)

// maxCharts keeps the Markdown summary short enough for a job page.
const maxCharts = 3

// charts draws, for the first tables with a segment finding, a bar chart of fixed ms per
// scan by layout (rules.Table.Bars). It is a Mermaid xychart, which pull-request and
// job-summary pages render.
func charts(b *strings.Builder, r *Result) {
	drawn := 0
	for _, f := range r.Files {
		for _, t := range f.Tables {
			if drawn == maxCharts || len(t.Bars) < 2 {
				continue
			}
			if drawn == 0 {
				b.WriteString("#### Fixed ms per scan by layout\n\n")
			}
			drawn++
			labels := make([]string, len(t.Bars))
			values := make([]string, len(t.Bars))
			for i, bar := range t.Bars {
				labels[i] = fmt.Sprintf("%q", bar.Label)
				values[i] = fmt.Sprintf("%.0f", math.Round(bar.FixedMs))
			}
			fmt.Fprintf(b, "```mermaid\nxychart-beta\n    title %q\n    x-axis [%s]\n    y-axis \"fixed ms per scan\"\n    bar [%s]\n```\n\n",
				t.Spec.Name+" (today first)", strings.Join(labels, ", "), strings.Join(values, ", "))
		}
	}
}
