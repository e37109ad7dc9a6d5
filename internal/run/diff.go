package run

import (
	"context"
	"fmt"
	"io"

	"github.com/scangate/scangate/internal/change"
	"github.com/scangate/scangate/internal/report"
	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

// DiffOptions are diff's flags and arguments.
type DiffOptions struct {
	Base             string   // --base REV; "": compare two paths
	Paths            []string // OLD and NEW, or with Base the PATHs of the working tree
	MaxAddedMs       *float64 // nil when --max-added-ms is not given
	MaxAddedSegments *int64   // nil when --max-added-segments is not given
	FailOnNew        string   // --fail-on-new severity, or never
	FigureThreshold  float64  // --figure-threshold, percent
	Formats          []string // --format NAME or NAME=FILE
	Output           string   // --output
	Today            string   // --today, YYYY-MM-DD; "": the current date, UTC
	Config           string   // --config; "": the nearest project config
	NoColor          bool
	Limits           schema.Limits
	Stdin            io.Reader
	Stdout           io.Writer
	Stderr           io.Writer
}

// Diff runs `scangate diff`: it reads both sides, checks and compares them and writes
// every report. The verdict is Invalid when a file of either side breaks the schema,
// Failed when the change crosses a limit of the gate. A broken config has its problems
// printed on stderr and is returned as the error.
func Diff(ctx context.Context, o DiffOptions) (Verdict, error) {
	gate, err := change.NewGate(o.MaxAddedMs, o.MaxAddedSegments)
	if err != nil {
		return Clean, err
	}
	opts, err := change.PercentOptions(o.FigureThreshold)
	if err != nil {
		return Clean, err
	}
	if gate.FailOnNew, err = rules.ParseThreshold("--fail-on-new", o.FailOnNew); err != nil {
		return Clean, err
	}
	outs, err := ParseFormats(report.DiffReport, o.Formats, o.Output, DefaultFormats(o.Output))
	if err != nil {
		return Clean, err
	}
	proj, cfg, err := ProjectConfig(o.Stderr, o.Config, diffConfigPaths(o.Base, o.Paths), o.Today, o.Limits)
	if err != nil {
		return Clean, err
	}
	sides, err := DiffSides(ctx, o.Base, o.Paths, o.Stdin, o.Limits.MaxFileBytes, proj.Keep)
	if err != nil {
		return Clean, err
	}
	read := append(append(sides[0].Paths(), sides[1].Paths()...), proj.Files()...)
	if err := GuardOutputs(outs, read); err != nil {
		return Clean, err
	}
	d := CompareSides(sides, cfg, proj, o.Limits, opts)
	res := report.NewDiffResult(ModuleVersion(), d, gate)
	if err := Write(outs, res, o.Stdout, UseColor(o.Stdout, o.NoColor)); err != nil {
		return Clean, err
	}
	switch {
	case len(d.Invalid) > 0:
		return Invalid, nil
	case len(res.Breaches) > 0:
		return Failed, nil
	}
	return Clean, nil
}

// diffConfigPaths are the paths the project config is looked for from: the new side's
// path when two paths are compared, else the paths of the working tree.
func diffConfigPaths(base string, paths []string) []string {
	if base == "" && len(paths) == 2 {
		return paths[1:]
	}
	return paths
}

// DiffSides reads the two sides of a diff: the working tree's manifests under paths
// against revision base (RevisionSides), or without base the two paths OLD and NEW
// (PathSides); anything but two paths is then a usage error.
func DiffSides(ctx context.Context, base string, paths []string, stdin io.Reader, maxBytes int, keep func(string) bool) ([2]Side, error) {
	if base != "" {
		return RevisionSides(ctx, base, paths, maxBytes, keep)
	}
	if len(paths) != 2 {
		return [2]Side{}, fmt.Errorf("diff compares two paths, OLD and NEW (got %d), or the working tree with a revision: scangate diff --base REV [PATH...]", len(paths))
	}
	return PathSides(paths[0], paths[1], stdin, maxBytes, keep)
}
