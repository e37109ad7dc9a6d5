package schema

import (
	"bytes"
	_ "embed"
)

//go:embed calibration.schema.json
var calibrationSchema []byte

// CalibrationSchema returns the JSON Schema of scangate calibrate --format json.
func CalibrationSchema() []byte { return bytes.Clone(calibrationSchema) }
