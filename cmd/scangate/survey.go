package main

import (
	"github.com/spf13/cobra"

	"github.com/scangate/scangate/internal/run"
	"github.com/scangate/scangate/internal/survey"
)

func newSurvey() *cobra.Command {
	o := run.SurveyOptions{Format: "yaml", Dialect: "ansi", MaxDataSize: "1TiB"}
	cmd := &cobra.Command{
		Use:   "survey DATA... | --sql TABLE | --from-result FILE.csv",
		Short: "Measure a table from its data and print its manifest entry",
		Long: "survey reads a table's Parquet or CSV files (folders are walked; key=value folders\n" +
			"name partitions) and prints a manifest fragment: exact rows, the partitions with their\n" +
			"rows (or time tiers when --grain periods are consecutive, with growth_per_year fitted\n" +
			"from six or more spanning a year), and per column its type, distinct values (exact\n" +
			"up to 65,536, then a HyperLogLog estimate within about 2.4%), average string length\n" +
			"and row order.\n" +
			"--into MANIFEST adds the table to the manifest or replaces it there, keeping every\n" +
			"other byte; nothing is written without it. --format json prints the measurements\n" +
			"for check --observed (schema: scangate schema survey).\n\n" +
			"For a table too large to read here, --sql TABLE --columns NAME:TYPE,... prints a\n" +
			"query to run on the engine that holds it (dialects: " + survey.DialectNames() + "),\n" +
			"and --from-result FILE.csv turns its saved result into the same fragment.",
		Example: "  scangate survey --partition-by read_at --grain month data/meter_reads/\n" +
			"  scangate survey --into models/water.yaml data/meter_reads/\n" +
			"  scangate survey --sql sales.orders --columns id:int64,site:string --partition-by day --grain month\n" +
			"  scangate survey --from-result orders.csv",
		RunE: func(cmd *cobra.Command, args []string) error {
			o.Data, o.Manifest = args, limits
			o.Stdin, o.Stdout, o.Stderr = cmd.InOrStdin(), cmd.OutOrStdout(), cmd.ErrOrStderr()
			o.Progress, o.Lines = run.SurveyProgress(o.Stderr)
			if err := run.Survey(o); err != nil {
				return usageError(err)
			}
			return nil
		},
	}
	f := cmd.Flags()
	f.StringVar(&o.Name, "name", "", "the table's name (default: the first data file or folder's name)")
	f.StringVar(&o.PartitionBy, "partition-by", "", "the column (or key=value folder key) whose values are the partitions")
	f.StringVar(&o.Grain, "grain", "", "fold the partition key's dates into periods: day, week, month, quarter or year")
	f.StringVar(&o.Format, "format", o.Format, "yaml (the manifest fragment) or json (schema/survey.schema.json)")
	f.StringVar(&o.Into, "into", "", "add the table to this manifest, or replace it there, atomically")
	f.StringVar(&o.SQL, "sql", "", "print the survey query of this table instead of reading data")
	f.StringVar(&o.Dialect, "dialect", o.Dialect, "the query's dialect: "+survey.DialectNames())
	f.StringVar(&o.Columns, "columns", "", "with --sql: the columns to measure, NAME:TYPE,... (manifest types)")
	f.StringVar(&o.FromResult, "from-result", "", "read the survey query's result (CSV with its header row) instead of data")
	f.StringVar(&o.MaxDataSize, "max-data-size", o.MaxDataSize, "refuse data files larger than this")
	return cmd
}
