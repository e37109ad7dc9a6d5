package report

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/rules/advisor"
)

// maxCharts and maxBars keep the Markdown summary short enough for a job page.
const (
	maxCharts = 3
	maxBars   = 6
)

// charts draws, for the tables with an active segment finding, a bar chart of fixed ms
// per scan: today's layout, the recommended one and the faster rest of the Pareto front. It
// is a Mermaid xychart, which the pull-request and job-summary pages render.
func charts(b *strings.Builder, r *Result) {
	drawn := 0
	for _, f := range r.Files {
		for _, t := range f.Tables {
			if drawn == maxCharts || !hasSegmentFinding(r, f.Name, t.Spec.Name) {
				continue
			}
			sw := t.Sweep()
			if sw == nil || sw.Today < 0 {
				continue
			}
			bars := chartCandidates(sw)
			if len(bars) < 2 {
				continue
			}
			if drawn == 0 {
				b.WriteString("#### Fixed ms per scan by layout\n\n")
			}
			drawn++
			labels := make([]string, len(bars))
			values := make([]string, len(bars))
			for i, c := range bars {
				labels[i] = fmt.Sprintf("%q", chartLabel(sw, c))
				values[i] = fmt.Sprintf("%.0f", math.Round(c.Layout.FixedMs))
			}
			fmt.Fprintf(b, "```mermaid\nxychart-beta\n    title %q\n    x-axis [%s]\n    y-axis \"fixed ms per scan\"\n    bar [%s]\n```\n\n",
				t.Spec.Name+" (today first)", strings.Join(labels, ", "), strings.Join(values, ", "))
		}
	}
}

func hasSegmentFinding(r *Result, file, table string) bool {
	for _, f := range r.Findings {
		if f.File == file && f.Table == table && !f.Accepted() && (f.Rule == rules.ScanOverhead.ID || f.Rule == rules.TruncatedSegments.ID) {
			return true
		}
	}
	return false
}

// chartCandidates is today's layout, the recommendation, then front members by fewest
// ms, without repeats.
func chartCandidates(sw *advisor.Sweep) []*advisor.Candidate {
	out := []*advisor.Candidate{&sw.Candidates[sw.Today]}
	seen := map[int]bool{sw.Today: true}
	if sw.Recommended >= 0 && !seen[sw.Recommended] {
		out = append(out, &sw.Candidates[sw.Recommended])
		seen[sw.Recommended] = true
	}
	var front []int
	for i := range sw.Candidates {
		// Front members that scan faster than today; the slower ones trade ms for memory.
		if sw.Candidates[i].Front && !seen[i] && sw.Candidates[i].Layout.FixedMs < out[0].Layout.FixedMs {
			front = append(front, i)
		}
	}
	sort.SliceStable(front, func(a, b int) bool {
		return sw.Candidates[front[a]].Layout.FixedMs < sw.Candidates[front[b]].Layout.FixedMs
	})
	for _, i := range front {
		if len(out) == maxBars {
			break
		}
		out = append(out, &sw.Candidates[i])
	}
	return out
}

func chartLabel(sw *advisor.Sweep, c *advisor.Candidate) string {
	label := c.Label + " @" + rules.Rows(c.SegmentRows)
	switch {
	case c.Today():
		label = "today: " + label
	case sw.Recommended >= 0 && &sw.Candidates[sw.Recommended] == c:
		label = "recommended: " + label
	}
	return strings.ReplaceAll(label, `"`, "'")
}
