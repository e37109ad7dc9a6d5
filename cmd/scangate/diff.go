package main

import (
	"github.com/spf13/cobra"

	"github.com/scangate/scangate/internal/change"
	"github.com/scangate/scangate/internal/report"
	"github.com/scangate/scangate/internal/run"
	"github.com/scangate/scangate/schema"
)

func newDiff() *cobra.Command {
	var o run.DiffOptions
	var maxMs float64
	var maxSegments int64
	cmd := &cobra.Command{
		Use:   "diff (--base REV [PATH...] | OLD NEW)",
		Short: "Show what a change does to segments and ms per scan, and gate it",
		Long: "diff checks the manifests on both sides of a change and compares them: each\n" +
			"table's partitions, segments, fill, fixed ms per scan and scan wall ms before,\n" +
			"after and the delta, the totals per model, and the findings the change\n" +
			"introduces, resolves, worsens, improves and keeps.\n\n" +
			"With --base REV it compares the manifests at git revision REV (read from git,\n" +
			"nothing is checked out) with the working tree; PATH selects them as check does.\n" +
			"Without --base it compares two files, or two directories, OLD and NEW.\n\n" +
			"Tables are matched by model and table name. A file whose path exists on one\n" +
			"side only is a rename when a file holding the same model exists at a path found\n" +
			"on the other side only. Findings are matched by fingerprint (rule, path, table,\n" +
			"subject; never the line). One on both sides is worsened when its severity or\n" +
			"graded figure rose (by more than --figure-threshold percent), improved the other way.\n\n" +
			"Exit codes: 1 when the change crosses --max-added-ms, --max-added-segments or\n" +
			"--fail-on-new; 2 when a file on either side breaks the schema, or on wrong usage;\n" +
			"0 otherwise. Formats: " + report.NameList(report.DiffReport) + " (NAME or NAME=FILE, as for check).\n" +
			"Without --format: text, plus github when GITHUB_ACTIONS=true.",
		Example: "  scangate diff --base origin/main\n" +
			"  scangate diff --base origin/main --max-added-ms 200 --fail-on-new error models/\n" +
			"  scangate diff --base HEAD~1 --format markdown=out/diff.md --format text\n" +
			"  scangate diff testdata/diff/before testdata/diff/after",
		RunE: func(cmd *cobra.Command, args []string) error {
			if cmd.Flags().Changed("max-added-ms") {
				o.MaxAddedMs = &maxMs
			}
			if cmd.Flags().Changed("max-added-segments") {
				o.MaxAddedSegments = &maxSegments
			}
			o.Paths, o.Limits = args, limits
			o.Stdin, o.Stdout, o.Stderr = cmd.InOrStdin(), cmd.OutOrStdout(), cmd.ErrOrStderr()
			return exitFor(run.Diff(cmd.Context(), o))
		},
	}
	f := cmd.Flags()
	f.StringVar(&o.Base, "base", "", "git revision to compare the working tree with (a branch, tag or commit; it must be fetched)")
	f.Float64Var(&maxMs, "max-added-ms", 0, "fail when the change adds more than this many fixed ms per scan to any one table")
	f.Int64Var(&maxSegments, "max-added-segments", 0, "fail when the change adds more than this many segments to any one table")
	f.StringVar(&o.FailOnNew, "fail-on-new", "never", "fail on a new finding at or above this severity (error, warning, note or never); a finding that became this severe counts as new")
	f.Float64Var(&o.FigureThreshold, "figure-threshold", 100*change.DefaultFigureThreshold, "percent a finding's graded figure must move, at the same severity, to count as worsened or improved")
	f.BoolVar(&o.NoColor, "no-color", false, "never colour the output (NO_COLOR does the same)")
	f.StringArrayVar(&o.Formats, "format", nil, "report format NAME or NAME=FILE ("+report.NameList(report.DiffReport)+"); repeatable")
	f.StringVar(&o.Output, "output", "", "write the report that would go to standard output to this file instead (atomically)")
	f.StringVar(&o.Today, "today", "", "the date waivers and forecasts are judged on, YYYY-MM-DD (default: today, UTC)")
	f.StringVar(&o.Config, "config", "", "project config to use for both sides (default: the nearest "+schema.ConfigFile+" from the first path up to the repository root)")
	return cmd
}
