package main

import (
	"github.com/spf13/cobra"

	"github.com/scangate/scangate/internal/calibrate"
	"github.com/scangate/scangate/internal/run"
)

func newCalibrate() *cobra.Command {
	var format, noise string
	cmd := &cobra.Command{
		Use:   "calibrate FILE.csv",
		Short: "Fit the engine's per-segment and per-byte scan costs to measured full scans",
		Long: "calibrate reads full scans measured on your engine from a CSV (columns segments, rows,\n" +
			"bytes, cpu_ms; wall_ms and cores optional), fits cpu_ms = f x segments + rho x rows +\n" +
			"beta x bytes by non-negative least squares, weighted for noise that grows with the scan\n" +
			"unless --noise absolute, and prints each constant with its standard error and an engine\n" +
			"snippet. A term the data cannot identify is dropped and the report says why; it refuses,\n" +
			"exit 2, when f or beta cannot be told apart. FILE - reads standard input.",
		Example: "  scangate calibrate --format json testdata/calibration/measurements.csv",
		Args:    cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			name, data, err := run.ReadInput(args[0], cmd.InOrStdin(), limits.MaxFileBytes)
			if err == nil {
				err = run.Calibrate(cmd.OutOrStdout(), name, data, format, noise)
			}
			if err != nil {
				return usageError(err)
			}
			return nil
		},
	}
	cmd.Flags().StringVar(&format, "format", "text", "output format: text or json (schema: scangate schema calibration)")
	cmd.Flags().StringVar(&noise, "noise", string(calibrate.Relative), "how timing noise scales: relative (grows with the scan; weights 1/fitted²) or absolute (the same ms for every scan; equal weights)")
	return cmd
}
