package run

import (
	"io"

	"github.com/scangate/scangate/internal/report"
	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

// CheckOptions are check's flags and arguments.
type CheckOptions struct {
	Paths         []string // files, directories or -; none: the current directory
	FailOn        string   // --fail-on: the lowest severity that fails the run
	Formats       []string // --format NAME or NAME=FILE
	Output        string   // --output: the file the standard-output report goes to instead
	Today         string   // --today, YYYY-MM-DD; "": the current date, UTC
	Config        string   // --config; "": the nearest project config
	Baseline      string   // --baseline FILE; "": none
	Observed      string   // --observed: survey's JSON output; "": none
	NoColor       bool
	ManifestsOnly bool // skip named files that hold no "format:"
	HideBaselined bool
	Limits        schema.Limits
	Stdin         io.Reader
	Stdout        io.Writer
	Stderr        io.Writer
}

// CheckPaths runs `scangate check`: it checks the manifests found from the paths,
// applies the baseline and writes every report. The verdict is Invalid when an input
// breaks the schema, Failed when a finding reaches --fail-on. A broken config, baseline
// or observed file has its problems printed on stderr and is returned as the error.
func CheckPaths(o CheckOptions) (Verdict, error) {
	threshold, err := rules.ParseThreshold("--fail-on", o.FailOn)
	if err != nil {
		return Clean, err
	}
	proj, cfg, err := ProjectConfig(o.Stderr, o.Config, o.Paths, o.Today, o.Limits)
	if err != nil {
		return Clean, err
	}
	if o.Observed != "" {
		if cfg.Observed, err = LoadObserved(o.Observed, o.Stdin, o.Limits); err != nil {
			return Clean, Problems(o.Stderr, err, "observed", "the observed file is invalid; write it again with `scangate survey --format json`")
		}
	}
	outs, err := ParseFormats(report.CheckReport, o.Formats, o.Output, DefaultFormats(o.Output))
	if err != nil {
		return Clean, err
	}
	inputs, err := Collect(o.Paths, o.Stdin, o.Limits.MaxFileBytes, proj.Keep)
	if err != nil {
		return Clean, err
	}
	if o.ManifestsOnly {
		inputs = OnlyManifests(inputs)
	}
	read := append(append(Paths(inputs), proj.Files()...), o.Baseline, o.Observed)
	if err := GuardOutputs(outs, read); err != nil {
		return Clean, err
	}
	cfg.Charts = NeedsCharts(outs)
	files, findings := Check(inputs, cfg, proj.Config, o.Limits, NeedsTables(outs))
	res := &report.Result{
		Version:  ModuleVersion(),
		FailOn:   threshold,
		Files:    files,
		Findings: findings,
		Summary:  report.Summarize(files),
	}
	if res.Baseline, err = ApplyBaseline(o.Baseline, res, o.Limits, cfg.Today, o.HideBaselined); err != nil {
		return Clean, Problems(o.Stderr, err, "baseline", "the baseline file is invalid; fix it, or write it again with `scangate baseline write`")
	}
	if err := Write(outs, res, o.Stdout, UseColor(o.Stdout, o.NoColor)); err != nil {
		return Clean, err
	}
	switch {
	case res.Summary.Invalid > 0:
		return Invalid, nil
	case res.Failed():
		return Failed, nil
	}
	return Clean, nil
}
