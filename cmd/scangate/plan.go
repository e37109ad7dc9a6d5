package main

import (
	"github.com/spf13/cobra"

	"github.com/scangate/scangate/internal/advisor"
	"github.com/scangate/scangate/internal/report"
	"github.com/scangate/scangate/internal/run"
	"github.com/scangate/scangate/schema"
)

func newPlan() *cobra.Command {
	var o run.PlanOptions
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
			if cmd.Flags().Changed("horizon") {
				o.Horizon = &horizon
			}
			o.Paths, o.Limits = args, limits
			o.Stdin, o.Stdout, o.Stderr = cmd.InOrStdin(), cmd.OutOrStdout(), cmd.ErrOrStderr()
			return exitFor(run.Clean, run.Plan(o))
		},
	}
	f := cmd.Flags()
	f.StringVar(&o.Table, "table", "", "plan only this table")
	f.StringVar(&o.SegmentRows, "segment-rows", "", "segment capacities to try, comma-separated counts (default 1Mi,2Mi,4Mi,8Mi,16Mi, doubled up to engine.max_segment_rows while no layout fits every budget without a warning; today's is always added)")
	f.BoolVar(&o.Fixed, "fixed-segment-rows", false, "the deployment cannot change engine.segment_rows: recommend partition changes only")
	f.StringVar(&o.Today, "today", "", "the date the forecast counts from, YYYY-MM-DD (default: today, UTC)")
	f.IntVar(&horizon, "horizon", advisor.ForecastMonths, "months to forecast (default: the budget-forecast rule's horizon_months from the project config, else 12)")
	f.StringVar(&o.Config, "config", "", "project config to use (default: the nearest "+schema.ConfigFile+" from the first path up to the repository root)")
	f.StringArrayVar(&o.Formats, "format", nil, "report format NAME or NAME=FILE ("+report.NameList(report.PlanReport)+"); repeatable (default text)")
	f.StringVar(&o.Output, "output", "", "write the report that would go to standard output to this file instead (atomically)")
	f.StringVar(&o.SVG, "svg", "", "also draw segment fill and the sweep's front per table to this SVG file (the same as --format svg=FILE)")
	return cmd
}
