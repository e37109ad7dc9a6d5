package run

import (
	"errors"
	"fmt"
	"io"

	"github.com/scangate/scangate/internal/report"
	"github.com/scangate/scangate/schema"
)

// BaselineOptions are baseline write's flags and arguments.
type BaselineOptions struct {
	Paths       []string // as check's
	Out         string   // --output: the baseline file to write
	Config      string   // --config; "": the nearest project config
	Today       string   // --today, YYYY-MM-DD; "": the current date, UTC
	Reason      string   // --reason
	Expires     string   // --expires, YYYY-MM-DD
	OverExpired bool     // --absorb-expired
	Limits      schema.Limits
	Stdin       io.Reader
	Stdout      io.Writer
	Stderr      io.Writer
}

// WriteBaseline runs `scangate baseline write`: it checks the paths as check does and
// writes every finding, stamped, to o.Out atomically, never over an input. Invalid
// manifests are printed on stderr as check prints them and nothing is written; so are
// findings NewBaseline refuses to record.
func WriteBaseline(o BaselineOptions) error {
	proj, cfg, err := ProjectConfig(o.Stderr, o.Config, o.Paths, o.Today, o.Limits)
	if err != nil {
		return err
	}
	inputs, err := Collect(o.Paths, o.Stdin, o.Limits.MaxFileBytes, proj.Keep)
	if err != nil {
		return err
	}
	if err := GuardTargets([]string{o.Out}, []string{"--output " + o.Out}, append(Paths(inputs), proj.Files()...)); err != nil {
		return err
	}
	files, findings := Check(inputs, cfg, proj.Config, o.Limits, false)
	res := &report.Result{Files: files, Findings: findings, Summary: report.Summarize(files)}
	if res.Summary.Invalid > 0 {
		text, _ := report.Lookup("text", report.CheckReport)
		text.Render(o.Stderr, res, false)
		return errors.New("some manifests are invalid; fix them before writing a baseline")
	}
	stamp := BaselineStamp{Today: cfg.Today, Reason: o.Reason, Expires: o.Expires, OverExpired: o.OverExpired}
	data, n, err := NewBaseline(o.Out, findings, res.Key, stamp, o.Limits, o.Stderr)
	if err != nil {
		return err
	}
	if err := WriteFileAtomic(o.Out, data); err != nil {
		return err
	}
	// A failed write to stdout is caught by the command's watched writer.
	fmt.Fprintf(o.Stdout, "wrote %d findings of %d files to %s\n", n, len(files), say(o.Out))
	return nil
}
