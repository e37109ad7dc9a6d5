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
	var table, segRows, today, svg, configFile string
	var fixed bool
	var horizon int
	cmd := &cobra.Command{
		Use:   "plan MANIFEST",
		Short: "Show each table's layout, a what-if sweep, the recommended layout and a growth forecast",
		Long: "plan prints, for each table of one manifest (or --table), its segment layout today,\n" +
			"a what-if sweep over segment capacities and partition layouts with the Pareto front\n" +
			"of fixed ms per scan against refresh memory, the recommended layout with the\n" +
			"manifest snippet that produces it, and a month-by-month forecast of when growth\n" +
			"breaks each budget. MANIFEST is a file or - for standard input.\n" +
			"Exit codes: 0 planned, 2 invalid input or usage.",
		Example: "  scangate plan testdata/demo/meter-telemetry.yaml --table meter_reads\n" +
			"  scangate plan model.yaml --segment-rows 8Mi,16Mi,32Mi --horizon 36\n" +
			"  scangate plan model.yaml --fixed-segment-rows --svg plan.svg",
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			set := advisor.Settings{FixedSegmentRows: fixed}
			var err error
			if set.Capacities, err = schema.ParseCapacities(segRows); err != nil {
				return usageError(fmt.Errorf("--segment-rows %q: %v", segRows, err))
			}
			if horizon < 1 || horizon > maxHorizon {
				return usageError(fmt.Errorf("--horizon %d: give a number of months from 1 to %d", horizon, maxHorizon))
			}
			proj, cfg, err := projectConfig(cmd, configFile, args, today)
			if err != nil {
				return err
			}
			set.Levels = cfg.Levels() // the project's warning levels, as check ranks layouts
			outs := []string{"text"}
			if svg != "" {
				outs = append(outs, "svg="+svg)
			}
			dests, err := run.ParseFormats(report.PlanReport, outs, "", nil)
			if err != nil {
				return usageError(err)
			}
			if err := run.GuardTargets([]string{svg}, []string{"--svg " + svg}, append(args, proj.Files()...)); err != nil {
				return usageError(err)
			}
			m, err := run.LoadOne(args[0], cmd.InOrStdin(), cmd.ErrOrStderr(), limits, proj.Config)
			if err != nil {
				return usageError(err)
			}
			idx, err := run.PickTables(m, table)
			if err != nil {
				return usageError(err)
			}
			doc := &report.Plan{Manifest: m, Today: cfg.Today, Horizon: horizon}
			doc.Plans = advisor.Plans(m, idx, set, doc.Today, doc.Horizon)
			if err := run.Write(dests, doc, cmd.OutOrStdout(), false); err != nil {
				return usageError(err)
			}
			return nil
		},
	}
	f := cmd.Flags()
	f.StringVar(&table, "table", "", "plan only this table")
	f.StringVar(&segRows, "segment-rows", "", "segment capacities to try, comma-separated counts (default 1Mi,2Mi,4Mi,8Mi,16Mi; today's is always added)")
	f.BoolVar(&fixed, "fixed-segment-rows", false, "the deployment cannot change engine.segment_rows: recommend partition changes only")
	f.StringVar(&today, "today", "", "the date the forecast counts from, YYYY-MM-DD (default: today, UTC)")
	f.IntVar(&horizon, "horizon", 24, "months to forecast")
	f.StringVar(&configFile, "config", "", "project config to use (default: the nearest "+schema.ConfigFile+" from the manifest up to the repository root)")
	f.StringVar(&svg, "svg", "", "also draw segment fill and the sweep's front per table to this SVG file")
	return cmd
}
