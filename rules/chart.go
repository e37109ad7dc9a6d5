package rules

import (
	"sort"
	"strings"

	"github.com/scangate/scangate/internal/units"

	"github.com/scangate/scangate/internal/advisor"
)

// maxBars keeps a chart readable on a job page.
const maxBars = 6

// chartBars is today's layout, the recommended one, then the members of the Pareto front
// that scan faster than today, by fewest ms, without repeats; nil without a sweep.
func chartBars(sw *advisor.Sweep) []Bar {
	if sw == nil || sw.Today < 0 {
		return nil
	}
	picked := []int{sw.Today}
	if sw.Recommended >= 0 && sw.Recommended != sw.Today {
		picked = append(picked, sw.Recommended)
	}
	today := sw.Candidates[sw.Today].Layout.FixedMs
	var front []int
	for i, c := range sw.Candidates {
		if c.Front && i != sw.Today && i != sw.Recommended && c.Layout.FixedMs < today {
			front = append(front, i)
		}
	}
	sort.SliceStable(front, func(a, b int) bool {
		return sw.Candidates[front[a]].Layout.FixedMs < sw.Candidates[front[b]].Layout.FixedMs
	})
	for _, i := range front {
		if len(picked) == maxBars {
			break
		}
		picked = append(picked, i)
	}
	if len(picked) < 2 {
		return nil
	}
	bars := make([]Bar, len(picked))
	for k, i := range picked {
		c := &sw.Candidates[i]
		label := c.Label + " @" + units.Count(c.SegmentRows)
		switch {
		case i == sw.Today:
			label = "today: " + label
		case i == sw.Recommended:
			label = "recommended: " + label
		}
		bars[k] = Bar{Label: strings.ReplaceAll(label, `"`, "'"), FixedMs: c.Layout.FixedMs}
	}
	return bars
}
