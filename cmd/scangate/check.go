package main

import (
	"fmt"
	"os"
	"sort"

	"github.com/mattn/go-isatty"
	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/rules/report"
	"github.com/scangate/scangate/schema"
	"github.com/spf13/cobra"
)

func newCheck() *cobra.Command {
	var failOn string
	var noColor bool
	cmd := &cobra.Command{
		Use:   "check [PATH...]",
		Short: "Validate manifests and report segment-layout findings",
		Long: "check validates each manifest against the manifest JSON Schema, computes every\n" +
			"table's segment layout and scan cost, and prints graded findings with fix hints.\n" +
			"PATH is a file, a directory (every *.yaml, *.yml, *.json below it that holds\n" +
			"\"format:\"), or - for standard input; the default is the current directory.",
		Example: "  scangate check testdata/demo\n  scangate check --fail-on warning models/\n  cat model.yaml | scangate check -",
		RunE: func(cmd *cobra.Command, args []string) error {
			threshold, err := parseFailOn(failOn)
			if err != nil {
				return &exitError{code: exitInvalid, msg: err.Error()}
			}
			inputs, err := collect(args, cmd.InOrStdin(), schema.DefaultLimits.MaxFileBytes)
			if err != nil {
				return &exitError{code: exitInvalid, msg: err.Error()}
			}
			findings, sum := checkAll(inputs)
			out := cmd.OutOrStdout()
			if err := report.Text(out, findings, sum, useColor(out, noColor)); err != nil {
				return &exitError{code: exitInvalid, msg: err.Error()}
			}
			return exitFor(findings, sum, threshold)
		},
	}
	cmd.Flags().StringVar(&failOn, "fail-on", "error", "exit 1 when a finding is at or above this severity: error, warning, note or never")
	cmd.Flags().BoolVar(&noColor, "no-color", false, "never colour the output (NO_COLOR does the same)")
	return cmd
}

// checkAll loads and checks every input; unreadable and invalid files become schema findings.
func checkAll(inputs []input) ([]rules.Finding, report.Summary) {
	var findings []rules.Finding
	sum := report.Summary{Files: len(inputs)}
	for _, in := range inputs {
		if in.err != nil {
			sum.Invalid++
			findings = append(findings, rules.Finding{
				Rule: rules.Schema.ID, Severity: rules.Error, File: in.name,
				Message: fmt.Sprintf("cannot read the file: %v", in.err),
			})
			continue
		}
		m, err := schema.Load(in.name, in.data, schema.DefaultLimits)
		if err != nil {
			sum.Invalid++
			if se, ok := err.(*schema.Error); ok {
				findings = append(findings, rules.SchemaFindings(se)...)
				continue
			}
			findings = append(findings, rules.Finding{Rule: rules.Schema.ID, Severity: rules.Error, File: in.name, Message: err.Error()})
			continue
		}
		sum.Tables += len(m.Tables)
		findings = append(findings, rules.Run(m, rules.Config{})...)
	}
	sort.SliceStable(findings, func(i, j int) bool { return rules.Less(findings[i], findings[j]) })
	return findings, sum
}

// parseFailOn reads --fail-on: the lowest severity that fails the run, 0 for never.
func parseFailOn(s string) (rules.Severity, error) {
	if s == "never" {
		return 0, nil
	}
	sev, err := rules.ParseSeverity(s)
	if err != nil {
		return 0, fmt.Errorf("--fail-on %q: use error, warning, note or never", s)
	}
	return sev, nil
}

// exitFor is 2 when any input was invalid, 1 when a finding reaches the threshold, else 0.
func exitFor(findings []rules.Finding, sum report.Summary, threshold rules.Severity) error {
	if sum.Invalid > 0 {
		return &exitError{code: exitInvalid}
	}
	if threshold == 0 {
		return nil
	}
	for _, f := range findings {
		if f.Severity >= threshold {
			return &exitError{code: exitFindings}
		}
	}
	return nil
}

// useColor colours only a terminal, and never with --no-color or NO_COLOR set.
// CLICOLOR_FORCE=1 colours any output (a common convention; tests use it).
func useColor(w any, noColor bool) bool {
	if noColor || os.Getenv("NO_COLOR") != "" {
		return false
	}
	if v := os.Getenv("CLICOLOR_FORCE"); v != "" && v != "0" {
		return true
	}
	f, ok := w.(*os.File)
	return ok && (isatty.IsTerminal(f.Fd()) || isatty.IsCygwinTerminal(f.Fd()))
}
