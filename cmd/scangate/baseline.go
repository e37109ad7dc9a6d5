package main

import (
	"github.com/spf13/cobra"

	"github.com/scangate/scangate/internal/baseline"
	"github.com/scangate/scangate/internal/run"
	"github.com/scangate/scangate/schema"
)

func newBaseline() *cobra.Command {
	group := &cobra.Command{
		Use:   "baseline",
		Short: "Record today's findings so only new ones fail the build",
	}
	var o run.BaselineOptions
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
			o.Paths, o.Limits = args, limits
			o.Stdin, o.Stdout, o.Stderr = cmd.InOrStdin(), cmd.OutOrStdout(), cmd.ErrOrStderr()
			return exitFor(run.Clean, run.WriteBaseline(o))
		},
	}
	write.Flags().StringVarP(&o.Out, "output", "o", baseline.DefaultFile, "baseline file to write (atomically)")
	write.Flags().StringVar(&o.Config, "config", "", "project config to use (default: the nearest "+schema.ConfigFile+")")
	write.Flags().StringVar(&o.Today, "today", "", "the date waivers are judged on and the file records, YYYY-MM-DD (default: today, UTC)")
	write.Flags().StringVar(&o.Reason, "reason", "", "why the findings are accepted, recorded on every entry")
	write.Flags().StringVar(&o.Expires, "expires", "", "last day the entries absorb their findings, YYYY-MM-DD; after it they count again")
	write.Flags().BoolVar(&o.OverExpired, "absorb-expired", false, "record findings of an expired waiver or baseline entry too (otherwise refused, exit 2)")
	group.AddCommand(write)
	return group
}
