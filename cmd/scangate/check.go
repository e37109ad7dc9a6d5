package main

import (
	"fmt"
	"os"
	"runtime"
	"sort"
	"sync"

	"github.com/scangate/scangate/internal/analysis"
	"github.com/scangate/scangate/internal/units"

	"github.com/mattn/go-isatty"
	"github.com/spf13/cobra"

	"github.com/scangate/scangate/internal/report"
	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

func newCheck() *cobra.Command {
	var failOn, output, today, configFile, baselineFile string
	var formats []string
	var noColor, manifestsOnly bool
	cmd := &cobra.Command{
		Use:   "check [PATH...]",
		Short: "Validate manifests and report segment-layout findings",
		Long: "check validates each manifest against the manifest JSON Schema, computes every\n" +
			"table's segment layout and scan cost, and prints graded findings with fix hints.\n" +
			"PATH is a file, a directory (every *.yaml, *.yml, *.json below it that holds\n" +
			"\"format:\"), or - for standard input; the default is the current directory.\n\n" +
			"Formats: text, json, sarif, github, markdown, junit. --format NAME writes to\n" +
			"standard output (or to --output), --format NAME=FILE to a file; repeat it for\n" +
			"several. Without --format: text, plus github when GITHUB_ACTIONS=true.",
		Example: "  scangate check testdata/demo\n" +
			"  scangate check --fail-on warning models/\n" +
			"  scangate check --format text --format sarif=out/scangate.sarif .\n" +
			"  cat model.yaml | scangate check -",
		RunE: func(cmd *cobra.Command, args []string) error {
			threshold, err := parseFailOn(failOn)
			if err != nil {
				return usageError(err)
			}
			proj, err := loadProject(configFile, args)
			if err != nil {
				return configError(cmd, err)
			}
			cfg, err := proj.rulesConfig(today)
			if err != nil {
				return configError(cmd, err)
			}
			outs, err := parseOutputs(formats, output, os.Getenv("GITHUB_ACTIONS") == "true")
			if err != nil {
				return usageError(err)
			}
			inputs, err := collectFiltered(args, cmd.InOrStdin(), limits.MaxFileBytes, proj.keep)
			if err != nil {
				return usageError(err)
			}
			if manifestsOnly {
				inputs = onlyManifests(inputs)
			}
			files, findings := checkAll(inputs, cfg, proj.config, printsTables(outs))
			res := &report.Result{
				Version:  moduleVersion(),
				FailOn:   threshold,
				Files:    files,
				Findings: findings,
				Summary:  report.Summarize(files),
			}
			if baselineFile != "" {
				if res.Baseline, err = applyBaseline(baselineFile, res); err != nil {
					return usageError(err)
				}
			}
			stdout := cmd.OutOrStdout()
			if err := emit(outs, res, stdout, useColor(stdout, noColor)); err != nil {
				return usageError(err)
			}
			return exitFor(res)
		},
	}
	cmd.Flags().StringVar(&failOn, "fail-on", "error", "exit 1 when a finding is at or above this severity: error, warning, note or never")
	cmd.Flags().BoolVar(&noColor, "no-color", false, "never colour the output (NO_COLOR does the same)")
	cmd.Flags().BoolVar(&manifestsOnly, "manifests-only", false, "skip named files that do not hold \"format:\" (for hooks that pass every staged YAML file)")
	cmd.Flags().StringArrayVar(&formats, "format", nil, "report format NAME or NAME=FILE (text, json, sarif, github, markdown, junit); repeatable")
	cmd.Flags().StringVar(&output, "output", "", "write the report that would go to standard output to this file instead (atomically)")
	cmd.Flags().StringVar(&today, "today", "", "the date waivers and forecasts are judged on, YYYY-MM-DD (default: today, UTC)")
	cmd.Flags().StringVar(&configFile, "config", "", "project config to use (default: the nearest "+schema.ConfigFile+" from the first path up to the repository root)")
	cmd.Flags().StringVar(&baselineFile, "baseline", "", "baseline file: findings recorded there are listed but do not fail the run")
	return cmd
}

// onlyManifests drops readable inputs that are not manifests, as a directory walk does.
func onlyManifests(inputs []input) []input {
	out := inputs[:0]
	for _, in := range inputs {
		if data, err := in.bytes(); err != nil || manifestMarker.Match(data) {
			out = append(out, in)
		}
	}
	return out
}

func usageError(err error) error { return &exitError{code: exitInvalid, msg: err.Error()} }

// configError reports an invalid project config the way manifest errors are reported:
// every problem at its line and column, then exit 2.
func configError(cmd *cobra.Command, err error) error {
	if se, ok := err.(*schema.Error); ok {
		for _, p := range se.Problems {
			fmt.Fprintf(cmd.ErrOrStderr(), "%s:%d:%d: error: %s [config]\n", se.File, p.Pos.Line, p.Pos.Col, p.Text())
		}
		return &exitError{code: exitInvalid, msg: "the project config is invalid; fix it and run again"}
	}
	return usageError(err)
}

// checkAll loads and checks every input on a bounded pool of workers and returns the
// files in input order and the findings sorted; unreadable and invalid files become
// schema findings and never stop the others. The run's partition budget
// (limits.MaxRunPartitions) is spent in input order, the same on every machine. It
// consumes the inputs: their bytes are released as they are loaded. Files keep their
// analysed tables only with keepTables (see printsTables).
func checkAll(inputs []input, cfg rules.Config, proj *schema.ProjectConfig, keepTables bool) ([]report.File, []rules.Finding) {
	files := make([]report.File, len(inputs))
	found := make([][]rules.Finding, len(inputs))
	root := repositoryRoot()
	budget := newRunBudget(limits.MaxRunPartitions)
	// Each file is read, loaded and checked by one worker, so only the files in flight
	// hold their bytes and parse trees. A run of thousands of files keeps no more than
	// their findings, and their tables when a report prints them.
	parallel(len(inputs), func(i int) {
		f, m, fs := loadInput(inputs[i], root, proj)
		inputs[i].data = nil
		var n int64
		if m != nil {
			n = m.Partitions()
		}
		if !budget.spend(i, n) {
			f.Invalid, m = true, nil
			fs = []rules.Finding{{
				Rule: rules.Schema.ID, Severity: rules.Error, File: f.Name, Subject: "run budget",
				Message: fmt.Sprintf("not checked: its %s partitions would take the run past %s partitions; check fewer files at once or raise --max-run-partitions",
					units.Num(n), units.Num(limits.MaxRunPartitions)),
			}}
		}
		if m != nil {
			var md *analysis.Model
			md, fs = rules.Check(m, cfg)
			f.Analysed = len(md.Tables)
			if keepTables {
				f.Tables = md.Tables
			}
		}
		files[i], found[i] = f, fs
	})
	var findings []rules.Finding
	for _, fs := range found {
		findings = append(findings, fs...)
	}
	sort.SliceStable(findings, func(i, j int) bool { return rules.Less(findings[i], findings[j]) })
	return files, findings
}

// runBudget is the run's partition budget, spent in input order whatever order the
// workers finish loading in, so the same files are refused on every machine.
type runBudget struct {
	mu    sync.Mutex
	turn  *sync.Cond
	next  int // the input whose turn it is
	spent int64
	limit int64
}

func newRunBudget(limit int64) *runBudget {
	b := &runBudget{limit: limit}
	b.turn = sync.NewCond(&b.mu)
	return b
}

// spend takes n partitions for input i once every input before it has spent its own,
// and reports whether they fitted. Every input spends exactly once (0 for one that did
// not load). parallel hands inputs out in order, so an earlier input is always held by
// a worker that will reach here: the wait ends.
func (b *runBudget) spend(i int, n int64) bool {
	b.mu.Lock()
	defer b.mu.Unlock()
	for b.next != i {
		b.turn.Wait()
	}
	ok := b.spent+n <= b.limit
	if ok {
		b.spent += n
	}
	b.next++
	b.turn.Broadcast()
	return ok
}

// parallel runs work(i) for i in 0..n-1 on at most GOMAXPROCS goroutines.
func parallel(n int, work func(i int)) {
	jobs := make(chan int)
	var wg sync.WaitGroup
	for w := 0; w < min(runtime.GOMAXPROCS(0), max(n, 1)); w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range jobs {
				work(i)
			}
		}()
	}
	for i := 0; i < n; i++ {
		jobs <- i
	}
	close(jobs)
	wg.Wait()
}

// loadInput reads and validates one input; an invalid one returns its schema findings and
// no manifest.
func loadInput(in input, root string, proj *schema.ProjectConfig) (report.File, *schema.Manifest, []rules.Finding) {
	f := report.File{Name: in.name, URI: repositoryPath(root, in.name)}
	data, err := in.bytes()
	if err != nil {
		f.Invalid = true
		return f, nil, []rules.Finding{{
			Rule: rules.Schema.ID, Severity: rules.Error, File: in.name, Subject: "read",
			Message: fmt.Sprintf("cannot read the file: %v", err),
		}}
	}
	m, err := schema.LoadWith(in.name, data, schema.Options{Limits: limits, Project: proj})
	if err != nil {
		f.Invalid = true
		if se, ok := err.(*schema.Error); ok {
			return f, nil, rules.SchemaFindings(se)
		}
		return f, nil, []rules.Finding{{Rule: rules.Schema.ID, Severity: rules.Error, File: in.name, Message: err.Error()}}
	}
	f.Model = m.Model
	return f, m, nil
}

// parseFailOn reads --fail-on: the lowest severity that fails the run, 0 for never.
func parseFailOn(s string) (rules.Severity, error) {
	if s == "never" {
		return 0, nil
	}
	sev, err := rules.ParseSeverity(s)
	if err != nil {
		return 0, fmt.Errorf("--fail-on %q: use error, warning, note or never", s)
	}
	return sev, nil
}

// exitFor is 2 when any input was invalid, 1 when a finding reaches the threshold, else 0.
func exitFor(r *report.Result) error {
	switch {
	case r.Summary.Invalid > 0:
		return &exitError{code: exitInvalid}
	case r.Failed():
		return &exitError{code: exitFindings}
	}
	return nil
}

// useColor colours only a terminal, and never with --no-color or NO_COLOR set.
// CLICOLOR_FORCE=1 colours any output (a common convention; tests use it).
func useColor(w any, noColor bool) bool {
	if noColor || os.Getenv("NO_COLOR") != "" {
		return false
	}
	if v := os.Getenv("CLICOLOR_FORCE"); v != "" && v != "0" {
		return true
	}
	f, ok := w.(*os.File)
	return ok && (isatty.IsTerminal(f.Fd()) || isatty.IsCygwinTerminal(f.Fd()))
}
