package run

import (
	"fmt"
	"os"

	"github.com/scangate/scangate/internal/baseline"
	"github.com/scangate/scangate/internal/report"
)

// ApplyBaseline marks the findings of r recorded in the baseline file.
func ApplyBaseline(file string, r *report.Result) (*report.BaselineUse, error) {
	data, err := os.ReadFile(file)
	if err != nil {
		return nil, fmt.Errorf("--baseline: cannot read %s: %v", file, UnwrapPath(err))
	}
	b, err := baseline.Parse(data)
	if err != nil {
		return nil, fmt.Errorf("%s:%v", file, err)
	}
	fixed := b.Apply(r.Findings, r.URI)
	return &report.BaselineUse{File: file, Fixed: fixed}, nil
}
