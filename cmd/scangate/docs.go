package main

import (
	"errors"
	"fmt"
	"io"
	"strings"
	"text/tabwriter"

	"github.com/spf13/cobra"

	"github.com/scangate/scangate/internal/report"
	"github.com/scangate/scangate/internal/run"
	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

func newRules() *cobra.Command {
	return &cobra.Command{
		Use:   "rules",
		Short: "List every rule with its default severity and title",
		Args:  cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			w := tabwriter.NewWriter(cmd.OutOrStdout(), 0, 0, 2, ' ', 0)
			fmt.Fprintln(w, "RULE\tDEFAULT\tTITLE")
			for _, r := range rules.All() {
				fmt.Fprintf(w, "%s\t%s\t%s\n", r.ID, r.Default, r.Title)
			}
			return w.Flush()
		},
	}
}

func newExplain() *cobra.Command {
	return &cobra.Command{
		Use:   "explain RULE",
		Short: "Explain a rule: why it matters, how its number is computed, and the fix",
		Args:  cobra.ExactArgs(1),
		ValidArgsFunction: func(*cobra.Command, []string, string) ([]string, cobra.ShellCompDirective) {
			var ids []string
			for _, r := range rules.All() {
				ids = append(ids, r.ID)
			}
			return ids, cobra.ShellCompDirectiveNoFileComp
		},
		RunE: func(cmd *cobra.Command, args []string) error {
			r, ok := rules.Lookup(args[0])
			if !ok {
				return usageError(errors.New(rules.Unknown(args[0])))
			}
			_, err := io.WriteString(cmd.OutOrStdout(), report.RuleText(r))
			return err
		},
	}
}

func newSchemaCmd() *cobra.Command {
	return &cobra.Command{
		Use:       "schema [" + strings.Join(schema.Names(), "|") + "]",
		Short:     "Print an embedded JSON Schema (default: manifest)",
		Args:      cobra.MaximumNArgs(1),
		ValidArgs: schema.Names(),
		RunE: func(cmd *cobra.Command, args []string) error {
			data, err := schema.Named(append(args, "manifest")[0])
			if err != nil {
				return usageError(err)
			}
			_, err = cmd.OutOrStdout().Write(data)
			return err
		},
	}
}

func newInit() *cobra.Command {
	var dir string
	var force bool
	cmd := &cobra.Command{
		Use:   "init",
		Short: "Write a commented starter manifest (model.yaml) and project config (" + schema.ConfigFile + ")",
		Args:  cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			written, err := run.WriteStarters(dir, force)
			for _, p := range written {
				fmt.Fprintf(cmd.OutOrStdout(), "wrote %s\n", say(p))
			}
			if err != nil {
				return usageError(err)
			}
			return nil
		},
	}
	cmd.Flags().StringVar(&dir, "dir", ".", "directory to write the two files into")
	cmd.Flags().BoolVar(&force, "force", false, "replace the files if they exist")
	return cmd
}
