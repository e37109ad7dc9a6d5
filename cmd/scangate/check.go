package main

import (
	"github.com/spf13/cobra"

	"github.com/scangate/scangate/internal/report"
	"github.com/scangate/scangate/internal/run"
	"github.com/scangate/scangate/schema"
)

func newCheck() *cobra.Command {
	var o run.CheckOptions
	cmd := &cobra.Command{
		Use:   "check [PATH...]",
		Short: "Validate manifests and report segment-layout findings",
		Long: "check validates each manifest against the manifest JSON Schema, computes every\n" +
			"table's segment layout and scan cost, and prints graded findings with fix hints.\n" +
			"PATH is a file, a directory (every *.yaml, *.yml, *.json below it that holds\n" +
			"\"format:\"), or - for standard input; the default is the current directory.\n\n" +
			"Formats: " + report.NameList(report.CheckReport) + ". --format NAME writes to\n" +
			"standard output (or to --output), --format NAME=FILE to a file; repeat it for\n" +
			"several. Without --format: text, plus github when GITHUB_ACTIONS=true.",
		Example: "  scangate check testdata/demo\n" +
			"  scangate check --fail-on warning models/\n" +
			"  scangate check --format text --format sarif=out/scangate.sarif .\n" +
			"  cat model.yaml | scangate check -",
		RunE: func(cmd *cobra.Command, args []string) error {
			o.Paths, o.Limits = args, limits
			o.Stdin, o.Stdout, o.Stderr = cmd.InOrStdin(), cmd.OutOrStdout(), cmd.ErrOrStderr()
			return exitFor(run.CheckPaths(o))
		},
	}
	cmd.Flags().StringVar(&o.FailOn, "fail-on", "error", "exit 1 when a finding is at or above this severity: error, warning, note or never")
	cmd.Flags().BoolVar(&o.NoColor, "no-color", false, "never colour the output (NO_COLOR does the same)")
	cmd.Flags().BoolVar(&o.ManifestsOnly, "manifests-only", false, "skip named files that do not hold \"format:\" (for hooks that pass every staged YAML file)")
	cmd.Flags().StringArrayVar(&o.Formats, "format", nil, "report format NAME or NAME=FILE ("+report.NameList(report.CheckReport)+"); repeatable")
	cmd.Flags().StringVar(&o.Output, "output", "", "write the report that would go to standard output to this file instead (atomically)")
	cmd.Flags().StringVar(&o.Today, "today", "", "the date waivers and forecasts are judged on, YYYY-MM-DD (default: today, UTC)")
	cmd.Flags().StringVar(&o.Config, "config", "", "project config to use (default: the nearest "+schema.ConfigFile+" from the first path up to the repository root)")
	cmd.Flags().StringVar(&o.Baseline, "baseline", "", "baseline file: findings recorded there are listed but do not fail the run (unless more severe than recorded or expired)")
	cmd.Flags().BoolVar(&o.HideBaselined, "hide-baselined", false, "with --baseline: count the baselined findings in the text log instead of listing them")
	cmd.Flags().StringVar(&o.Observed, "observed", "", "survey --format json output: raise observed-drift where declared rows or distinct counts differ from it")
	return cmd
}

func usageError(err error) error { return &exitError{code: exitInvalid, msg: err.Error()} }

// exitFor is a command's exit code: 2 for an error (its message printed) or an input
// that breaks its schema, 1 for findings at the threshold, else 0.
func exitFor(v run.Verdict, err error) error {
	switch {
	case err != nil:
		return usageError(err)
	case v == run.Invalid:
		return &exitError{code: exitInvalid}
	case v == run.Failed:
		return &exitError{code: exitFindings}
	}
	return nil
}
