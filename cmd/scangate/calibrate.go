package main

import (
	"bytes"
	"errors"
	"fmt"
	"io"

	"github.com/spf13/cobra"

	"github.com/scangate/scangate/internal/calibrate"
	"github.com/scangate/scangate/internal/report"
	"github.com/scangate/scangate/internal/run"
)

func newCalibrate() *cobra.Command {
	return &cobra.Command{
		Use:   "calibrate FILE.csv",
		Short: "Fit the engine's per-segment and per-byte scan costs to measured full scans",
		Long: "calibrate reads full scans measured on your engine, one a row, from a CSV whose header\n" +
			"names the columns segments, rows, bytes and cpu_ms (wall_ms and cores optional, other\n" +
			"columns ignored, # starts a comment), fits\n\n" +
			"  cpu_ms = f x segments + rho x rows + beta x bytes\n\n" +
			"by non-negative least squares, and prints each constant with its standard error, the\n" +
			"fit's R² and worst residuals, and an engine snippet (segment_overhead_ms = f,\n" +
			"scan_mb_per_s = 1 / (beta x 1000)) to paste into the manifest. It refuses, exit 2,\n" +
			"when the measurements cannot tell the constants apart. FILE - reads standard input.",
		Example: "  scangate calibrate testdata/calibration/measurements.csv",
		Args:    cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			name, data, err := run.ReadInput(args[0], cmd.InOrStdin(), limits.MaxFileBytes)
			if err != nil {
				return usageError(err)
			}
			res, err := calibrate.Calibrate(name, bytes.NewReader(data))
			var refusal *calibrate.Refusal
			switch {
			case errors.As(err, &refusal):
				return usageError(fmt.Errorf("cannot calibrate from %s: %s", name, refusal.Msg))
			case err != nil:
				return usageError(err)
			}
			_, err = io.WriteString(cmd.OutOrStdout(), report.CalibrationText(name, res))
			return err
		},
	}
}
