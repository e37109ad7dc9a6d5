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
	var out, configFile, today, reason, expires string
	var overExpired bool
	write := &cobra.Command{
		Use:   "write [PATH...]",
		Short: "Check the paths and record every finding in a baseline file",
		Long: "write checks the paths as check does and records every finding by its stable\n" +
			"fingerprint (never the line), its severity, the date (--today), --reason and --expires.\n" +
			"`check --baseline FILE` then fails only on findings it does not hold, grew more severe\n" +
			"or whose entry expired. Invalid manifests, and without --absorb-expired findings of\n" +
			"an expired waiver or entry, are not recorded: fix them first (exit 2).",
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
			data, n, err := run.NewBaseline(out, findings, res.Key, run.BaselineStamp{Today: cfg.Today, Reason: reason, Expires: expires, OverExpired: overExpired}, limits, cmd.ErrOrStderr())
			if err != nil {
				return usageError(err)
			}
			if err := run.WriteFileAtomic(out, data); err != nil {
				return usageError(err)
			}
			fmt.Fprintf(cmd.OutOrStdout(), "wrote %d findings of %d files to %s\n", n, len(files), say(out))
			return nil
		},
	}
	write.Flags().StringVarP(&out, "output", "o", baseline.DefaultFile, "baseline file to write (atomically)")
	write.Flags().StringVar(&configFile, "config", "", "project config to use (default: the nearest "+schema.ConfigFile+")")
	write.Flags().StringVar(&today, "today", "", "the date waivers are judged on and the file records, YYYY-MM-DD (default: today, UTC)")
	write.Flags().StringVar(&reason, "reason", "", "why the findings are accepted, recorded on every entry")
	write.Flags().StringVar(&expires, "expires", "", "last day the entries absorb their findings, YYYY-MM-DD; after it they count again")
	write.Flags().BoolVar(&overExpired, "absorb-expired", false, "record findings of an expired waiver or baseline entry too (otherwise refused, exit 2)")
	group.AddCommand(write)
	return group
}
