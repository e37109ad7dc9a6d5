package main

import (
	"fmt"
	"os"

	"github.com/spf13/cobra"

	"github.com/scangate/scangate/internal/baseline"
	"github.com/scangate/scangate/internal/report"
	"github.com/scangate/scangate/schema"
)

// applyBaseline marks the findings recorded in the baseline file.
func applyBaseline(file string, r *report.Result) (*report.BaselineUse, error) {
	data, err := os.ReadFile(file)
	if err != nil {
		return nil, fmt.Errorf("--baseline: cannot read %s: %v", file, unwrapPath(err))
	}
	b, err := baseline.Parse(data)
	if err != nil {
		return nil, fmt.Errorf("%s:%v", file, err)
	}
	fixed := b.Apply(r.Findings, r.URI)
	return &report.BaselineUse{File: file, Fixed: fixed}, nil
}

func newBaseline() *cobra.Command {
	group := &cobra.Command{
		Use:   "baseline",
		Short: "Record today's findings so only new ones fail the build",
	}
	var out, configFile, today string
	write := &cobra.Command{
		Use:   "write [PATH...]",
		Short: "Check the paths and record every finding in a baseline file",
		Long: "write checks the paths as check does and records every finding by its stable\n" +
			"fingerprint (rule, repository path, table, subject; never the line). Commit the\n" +
			"file; `check --baseline FILE` then fails only on findings it does not hold.\n" +
			"Invalid manifests are not recorded: fix them first (exit 2).",
		Example: "  scangate baseline write models/ -o " + baseline.DefaultFile,
		RunE: func(cmd *cobra.Command, args []string) error {
			proj, err := loadProject(configFile, args)
			if err != nil {
				return configError(cmd, err)
			}
			cfg, err := proj.rulesConfig(today)
			if err != nil {
				return configError(cmd, err)
			}
			inputs, err := collectFiltered(args, cmd.InOrStdin(), limits.MaxFileBytes, proj.keep)
			if err != nil {
				return usageError(err)
			}
			files, findings := checkAll(inputs, cfg, proj.config, false)
			res := &report.Result{Files: files, Findings: findings, Summary: report.Summarize(files)}
			if res.Summary.Invalid > 0 {
				report.Text(cmd.ErrOrStderr(), res, false)
				return &exitError{code: exitInvalid, msg: "some manifests are invalid; fix them before writing a baseline"}
			}
			b := baseline.Build(findings, res.URI)
			if err := writeFileAtomic(out, b.Marshal()); err != nil {
				return usageError(err)
			}
			fmt.Fprintf(cmd.OutOrStdout(), "wrote %d findings of %d files to %s\n", len(b.Entries), len(files), out)
			return nil
		},
	}
	write.Flags().StringVarP(&out, "output", "o", baseline.DefaultFile, "baseline file to write (atomically)")
	write.Flags().StringVar(&configFile, "config", "", "project config to use (default: the nearest "+schema.ConfigFile+")")
	write.Flags().StringVar(&today, "today", "", "the date waivers are judged on, YYYY-MM-DD")
	group.AddCommand(write)
	return group
}
