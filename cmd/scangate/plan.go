package main

import (
	"fmt"
	"io"
	"os"
	"strings"

	"github.com/spf13/cobra"

	"github.com/scangate/scangate/internal/advisor"
	"github.com/scangate/scangate/internal/report"
	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

// maxHorizon bounds --horizon: fifty years of months is already far past any plan.
const maxHorizon = 600

func newPlan() *cobra.Command {
	var table, segRows, today, svg string
	var fixed bool
	var horizon int
	cmd := &cobra.Command{
		Use:   "plan MANIFEST",
		Short: "Show each table's layout, a what-if sweep, the recommended layout and a growth forecast",
		Long: "plan prints, for each table of one manifest (or --table), its segment layout today,\n" +
			"a what-if sweep over segment capacities and partition layouts with the Pareto front\n" +
			"of fixed ms per scan against refresh memory, the recommended layout with the\n" +
			"manifest snippet that produces it, and a month-by-month forecast of when growth\n" +
			"breaks each budget. MANIFEST is a file or - for standard input.\n" +
			"Exit codes: 0 planned, 2 invalid input or usage.",
		Example: "  scangate plan testdata/demo/meter-telemetry.yaml --table meter_reads\n" +
			"  scangate plan model.yaml --segment-rows 8Mi,16Mi,32Mi --horizon 36\n" +
			"  scangate plan model.yaml --fixed-segment-rows --svg plan.svg",
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			set := advisor.Settings{FixedSegmentRows: fixed}
			var err error
			if set.Capacities, err = parseCapacities(segRows); err != nil {
				return usageError(err)
			}
			if horizon < 1 || horizon > maxHorizon {
				return usageError(fmt.Errorf("--horizon %d: give a number of months from 1 to %d", horizon, maxHorizon))
			}
			cfg, err := runConfig(today)
			if err != nil {
				return usageError(err)
			}
			opt := report.PlanOptions{Today: cfg.Today, Horizon: horizon}
			m, err := loadOne(args[0], cmd.InOrStdin(), cmd.ErrOrStderr())
			if err != nil {
				return err
			}
			idx, err := pickTables(m, table)
			if err != nil {
				return usageError(err)
			}
			plans := advisor.Plans(m, idx, set, opt.Today, opt.Horizon)
			if svg != "" {
				if err := writeFileAtomic(svg, report.PlanSVG(m, plans)); err != nil {
					return usageError(err)
				}
			}
			_, err = io.WriteString(cmd.OutOrStdout(), report.PlanText(m, plans, opt))
			return err
		},
	}
	f := cmd.Flags()
	f.StringVar(&table, "table", "", "plan only this table")
	f.StringVar(&segRows, "segment-rows", "", "segment capacities to try, comma-separated counts (default 1Mi,2Mi,4Mi,8Mi,16Mi; today's is always added)")
	f.BoolVar(&fixed, "fixed-segment-rows", false, "the deployment cannot change engine.segment_rows: recommend partition changes only")
	f.StringVar(&today, "today", "", "the date the forecast counts from, YYYY-MM-DD (default: today, UTC)")
	f.IntVar(&horizon, "horizon", 24, "months to forecast")
	f.StringVar(&svg, "svg", "", "also draw segment fill and the sweep's front per table to this SVG file")
	return cmd
}

// parseCapacities reads --segment-rows: counts as manifests write them, comma-separated.
func parseCapacities(s string) ([]int64, error) {
	if s == "" {
		return nil, nil
	}
	var out []int64
	for _, part := range strings.Split(s, ",") {
		part = strings.TrimSpace(part)
		n, err := schema.ParseCount(part)
		if err != nil {
			return nil, fmt.Errorf("--segment-rows %q: %v", s, err)
		}
		if n < 1 {
			return nil, fmt.Errorf("--segment-rows %q: a segment holds at least 1 row, got %q", s, part)
		}
		out = append(out, n)
	}
	return out, nil
}

// loadOne reads and validates one manifest; schema problems are printed to stderr in
// the check command's style, each at its line and column, and end the run with exit 2.
func loadOne(path string, stdin io.Reader, stderr io.Writer) (*schema.Manifest, error) {
	var in input
	if path == "-" {
		data, err := readLimited(stdin, limits.MaxFileBytes)
		in = input{name: stdinName, data: data, err: err}
	} else {
		info, err := os.Stat(path)
		if err != nil {
			return nil, usageError(fmt.Errorf("cannot read %s: %v", path, unwrapPath(err)))
		}
		if info.IsDir() {
			return nil, usageError(fmt.Errorf("%s is a directory; plan reads one manifest file", path))
		}
		in = readFile(path, limits.MaxFileBytes)
	}
	if in.err != nil {
		return nil, usageError(fmt.Errorf("cannot read %s: %v", in.name, in.err))
	}
	m, err := schema.Load(in.name, in.data, limits)
	if err == nil {
		return m, nil
	}
	se, ok := err.(*schema.Error)
	if !ok {
		return nil, usageError(fmt.Errorf("%s: %v", in.name, err))
	}
	for _, f := range rules.SchemaFindings(se) {
		loc := f.File
		if f.Pos.Line > 0 {
			loc = fmt.Sprintf("%s:%d:%d", f.File, f.Pos.Line, f.Pos.Col)
		}
		fmt.Fprintf(stderr, "%s: error: %s [%s]\n", loc, f.Message, f.Rule)
	}
	return nil, usageError(fmt.Errorf("%s breaks the manifest schema; fix the errors above and plan again", in.name))
}

// pickTables is every table, or the one --table names.
func pickTables(m *schema.Manifest, name string) ([]int, error) {
	var idx, all []int
	var names []string
	for i, t := range m.Tables {
		all = append(all, i)
		names = append(names, t.Name)
		if t.Name == name {
			idx = append(idx, i)
		}
	}
	if name == "" {
		return all, nil
	}
	if len(idx) == 0 {
		return nil, fmt.Errorf("--table %q: %s has no such table; it has %s", name, m.File, strings.Join(names, ", "))
	}
	return idx, nil
}
