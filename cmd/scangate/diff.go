package main

import (
	"fmt"
	"math"

	"github.com/spf13/cobra"

	"github.com/scangate/scangate/internal/change"
	"github.com/scangate/scangate/internal/report"
	"github.com/scangate/scangate/internal/run"
	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

func newDiff() *cobra.Command {
	var base, output, today, configFile, failOnNew string
	var formats []string
	var noColor bool
	var maxMs, threshold float64
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
			gate := change.Gate{}
			if cmd.Flags().Changed("max-added-ms") {
				if math.IsNaN(maxMs) || math.IsInf(maxMs, 0) || maxMs < 0 {
					return usageError(fmt.Errorf("--max-added-ms %v: give a number of milliseconds, 0 or more", maxMs))
				}
				gate.MaxAddedMs = &maxMs
			}
			if cmd.Flags().Changed("max-added-segments") {
				if maxSegments < 0 {
					return usageError(fmt.Errorf("--max-added-segments %d: give a number of segments, 0 or more", maxSegments))
				}
				gate.MaxAddedSegments = &maxSegments
			}
			opts, err := change.PercentOptions(threshold)
			if err != nil {
				return usageError(err)
			}
			if gate.FailOnNew, err = rules.ParseThreshold("--fail-on-new", failOnNew); err != nil {
				return usageError(err)
			}
			outs, err := run.ParseFormats(report.DiffReport, formats, output, run.DefaultFormats(output))
			if err != nil {
				return usageError(err)
			}
			var configFrom []string
			if base == "" && len(args) == 2 {
				configFrom = args[1:] // the new side's config
			} else {
				configFrom = args
			}
			proj, cfg, err := projectConfig(cmd, configFile, configFrom, today)
			if err != nil {
				return err
			}
			maxBytes := limits.MaxFileBytes
			var sides [2]run.Side
			if base != "" {
				sides, err = run.RevisionSides(cmd.Context(), base, args, maxBytes, proj.Keep)
			} else {
				if len(args) != 2 {
					return usageError(fmt.Errorf("diff compares two paths, OLD and NEW (got %d), or the working tree with a revision: scangate diff --base REV [PATH...]", len(args)))
				}
				sides, err = run.PathSides(args[0], args[1], cmd.InOrStdin(), maxBytes, proj.Keep)
			}
			if err != nil {
				return usageError(err)
			}
			read := append(append(sides[0].Paths(), sides[1].Paths()...), proj.Files()...)
			if err := run.GuardOutputs(outs, read); err != nil {
				return usageError(err)
			}
			d := run.CompareSides(sides, cfg, proj, limits, opts)
			res := report.NewDiffResult(run.ModuleVersion(), d, gate)
			stdout := cmd.OutOrStdout()
			if err := run.Write(outs, res, stdout, run.UseColor(stdout, noColor)); err != nil {
				return usageError(err)
			}
			switch {
			case len(d.Invalid) > 0:
				return &exitError{code: exitInvalid}
			case len(res.Breaches) > 0:
				return &exitError{code: exitFindings}
			}
			return nil
		},
	}
	f := cmd.Flags()
	f.StringVar(&base, "base", "", "git revision to compare the working tree with (a branch, tag or commit; it must be fetched)")
	f.Float64Var(&maxMs, "max-added-ms", 0, "fail when the change adds more than this many fixed ms per scan to any one table")
	f.Int64Var(&maxSegments, "max-added-segments", 0, "fail when the change adds more than this many segments to any one table")
	f.StringVar(&failOnNew, "fail-on-new", "never", "fail on a new finding at or above this severity (error, warning, note or never); a finding that became this severe counts as new")
	f.Float64Var(&threshold, "figure-threshold", 100*change.DefaultFigureThreshold, "percent a finding's graded figure must move, at the same severity, to count as worsened or improved")
	f.BoolVar(&noColor, "no-color", false, "never colour the output (NO_COLOR does the same)")
	f.StringArrayVar(&formats, "format", nil, "report format NAME or NAME=FILE ("+report.NameList(report.DiffReport)+"); repeatable")
	f.StringVar(&output, "output", "", "write the report that would go to standard output to this file instead (atomically)")
	f.StringVar(&today, "today", "", "the date waivers and forecasts are judged on, YYYY-MM-DD (default: today, UTC)")
	f.StringVar(&configFile, "config", "", "project config to use for both sides (default: the nearest "+schema.ConfigFile+" from the first path up to the repository root)")
	return cmd
}
