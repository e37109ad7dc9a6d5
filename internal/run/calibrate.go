package run

import (
	"bytes"
	"errors"
	"fmt"
	"io"

	"github.com/scangate/scangate/internal/calibrate"
	"github.com/scangate/scangate/internal/report"
)

// Calibrate fits the measurements read from the file called name and writes the report
// in format (text or json) to w. Every error is the user's to fix (exit 2): an unknown
// format or noise model, a CSV error at its line and column, or a refusal saying what
// to measure instead.
func Calibrate(w io.Writer, name string, data []byte, format, noise string) error {
	if format != "text" && format != "json" {
		return fmt.Errorf("unknown --format %q; use text or json", format)
	}
	n, err := calibrate.ParseNoise(noise)
	if err != nil {
		return err
	}
	res, err := calibrate.Calibrate(name, bytes.NewReader(data), calibrate.Options{Noise: n})
	var refusal *calibrate.Refusal
	switch {
	case errors.As(err, &refusal):
		return fmt.Errorf("cannot calibrate from %s: %s", name, refusal.Msg)
	case err != nil:
		return err
	}
	if format == "json" {
		return report.CalibrationJSON(w, name, ModuleVersion(), res)
	}
	_, err = io.WriteString(w, report.CalibrationText(name, res))
	return err
}
