package main

import (
	"io"

	"github.com/spf13/cobra"

	"github.com/scangate/scangate/internal/run"
	"github.com/scangate/scangate/schema"
)

func newAdopt() *cobra.Command {
	var table, configFile string
	var dryRun bool
	cmd := &cobra.Command{
		Use:   "adopt MANIFEST...",
		Short: "Write each table's recommended layout into its manifest",
		Long: "adopt writes each table's recommendation (the one check and plan print) into its manifest,\n" +
			"rewriting only the keys it changes: the table's partitions, and engine.segment_rows (one\n" +
			"setting for the whole model). Everything else stays byte for byte; files are replaced\n" +
			"atomically, only if every named manifest can be adopted. Exit codes: 0 written or nothing\n" +
			"to adopt, 2 invalid input or usage.",
		Example: "  scangate adopt --dry-run testdata/demo/meter-telemetry.yaml\n  scangate adopt models/ --table meter_reads",
		Args:    cobra.MinimumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			proj, cfg, err := run.ProjectConfig(cmd.ErrOrStderr(), configFile, args, "", limits)
			if err != nil {
				return usageError(err)
			}
			a, err := run.Adopt(args, proj, cfg, table, limits)
			if err != nil {
				return usageError(err)
			}
			if a.PrintErrors(cmd.ErrOrStderr()) {
				return &exitError{code: exitInvalid, msg: "nothing was written; fix the problems above and adopt again"}
			}
			io.WriteString(cmd.OutOrStdout(), a.Summary(dryRun))
			if err := a.Write(cmd.OutOrStdout(), dryRun); err != nil {
				return usageError(err)
			}
			return nil
		},
	}
	f := cmd.Flags()
	f.StringVar(&table, "table", "", "adopt only this table's recommendation")
	f.BoolVar(&dryRun, "dry-run", false, "print the change as a unified diff and write nothing")
	f.StringVar(&configFile, "config", "", "project config to use (default: the nearest "+schema.ConfigFile+" from the first path up to the repository root)")
	return cmd
}
