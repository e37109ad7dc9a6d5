package main

import (
	"errors"
	"fmt"

	"github.com/spf13/cobra"

	"github.com/scangate/scangate/internal/report"
	"github.com/scangate/scangate/internal/run"
	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

func newCheck() *cobra.Command {
	var failOn, output, today, configFile, baselineFile, observed string
	var formats []string
	var noColor, manifestsOnly, hideBaselined bool
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
			threshold, err := rules.ParseThreshold("--fail-on", failOn)
			if err != nil {
				return usageError(err)
			}
			proj, cfg, err := projectConfig(cmd, configFile, args, today)
			if err != nil {
				return err
			}
			if observed != "" {
				if cfg.Observed, err = run.LoadObserved(observed, cmd.InOrStdin(), limits); err != nil {
					return problemsError(cmd, err, "observed", "the observed file is invalid; write it again with `scangate survey --format json`")
				}
			}
			outs, err := run.ParseFormats(report.CheckReport, formats, output, run.DefaultFormats(output))
			if err != nil {
				return usageError(err)
			}
			inputs, err := run.Collect(args, cmd.InOrStdin(), limits.MaxFileBytes, proj.Keep)
			if err != nil {
				return usageError(err)
			}
			if manifestsOnly {
				inputs = run.OnlyManifests(inputs)
			}
			read := append(append(run.Paths(inputs), proj.Files()...), baselineFile, observed)
			if err := run.GuardOutputs(outs, read); err != nil {
				return usageError(err)
			}
			files, findings := run.Check(inputs, cfg, proj.Config, limits, run.NeedsTables(outs))
			res := &report.Result{
				Version:  run.ModuleVersion(),
				FailOn:   threshold,
				Files:    files,
				Findings: findings,
				Summary:  report.Summarize(files),
			}
			if res.Baseline, err = run.ApplyBaseline(baselineFile, res, limits, cfg.Today, hideBaselined); err != nil {
				return baselineError(cmd, err)
			}
			stdout := cmd.OutOrStdout()
			if err := run.Write(outs, res, stdout, run.UseColor(stdout, noColor)); err != nil {
				return usageError(err)
			}
			return exitFor(res)
		},
	}
	cmd.Flags().StringVar(&failOn, "fail-on", "error", "exit 1 when a finding is at or above this severity: error, warning, note or never")
	cmd.Flags().BoolVar(&noColor, "no-color", false, "never colour the output (NO_COLOR does the same)")
	cmd.Flags().BoolVar(&manifestsOnly, "manifests-only", false, "skip named files that do not hold \"format:\" (for hooks that pass every staged YAML file)")
	cmd.Flags().StringArrayVar(&formats, "format", nil, "report format NAME or NAME=FILE ("+report.NameList(report.CheckReport)+"); repeatable")
	cmd.Flags().StringVar(&output, "output", "", "write the report that would go to standard output to this file instead (atomically)")
	cmd.Flags().StringVar(&today, "today", "", "the date waivers and forecasts are judged on, YYYY-MM-DD (default: today, UTC)")
	cmd.Flags().StringVar(&configFile, "config", "", "project config to use (default: the nearest "+schema.ConfigFile+" from the first path up to the repository root)")
	cmd.Flags().StringVar(&baselineFile, "baseline", "", "baseline file: findings recorded there are listed but do not fail the run (unless more severe than recorded or expired)")
	cmd.Flags().BoolVar(&hideBaselined, "hide-baselined", false, "with --baseline: count the baselined findings in the text log instead of listing them")
	cmd.Flags().StringVar(&observed, "observed", "", "survey --format json output: raise observed-drift where declared rows or distinct counts differ from it")
	return cmd
}

func usageError(err error) error { return &exitError{code: exitInvalid, msg: err.Error()} }

// projectConfig reads the project config (--config, or the nearest one found from the
// paths) and the rules' settings with --today.
func projectConfig(cmd *cobra.Command, configFile string, paths []string, today string) (run.Project, rules.Config, error) {
	proj, err := run.LoadProject(configFile, paths, limits)
	if err != nil {
		return proj, rules.Config{}, configError(cmd, err)
	}
	cfg, err := proj.RulesConfig(today)
	if err != nil {
		return proj, cfg, configError(cmd, err)
	}
	return proj, cfg, nil
}

// configError reports an invalid project config the way manifest errors are reported:
// every problem at its line and column, then exit 2.
func configError(cmd *cobra.Command, err error) error {
	return problemsError(cmd, err, "config", "the project config is invalid; fix it and run again")
}

// baselineError reports an invalid baseline file the same way.
func baselineError(cmd *cobra.Command, err error) error {
	return problemsError(cmd, err, "baseline", "the baseline file is invalid; fix it, or write it again with `scangate baseline write`")
}

func problemsError(cmd *cobra.Command, err error, tag, msg string) error {
	var se *schema.Error
	if errors.As(err, &se) {
		for _, p := range se.Problems {
			fmt.Fprintf(cmd.ErrOrStderr(), "%s:%d:%d: error: %s [%s]\n", say(se.File), p.Pos.Line, p.Pos.Col, say(p.Text()), tag)
		}
		return &exitError{code: exitInvalid, msg: msg}
	}
	return usageError(err)
}

// exitFor is 2 when any input was invalid, 1 when a finding reaches the threshold, else 0.
func exitFor(r *report.Result) error {
	switch {
	case r.Summary.Invalid > 0:
		return &exitError{code: exitInvalid}
	case r.Failed():
		return &exitError{code: exitFindings}
	}
	return nil
}
