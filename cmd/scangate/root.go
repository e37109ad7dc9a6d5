package main

import (
	"fmt"
	"io"

	"github.com/spf13/cobra"

	"github.com/scangate/scangate/internal/run"
	"github.com/scangate/scangate/schema"
)

// limits bound what one input may cost; --max-file-size raises the file size bound.
var limits = schema.DefaultLimits

func newRoot(stdin io.Reader, stdout, stderr io.Writer) *cobra.Command {
	root := &cobra.Command{
		Use:   "scangate",
		Short: "Check column-store model manifests for segment waste and scan-cost budgets",
		Long: "scangate reads model manifests, validates them against the manifest JSON Schema,\n" +
			"computes each table's segment layout, scan cost and growth, and reports graded\n" +
			"findings with fix hints. Exit codes: 0 clean, 1 findings at or above --fail-on,\n" +
			"2 invalid input or usage.",
		SilenceUsage:  true,
		SilenceErrors: true,
	}
	limits = schema.DefaultLimits
	var maxFile string
	root.PersistentFlags().StringVar(&maxFile, "max-file-size", "8MiB", "refuse manifests and configs larger than this (a byte size such as 16MiB)")
	root.PersistentFlags().Int64Var(&limits.MaxRunPartitions, "max-run-partitions", schema.DefaultLimits.MaxRunPartitions, "analyse at most this many partitions in one run, over all files")
	root.PersistentPreRunE = func(*cobra.Command, []string) error {
		n, err := schema.ParseBytes(maxFile)
		if err != nil || n < 1 || n > 1<<30 {
			return usageError(fmt.Errorf("--max-file-size %q: give a size from 1B to 1GiB, e.g. 16MiB", maxFile))
		}
		limits.MaxFileBytes = int(n)
		if limits.MaxRunPartitions < 1 {
			return usageError(fmt.Errorf("--max-run-partitions %d: give a positive number", limits.MaxRunPartitions))
		}
		return nil
	}
	root.SetIn(stdin)
	root.SetOut(stdout)
	root.SetErr(stderr)
	root.AddCommand(newCheck(), newVersion(), newBaseline(), newRules(), newExplain(), newSchemaCmd(), newInit())
	root.AddCommand(newPlan())
	root.AddCommand(newDiff())
	root.AddCommand(newCalibrate())
	root.AddCommand(newAdopt())
	root.AddCommand(newSurvey())
	// Cobra's completion command prints its help, exit 0, for a shell it does not know;
	// runnable, it refuses the argument (exit 2) like any unknown command.
	root.InitDefaultCompletionCmd()
	if c, _, err := root.Find([]string{"completion"}); err == nil && c.Name() == "completion" {
		c.RunE = func(c *cobra.Command, _ []string) error { return c.Help() }
		c.Args = func(_ *cobra.Command, args []string) error { return run.CheckShell(args) }
	}
	return root
}

func newVersion() *cobra.Command {
	return &cobra.Command{
		Use:   "version",
		Short: "Print the module version and the revision it was built from",
		Args:  cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			_, err := fmt.Fprintln(cmd.OutOrStdout(), run.VersionLine())
			return err
		},
	}
}
