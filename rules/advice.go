package rules

import (
	"github.com/scangate/scangate/internal/advisor"
	"github.com/scangate/scangate/schema"
)

// advice is the advisor's view of one manifest, shared by its tables so the figures
// of the tables a what-if leaves alone are computed once per run.
type advice struct {
	model  *advisor.Model
	sweeps map[int]*advisor.Sweep // by table index; a cache, never ranged over
}

func newAdvice(m *schema.Manifest) *advice {
	return &advice{model: advisor.NewModel(m), sweeps: map[int]*advisor.Sweep{}}
}

// sweep is the advisor's sweep of the table with the default capacities, the same one
// `scangate plan` prints without flags (with the project's warning levels, which plan
// takes at their defaults); nil for a table built outside Analyze.
func (t *Table) sweep() *advisor.Sweep {
	if t.advice == nil {
		return nil
	}
	if sw, ok := t.advice.sweeps[t.index]; ok {
		return sw
	}
	sw := t.advice.model.Sweep(t.index, advisor.Settings{Levels: levels(t.Config)})
	t.advice.sweeps[t.index] = sw
	return sw
}

// recommended words the sweep's pick as a hint, "<change>: <effect>", when it is a
// change that cuts segments. fits is false when nothing fits every budget and the
// pick is only the closest; c is the pick.
func (t *Table) recommended() (hint string, c *advisor.Candidate, fits, ok bool) {
	sw := t.sweep()
	if sw == nil || sw.Today < 0 {
		return "", nil, false, false
	}
	c, fits, ok = sw.Pick()
	if !ok || c.Today() || c.Layout.Segments >= t.Layout.Segments {
		return "", nil, false, false
	}
	effect := advisor.Effect(&sw.Candidates[sw.Today], c)
	if fits {
		return c.Change + ": " + effect, c, true, true
	}
	return "no layout tried fits every budget; the closest is to " + c.Change + ": " + effect, c, false, true
}

// levels are the rules' warning thresholds as the project sets them, so the advisor
// recommends a layout the rules stay quiet about.
func levels(c Config) advisor.Levels {
	return advisor.Levels{
		OverheadWarnShare: c.Value(scanOverheadID, overheadWarnShare),
		ScanWarnShare:     c.Value(scanTimeID, scanWarnShare),
		TruncWarnMin:      c.Value(truncatedSegmentsID, truncWarnMin),
		TruncWarnShare:    c.Value(truncatedSegmentsID, truncWarnShare),
		PartitionLimit:    c.Value(partitionCountID, partitionLimit),
		HorizonMonths:     int(c.Value(budgetForecastID, forecastHorizon)),
	}
}
