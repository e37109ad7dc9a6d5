package main

import (
	"fmt"

	"github.com/spf13/cobra"

	"github.com/scangate/scangate/internal/advisor"
	"github.com/scangate/scangate/internal/analysis"
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
		Long: "plan prints, for each table of the manifests (or --table), its segment layout today,\n" +
			"a what-if sweep over segment capacities and partition layouts with the Pareto front\n" +
			"of fixed ms per scan against refresh memory, the recommended layout with the\n" +
			"manifest snippet that produces it, and a month-by-month forecast of when growth\n" +
			"breaks each budget. The recommendation is the one check quotes in its hints.\n" +
			"PATH is a file, a directory (every manifest below it, as check finds them), or -\n" +
			"for standard input; the default is the current directory.\n\n" +
			"Formats: " + report.NameList(report.PlanReport) + ". --format NAME writes to standard\n" +
			"output (or to --output), --format NAME=FILE to a file; repeat it for several.\n" +
			"Exit codes: 0 planned, 2 invalid input or usage.",
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
			// The project's warning levels and horizon, as check ranks layouts by; a
			// --horizon of its own plans (and judges the recommendation) over that.
			lv := cfg.Levels()
			if cmd.Flags().Changed("horizon") {
				lv.HorizonMonths = horizon
			}
			outs := append([]string(nil), formats...)
			if len(outs) == 0 {
				outs = []string{"text"}
			}
			if svg != "" {
				outs = append(outs, "svg="+svg)
			}
			dests, err := run.ParseFormats(report.PlanReport, outs, output, nil)
			if err != nil {
				return usageError(err)
			}
			loaded, err := run.LoadManifests(args, cmd.InOrStdin(), cmd.ErrOrStderr(), limits, proj.Config, proj.Keep)
			if err != nil {
				return usageError(err)
			}
			var read []string
			for _, l := range loaded {
				read = append(read, l.Manifest.File)
			}
			if err := run.GuardOutputs(dests, append(read, proj.Files()...)); err != nil {
				return usageError(err)
			}
			picked, err := run.PickTablesIn(loaded, table)
			if err != nil {
				return usageError(err)
			}
			doc := &report.Plan{Version: run.ModuleVersion(), Today: lv.Today, Horizon: lv.Horizon()}
			set.Levels = lv
			for k, l := range loaded {
				if len(picked[k]) == 0 {
					continue
				}
				md := analysis.Analyze(l.Manifest, lv)
				doc.Files = append(doc.Files, report.PlanFile{Manifest: l.Manifest, URI: l.URI, Plans: md.Plans(picked[k], set, doc.Horizon)})
			}
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
