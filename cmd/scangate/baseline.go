package main

import (
	"fmt"

	"github.com/spf13/cobra"

	"github.com/scangate/scangate/internal/baseline"
	"github.com/scangate/scangate/internal/report"
	"github.com/scangate/scangate/internal/run"
	"github.com/scangate/scangate/schema"
)

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
			proj, cfg, err := projectConfig(cmd, configFile, args, today)
			if err != nil {
				return err
			}
			inputs, err := run.Collect(args, cmd.InOrStdin(), limits.MaxFileBytes, proj.Keep)
			if err != nil {
				return usageError(err)
			}
			if err := run.GuardTargets([]string{out}, []string{"--output " + out}, append(run.Paths(inputs), proj.Files()...)); err != nil {
				return usageError(err)
			}
			files, findings := run.Check(inputs, cfg, proj.Config, limits, false)
			res := &report.Result{Files: files, Findings: findings, Summary: report.Summarize(files)}
			if res.Summary.Invalid > 0 {
				text, _ := report.Lookup("text", report.CheckReport)
				text.Render(cmd.ErrOrStderr(), res, false)
				return &exitError{code: exitInvalid, msg: "some manifests are invalid; fix them before writing a baseline"}
			}
			b := baseline.Build(findings, res.Key)
			data := b.Marshal()
			// Never write a file check --baseline would refuse (a path it cannot record, a
			// file above --max-file-size).
			if _, err := baseline.Parse(out, data, limits); err != nil {
				return usageError(fmt.Errorf("not writing %s: check --baseline would refuse it:\n%v", out, err))
			}
			if err := run.WriteFileAtomic(out, data); err != nil {
				return usageError(err)
			}
			fmt.Fprintf(cmd.OutOrStdout(), "wrote %d findings of %d files to %s\n", len(b.Entries), len(files), say(out))
			return nil
		},
	}
	write.Flags().StringVarP(&out, "output", "o", baseline.DefaultFile, "baseline file to write (atomically)")
	write.Flags().StringVar(&configFile, "config", "", "project config to use (default: the nearest "+schema.ConfigFile+")")
	write.Flags().StringVar(&today, "today", "", "the date waivers are judged on, YYYY-MM-DD")
	group.AddCommand(write)
	return group
}
