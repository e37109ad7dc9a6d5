package analysis

import (
	"github.com/scangate/scangate/internal/advisor"
)

// TablePlan is what `scangate plan` shows about one table: the advisor's plan (sweep,
// forecasts) and the recommendation worded as check words it.
type TablePlan struct {
	advisor.TablePlan
	Table *Table          // nil when the table could not be laid out
	Rec   *Recommendation // nil when today's layout is kept
	Keep  string          // why today's layout is kept, worded as a hint
}

// Plans builds the plans of the tables idx of the model. With the default settings
// (no capacity list, the segment size free, the model's own levels) each table's sweep
// and recommendation are the ones check quotes, computed once; other settings sweep
// again with them. Forecasts run for horizon months from the levels' date.
func (md *Model) Plans(idx []int, set advisor.Settings, horizon int) []TablePlan {
	byIndex := make(map[int]*Table, len(md.Tables))
	for _, t := range md.Tables {
		byIndex[t.Index] = t
	}
	def := set.Capacities == nil && !set.FixedSegmentRows && (set.Levels == advisor.Levels{} || set.Levels == md.levels)
	lv := md.levels
	if !def && set.Levels != (advisor.Levels{}) {
		lv = set.Levels
	}
	today := lv.Today
	var out []TablePlan
	for _, i := range idx {
		spec := md.Manifest.Tables[i]
		p := TablePlan{TablePlan: advisor.TablePlan{Index: i, Spec: spec, RefreshBudget: md.advisor.RefreshBudget()}}
		if pk, ok := md.advisor.RoutinePeak(); ok {
			p.RoutinePeak = &pk
		}
		t := byIndex[i]
		if t == nil {
			p.Problems = "its partitions cannot be laid out"
			out = append(out, p)
			continue
		}
		p.Table = t
		var r Recommendation
		if def {
			p.Sweep = t.FullSweep()
			r, _ = t.Recommended()
			p.Keep = t.keep
		} else {
			set.Levels = lv
			p.Sweep = md.advisor.Sweep(i, set)
			r, p.Keep = recommendationOf(t, p.Sweep, lv)
		}
		if r.Candidate != nil {
			p.Rec = &r
		}
		if p.Sweep.Today < 0 {
			p.Problems = "its partitions cannot be laid out"
			out = append(out, p)
			continue
		}
		p.Now, _ = md.advisor.Forecast(i, spec, md.Manifest.Engine.SegmentRows, today, horizon)
		if c, _, ok := p.Sweep.Pick(); ok && !c.Today() {
			p.TablePlan.Rec, _ = md.advisor.Forecast(i, *c.Spec, c.SegmentRows, today, horizon)
		}
		if spec.GrowthPerYear != 0 {
			p.Holds = md.advisor.Holds(p.Sweep, horizon)
		}
		out = append(out, p)
	}
	return out
}
