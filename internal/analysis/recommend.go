package analysis

import "github.com/scangate/scangate/internal/advisor"

// Sweep is the advisor's sweep of the table with the default capacities and the model's
// warning levels, the same one `scangate plan` prints without flags; nil for a table
// built outside Analyze or once the model is settled.
func (t *Table) Sweep() *advisor.Sweep {
	if t.swept || t.model == nil {
		return t.sweep
	}
	t.swept = true
	t.sweep = t.model.advisor.Sweep(t.Index, advisor.Settings{Levels: t.model.levels})
	return t.sweep
}

// Recommendation is the sweep's pick for a table, when it is a change that cuts
// segments.
type Recommendation struct {
	Candidate *advisor.Candidate
	Effect    string // against today's layout: "730 -> 302 segments, -642 ms per scan"
	// Fits is false when nothing fits every budget and the pick is only the closest.
	Fits bool
}

// Hint words the recommendation as a finding's hint: "<change>: <effect>".
func (r Recommendation) Hint() string {
	if r.Fits {
		return r.Candidate.Change + ": " + r.Effect
	}
	return "no layout tried fits every budget; the closest is to " + r.Candidate.Change + ": " + r.Effect
}

// Recommended is the sweep's pick; ok is false when there is none, when it keeps today's
// layout, or when it does not cut segments.
func (t *Table) Recommended() (r Recommendation, ok bool) {
	sw := t.Sweep()
	if sw == nil || sw.Today < 0 {
		return Recommendation{}, false
	}
	c, fits, ok := sw.Pick()
	if !ok || c.Today() || c.Layout.Segments >= t.Layout.Segments {
		return Recommendation{}, false
	}
	return Recommendation{Candidate: c, Effect: advisor.Effect(&sw.Candidates[sw.Today], c), Fits: fits}, true
}

// Layouts is a sweep in brief: today's layout, the recommended one and the members of
// the Pareto front (fixed ms per scan against refresh memory), each with its label,
// segment capacity and fixed ms per scan. Reports chart it; unlike the sweep, it stays
// when the model is settled.
type Layouts struct {
	Today       LayoutFigure
	Recommended *LayoutFigure  // nil without a recommendation or when it is today's
	Front       []LayoutFigure // in sweep order, without today's and the recommended one
}

// LayoutFigure is one layout of Layouts.
type LayoutFigure struct {
	Label       string
	SegmentRows int64
	FixedMs     float64
}

// Layouts is the table's sweep in brief, nil when it was never swept.
func (t *Table) Layouts() *Layouts {
	if t.settled {
		return t.kept
	}
	if !t.swept {
		return nil
	}
	return layoutsOf(t.sweep)
}

func layoutsOf(sw *advisor.Sweep) *Layouts {
	if sw == nil || sw.Today < 0 {
		return nil
	}
	fig := func(i int) LayoutFigure {
		c := &sw.Candidates[i]
		return LayoutFigure{Label: c.Label, SegmentRows: c.SegmentRows, FixedMs: c.Layout.FixedMs}
	}
	l := &Layouts{Today: fig(sw.Today)}
	if sw.Recommended >= 0 && sw.Recommended != sw.Today {
		r := fig(sw.Recommended)
		l.Recommended = &r
	}
	for i, c := range sw.Candidates {
		if c.Front && i != sw.Today && i != sw.Recommended {
			l.Front = append(l.Front, fig(i))
		}
	}
	return l
}
