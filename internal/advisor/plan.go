package advisor

import (
	"time"

	"github.com/scangate/scangate/schema"
)

// TablePlan is everything `scangate plan` shows about one table: its sweep, the
// forecast of today's layout and of the recommended one, and the layout that holds
// every budget to the end of the horizon.
type TablePlan struct {
	Index    int
	Spec     schema.Table
	Sweep    *Sweep
	Now      *Forecast  // today's layout
	Rec      *Forecast  // the recommended (or closest) layout, when it differs
	Holds    *Candidate // a layout that holds every budget through the horizon
	Problems string     // why the table could not be laid out, if it could not

	RefreshBudget *float64 // the model's refresh-memory budget in bytes
	RoutinePeak   *float64 // the model's routine-refresh peak, nil when it is the full one (RoutinePeak)
}

// Plans builds the plans of the tables idx of m, forecasting from today for horizon
// months.
func Plans(m *schema.Manifest, idx []int, set Settings, today time.Time, horizon int) []TablePlan {
	md := NewModel(m)
	var out []TablePlan
	for _, i := range idx {
		p := TablePlan{Index: i, Spec: m.Tables[i], Sweep: md.Sweep(i, set), RefreshBudget: md.RefreshBudget()}
		if pk, ok := md.RoutinePeak(); ok {
			p.RoutinePeak = &pk
		}
		if p.Sweep.Today < 0 {
			p.Problems = "its partitions cannot be laid out"
			out = append(out, p)
			continue
		}
		p.Now, _ = md.Forecast(i, p.Spec, m.Engine.SegmentRows, today, horizon)
		if c, _, ok := p.Sweep.Pick(); ok && !c.Today() {
			p.Rec, _ = md.Forecast(i, c.Spec, c.SegmentRows, today, horizon)
		}
		if p.Spec.GrowthPerYear != 0 {
			p.Holds = md.Holds(p.Sweep, horizon)
		}
		out = append(out, p)
	}
	return out
}
