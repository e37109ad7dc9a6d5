package analysis

import (
	"fmt"
	"strconv"

	"github.com/scangate/scangate/internal/advisor"
	"github.com/scangate/scangate/internal/units"
)

// Sweep is the advisor's sweep of the table with the default capacities and the model's
// warning levels, pruned to what check reads (advisor.Settings.Prune: the same pick,
// closest layout, alternative and front as the sweep `scangate plan` prints without
// flags, FullSweep); nil for a table built outside Analyze or once the model is settled.
func (t *Table) Sweep() *advisor.Sweep {
	if t.swept || t.model == nil {
		return t.sweep
	}
	t.swept, t.pruned = true, true
	t.sweep = t.model.advisor.Sweep(t.Index, advisor.Settings{Levels: t.model.levels, Prune: true, Lean: !t.model.Charted})
	return t.sweep
}

// FullSweep is Sweep with every candidate figured in full, as plan prints them; it
// becomes the table's sweep when none was made yet.
func (t *Table) FullSweep() *advisor.Sweep {
	if t.swept && !t.pruned || t.model == nil {
		return t.sweep
	}
	sw := t.model.advisor.Sweep(t.Index, advisor.Settings{Levels: t.model.levels})
	if !t.swept {
		t.sweep, t.swept = sw, true
	}
	return sw
}

// Recommendation is the one change the analysis proposes for a table: the sweep's pick
// when it is a layout other than today's. Every rule's hint, plan,
// diff and every report quote it.
type Recommendation struct {
	// Candidate is a copy of the sweep's pick, kept when the model is settled.
	Candidate *advisor.Candidate
	Effect    string // against today's layout: "730 -> 38 partitions, 730 -> 305 segments, -638 ms per scan"
	// Fits is false when nothing fits every budget and the pick is only the closest.
	Fits bool
	// Horizon is the months ahead the recommendation is judged over (the
	// budget-forecast rule's horizon_months); HoldsMonths how many of them it keeps
	// every budget (Horizon when it holds throughout, -1 when it breaks one today);
	// HoldsThrough the month it holds through, "2027-03", "" when it breaks one today.
	Horizon      int
	HoldsMonths  int
	HoldsThrough string
	// Growth is set when some table of the model grows, so the horizon says something.
	Growth bool
}

// Hint words the recommendation as a finding's hint: "<change>: <effect>", and, when
// the model grows, until when it holds every budget and over which horizon.
func (r Recommendation) Hint() string {
	h := r.Candidate.Change + ": " + r.Effect
	if !r.Fits {
		h = "no layout tried fits every budget; the closest is to " + h
	}
	if r.Growth && r.HoldsThrough != "" {
		h += "; " + r.Holds()
	}
	return h
}

// Holds says until when the recommendation keeps every budget, with the horizon:
// "holds every budget through 2027-03 (12-month horizon)".
func (r Recommendation) Holds() string {
	switch {
	case r.HoldsMonths < 0:
		return "breaks a budget today"
	case r.HoldsMonths < r.Horizon:
		return "holds every budget only through " + r.HoldsThrough + " (" + strconv.Itoa(r.Horizon) + "-month horizon)"
	}
	return "holds every budget through " + r.HoldsThrough + " (" + strconv.Itoa(r.Horizon) + "-month horizon)"
}

// Recommended is the table's recommendation, computed once; ok is false when there is
// none: the sweep keeps today's layout or finds nothing nearer the budgets.
func (t *Table) Recommended() (r Recommendation, ok bool) {
	if t.recDone {
		return t.rec, t.rec.Candidate != nil
	}
	sw := t.Sweep()
	if sw == nil {
		return Recommendation{}, false // settled before anyone asked, or built outside Analyze
	}
	t.recDone = true
	t.rec, t.keep = recommendationOf(t, sw, t.model.levels)
	return t.rec, t.rec.Candidate != nil
}

// Advise computes the table's recommendation for a report that prints it beside every
// table, sweeping only as far as the pick needs when no rule asked for the sweep
// (advisor.Settings.PickOnly): the same recommendation at a fraction of the cost for a
// table whose layout is fine today. The sweep is not kept, so Layouts stays nil, and
// it is lean (advisor.Settings.Lean): nothing reads its front.
func (t *Table) Advise() {
	if t.recDone || t.swept || t.model == nil {
		t.Recommended()
		return
	}
	sw := t.model.advisor.Sweep(t.Index, advisor.Settings{Levels: t.model.levels, PickOnly: true, Prune: true, Lean: true})
	t.recDone = true
	t.rec, t.keep = recommendationOf(t, sw, t.model.levels)
}

// recommendationOf words the pick of sweep sw of table t with levels lv; keep says why
// there is none.
func recommendationOf(t *Table, sw *advisor.Sweep, lv advisor.Levels) (Recommendation, string) {
	if sw.Today < 0 {
		return Recommendation{}, ""
	}
	c, fits, ok := sw.Pick()
	switch {
	case !ok:
		raise := "a budget"
		if sw.Largest < sw.MaxSegmentRows {
			raise = "a budget; larger segments would not help" // the sweep stopped where they stop helping
		} else {
			raise += " or engine.max_segment_rows"
		}
		return Recommendation{}, fmt.Sprintf("no layout tried fits every budget, or comes nearer to them than today's without breaking another or making one worse (segment sizes up to %s tried); raise %s",
			units.Count(sw.Largest), raise)
	case c.Today():
		keep := "the recommendation keeps today's layout: it fits every budget"
		if len(c.Warnings) > 0 {
			keep += " and no layout tried leaves fewer warnings"
		}
		if md := t.model.advisor; md.Grows() {
			h := Recommendation{Horizon: lv.Horizon()}
			h.HoldsMonths = md.CandidateHolds(t.Index, c, h.Horizon)
			h.HoldsThrough = holdsThrough(lv, h.HoldsMonths)
			keep += "; it " + h.Holds()
		}
		return Recommendation{}, keep
	}
	pick := *c
	now := &sw.Candidates[sw.Today]
	r := Recommendation{Candidate: &pick, Effect: advisor.Effect(now, c), Fits: fits, Horizon: lv.Horizon(), HoldsMonths: -1}
	if a, b := now.Layout.Partitions, c.Layout.Partitions; a != b {
		r.Effect = fmt.Sprintf("%s -> %s partitions, %s", units.Num(int64(a)), units.Num(int64(b)), r.Effect)
	}
	md := t.model.advisor
	r.Growth = md.Grows()
	if fits {
		r.HoldsMonths = md.CandidateHolds(t.Index, c, r.Horizon)
		r.HoldsThrough = holdsThrough(lv, r.HoldsMonths)
	}
	return r, ""
}

// holdsThrough is the month a layout that holds for months months holds through,
// counted from the levels' date; "" when it breaks a budget today or without a date.
func holdsThrough(lv advisor.Levels, months int) string {
	if months < 0 || lv.Today.IsZero() {
		return ""
	}
	return advisor.Month(advisor.AddMonths(lv.Today, months))
}

// Advice is the table's one first hint, the same under every finding of the table: its
// recommendation, or why today's layout is kept; "" for a table built outside Analyze.
func (t *Table) Advice() string {
	if r, ok := t.Recommended(); ok {
		return r.Hint()
	}
	return t.keep
}

// Alternative is a second choice at today's segment size, worded as a hint and marked
// as such, never a rival to the recommendation: when the recommendation changes the
// engine's segment size, the layout ranked first among those that fit every budget at
// today's size (for a deployment that cannot change the engine); when today's layout
// is kept, the fitting layout at today's size that ends at least half of the excess
// segments and keeps the most partitions (what the truncated-segments note points at).
// "" when there is none.
func (t *Table) Alternative() string {
	sw := t.Sweep()
	if sw == nil || sw.Today < 0 {
		return ""
	}
	s := t.Engine.SegmentRows
	now := &sw.Candidates[sw.Today]
	r, ok := t.Recommended()
	switch {
	case ok && r.Candidate.Engine:
		if c := sw.BestAt(s, s); c != nil && !c.Today() {
			return fmt.Sprintf("alternative if engine.segment_rows must stay %s: %s: %s", units.Count(s), c.Change, advisor.Effect(now, c))
		}
	case !ok:
		if best := sw.EndingExcess(s); best != nil {
			return fmt.Sprintf("alternative, not the recommendation, ending most of the excess: %s: %s", best.Change, advisor.Effect(now, best))
		}
	}
	return ""
}

// Layouts is a sweep in brief: today's layout, the recommended one and the members of
// the Pareto front (fixed ms per scan against refresh memory), each with its label,
// segment capacity and fixed ms per scan. Reports chart it; unlike the sweep, it stays
// when the model is settled.
type Layouts struct {
	Today       LayoutFigure
	Recommended *LayoutFigure  // the recommendation (or closest layout); nil when today's is kept
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
	// The recommendation, the closest layout when none fits, as the hints quote it.
	rec := sw.Recommended
	if rec < 0 {
		rec = sw.Closest
	}
	if rec >= 0 && rec != sw.Today {
		r := fig(rec)
		l.Recommended = &r
	}
	for i, c := range sw.Candidates {
		if c.Front && i != sw.Today && i != rec {
			l.Front = append(l.Front, fig(i))
		}
	}
	return l
}
