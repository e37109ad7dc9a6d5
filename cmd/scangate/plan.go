package main

import (
	"fmt"

	"github.com/spf13/cobra"

	"github.com/scangate/scangate/internal/advisor"
	"github.com/scangate/scangate/internal/report"
	"github.com/scangate/scangate/internal/run"
	"github.com/scangate/scangate/schema"
)

// maxHorizon bounds --horizon.
const maxHorizon = advisor.MaxHorizonMonths

func newPlan() *cobra.Command {
	var table, segRows, today, svg, configFile, output string
	var formats []string
	var fixed bool
	var horizon int
	cmd := &cobra.Command{
		Use:   "plan [PATH...]",
		Short: "Show each table's layout, a what-if sweep, the recommended layout and a growth forecast",
		Long: "plan prints, for each table (or --table), its segment layout today, a what-if sweep\n" +
			"with the Pareto front of fixed ms per scan against refresh memory, the recommended\n" +
			"layout (the one check quotes) with its manifest snippet, and a monthly forecast.\n" +
			"PATH is a file, a directory (its manifests, as check finds them) or - for standard\n" +
			"input; the default is the current directory. Formats: " + report.NameList(report.PlanReport) + "\n" +
			"(--format NAME[=FILE], repeatable). Exit codes: 0 planned, 2 invalid input or usage.",
		Example: "  scangate plan testdata/demo/meter-telemetry.yaml --table meter_reads\n" +
			"  scangate plan models/ --format json=plan.json\n" +
			"  scangate plan model.yaml --segment-rows 8Mi,16Mi,32Mi --horizon 36\n" +
			"  scangate plan model.yaml --fixed-segment-rows --svg plan.svg",
		RunE: func(cmd *cobra.Command, args []string) error {
			set := advisor.Settings{FixedSegmentRows: fixed}
			var err error
			if set.Capacities, err = schema.ParseCapacities(segRows); err != nil {
				return usageError(fmt.Errorf("--segment-rows %q: %v", segRows, err))
			}
			if cmd.Flags().Changed("horizon") && (horizon < 1 || horizon > maxHorizon) {
				return usageError(fmt.Errorf("--horizon %d: give a number of months from 1 to %d", horizon, maxHorizon))
			}
			proj, cfg, err := projectConfig(cmd, configFile, args, today)
			if err != nil {
				return err
			}
			lv := cfg.Levels() // as check ranks layouts; --horizon judges them over its own
			if cmd.Flags().Changed("horizon") {
				lv.HorizonMonths = horizon
			}
			dests, err := run.PlanFormats(formats, output, svg)
			if err != nil {
				return usageError(err)
			}
			loaded, err := run.LoadManifests(args, cmd.InOrStdin(), cmd.ErrOrStderr(), limits, proj.Config, proj.Keep)
			if err != nil {
				return usageError(err)
			}
			if err := run.GuardOutputs(dests, append(run.LoadedFiles(loaded), proj.Files()...)); err != nil {
				return usageError(err)
			}
			picked, err := run.PickTablesIn(loaded, table)
			if err != nil {
				return usageError(err)
			}
			doc := run.PlanDoc(loaded, picked, set, lv)
			if err := run.Write(dests, doc, cmd.OutOrStdout(), false); err != nil {
				return usageError(err)
			}
			return nil
		},
	}
	f := cmd.Flags()
	f.StringVar(&table, "table", "", "plan only this table")
	f.StringVar(&segRows, "segment-rows", "", "segment capacities to try, comma-separated counts (default 1Mi,2Mi,4Mi,8Mi,16Mi, doubled up to engine.max_segment_rows while no layout fits every budget without a warning; today's is always added)")
	f.BoolVar(&fixed, "fixed-segment-rows", false, "the deployment cannot change engine.segment_rows: recommend partition changes only")
	f.StringVar(&today, "today", "", "the date the forecast counts from, YYYY-MM-DD (default: today, UTC)")
	f.IntVar(&horizon, "horizon", advisor.ForecastMonths, "months to forecast (default: the budget-forecast rule's horizon_months from the project config, else 12)")
	f.StringVar(&configFile, "config", "", "project config to use (default: the nearest "+schema.ConfigFile+" from the first path up to the repository root)")
	f.StringArrayVar(&formats, "format", nil, "report format NAME or NAME=FILE ("+report.NameList(report.PlanReport)+"); repeatable (default text)")
	f.StringVar(&output, "output", "", "write the report that would go to standard output to this file instead (atomically)")
	f.StringVar(&svg, "svg", "", "also draw segment fill and the sweep's front per table to this SVG file (the same as --format svg=FILE)")
	return cmd
}
