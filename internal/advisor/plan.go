package advisor

import (
	"github.com/scangate/scangate/schema"
)

// TablePlan is what `scangate plan` shows about one table from the advisor: its sweep,
// the forecast of today's layout and of the recommended one, and the layout that holds
// every budget to the end of the horizon (analysis.Model.Plans builds it, with the
// recommendation check quotes).
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
