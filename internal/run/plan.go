package run

import (
	"fmt"
	"io"

	"github.com/scangate/scangate/internal/advisor"
	"github.com/scangate/scangate/schema"
)

// PlanOptions are plan's flags and arguments.
type PlanOptions struct {
	Paths       []string // as check's
	Table       string   // --table; "": every table
	SegmentRows string   // --segment-rows: capacities to try, comma-separated counts
	Fixed       bool     // --fixed-segment-rows
	Horizon     *int     // --horizon months; nil when not given (the config's, else 12)
	Today       string   // --today, YYYY-MM-DD; "": the current date, UTC
	Config      string   // --config; "": the nearest project config
	Formats     []string // --format NAME or NAME=FILE
	Output      string   // --output
	SVG         string   // --svg FILE
	Limits      schema.Limits
	Stdin       io.Reader
	Stdout      io.Writer
	Stderr      io.Writer
}

// Plan runs `scangate plan`: each picked table's layout, sweep, recommendation and
// forecast, written to every destination. Manifests that break the schema have their
// problems printed on stderr and fail the plan.
func Plan(o PlanOptions) error {
	set, err := planSettings(o.SegmentRows, o.Fixed, o.Horizon)
	if err != nil {
		return err
	}
	proj, cfg, err := ProjectConfig(o.Stderr, o.Config, o.Paths, o.Today, o.Limits)
	if err != nil {
		return err
	}
	lv := cfg.Levels() // as check ranks layouts; --horizon judges them over its own
	if o.Horizon != nil {
		lv.HorizonMonths = *o.Horizon
	}
	dests, err := PlanFormats(o.Formats, o.Output, o.SVG)
	if err != nil {
		return err
	}
	loaded, err := LoadManifests(o.Paths, o.Stdin, o.Stderr, o.Limits, proj.Config, proj.Keep)
	if err != nil {
		return err
	}
	if err := GuardOutputs(dests, append(LoadedFiles(loaded), proj.Files()...)); err != nil {
		return err
	}
	picked, err := PickTablesIn(loaded, o.Table)
	if err != nil {
		return err
	}
	return Write(dests, PlanDoc(loaded, picked, set, lv), o.Stdout, false)
}

// planSettings are the sweep's settings from --segment-rows and --fixed-segment-rows,
// once --segment-rows and --horizon (nil when not given) are known to be usable.
func planSettings(segRows string, fixed bool, horizon *int) (advisor.Settings, error) {
	set := advisor.Settings{FixedSegmentRows: fixed}
	var err error
	if set.Capacities, err = schema.ParseCapacities(segRows); err != nil {
		return set, fmt.Errorf("--segment-rows %q: %v", segRows, err)
	}
	if horizon != nil && (*horizon < 1 || *horizon > advisor.MaxHorizonMonths) {
		return set, fmt.Errorf("--horizon %d: give a number of months from 1 to %d", *horizon, advisor.MaxHorizonMonths)
	}
	return set, nil
}
