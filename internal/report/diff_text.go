package report

import (
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"unicode/utf8"

	"github.com/scangate/scangate/internal/units"

	"github.com/fatih/color"

	"github.com/scangate/scangate/internal/change"
	"github.com/scangate/scangate/internal/escape"
	"github.com/scangate/scangate/rules"
)

// metric is one line of a table's before/after: the figure's name, both sides and the
// delta as printed, and whether the change makes it worse (+1), better (-1) or neither.
type metric struct {
	name, before, after, delta string
	worse                      int
}

const none = "–" // a side without the figure

// tableMetrics are the figures a table change shows, in order.
func tableMetrics(t change.TableChange) []metric {
	var b, a change.Figures
	if t.Before != nil {
		b = *t.Before
	}
	if t.After != nil {
		a = *t.After
	}
	side := func(f *change.Figures, s string) string {
		if f == nil {
			return none
		}
		return s
	}
	out := []metric{
		{"partitions", side(t.Before, units.Num(int64(b.Partitions))), side(t.After, units.Num(int64(a.Partitions))), signedCount(int64(a.Partitions - b.Partitions)), 0},
		{"segments", side(t.Before, units.Num(b.Segments)), side(t.After, units.Num(a.Segments)), signedCount(a.Segments - b.Segments), sign(float64(a.Segments - b.Segments))},
		{"fill", side(t.Before, units.Pct(b.Fill)), side(t.After, units.Pct(a.Fill)), points(t), 0},
		{"fixed ms per scan", side(t.Before, units.Ms(b.FixedMs)), side(t.After, units.Ms(a.FixedMs)), signedMs(t.AddedMs()), sign(change.Round(t.AddedMs()))},
	}
	if t.Before != nil && t.After != nil && t.Before.Fill > 0 && t.After.Fill > 0 {
		out[2].worse = -sign(change.Round(a.Fill - b.Fill)) // fuller segments are better
	}
	wall := metric{name: "scan wall ms", before: none, after: none, delta: none}
	if t.Before != nil && t.Before.ScanWallMs != nil {
		wall.before = units.Ms(*t.Before.ScanWallMs)
	}
	if t.After != nil && t.After.ScanWallMs != nil {
		wall.after = units.Ms(*t.After.ScanWallMs)
	}
	// A delta needs the scan on every side that has the table.
	if wb, wa, ok := wallPair(t); ok && (wall.before != none || wall.after != none) {
		wall.delta, wall.worse = signedMs(wa-wb), sign(change.Round(wa-wb))
	}
	return append(out, wall)
}

// totalMetrics are a model's totals before and after.
func totalMetrics(m change.ModelChange) []metric {
	b, a := zeroTotals(m.Before), zeroTotals(m.After)
	side := func(t *change.Totals, s string) string {
		if t == nil {
			return none
		}
		return s
	}
	out := []metric{
		{"tables", side(m.Before, units.Num(int64(b.Tables))), side(m.After, units.Num(int64(a.Tables))), signedCount(int64(a.Tables - b.Tables)), 0},
		{"partitions", side(m.Before, units.Num(int64(b.Partitions))), side(m.After, units.Num(int64(a.Partitions))), signedCount(int64(a.Partitions - b.Partitions)), 0},
		{"segments", side(m.Before, units.Num(b.Segments)), side(m.After, units.Num(a.Segments)), signedCount(a.Segments - b.Segments), sign(float64(a.Segments - b.Segments))},
		{"fixed ms per scan", side(m.Before, units.Ms(b.FixedMs)), side(m.After, units.Ms(a.FixedMs)), signedMs(a.FixedMs - b.FixedMs), sign(change.Round(a.FixedMs - b.FixedMs))},
	}
	if r, ok := refreshMetric(m); ok {
		out = append(out, r)
	}
	return out
}

// refreshMetric is the model's refresh peak before and after; ok is false when neither
// side has column profiles. The delta needs the peak on every side that has the model.
func refreshMetric(m change.ModelChange) (metric, bool) {
	peak := func(t *change.Totals) *float64 {
		if t == nil {
			return nil
		}
		return t.RefreshBytes
	}
	pb, pa := peak(m.Before), peak(m.After)
	if pb == nil && pa == nil {
		return metric{}, false
	}
	x := metric{name: "refresh peak", before: none, after: none, delta: none}
	var b, a float64
	if pb != nil {
		b, x.before = *pb, units.Size(*pb)
	}
	if pa != nil {
		a, x.after = *pa, units.Size(*pa)
	}
	if (m.Before == nil || pb != nil) && (m.After == nil || pa != nil) {
		x.delta, x.worse = signedBytes(a-b), sign(change.Round(a-b))
	}
	return x, true
}

// signedBytes writes a change of bytes with its sign: +1.2 GiB, -300 MiB, 0.
func signedBytes(d float64) string {
	switch {
	case change.Round(d) > 0:
		return "+" + units.Size(d)
	case change.Round(d) < 0:
		return "-" + units.Size(-d)
	}
	return "0"
}

func sign(x float64) int {
	switch {
	case x > 0:
		return 1
	case x < 0:
		return -1
	}
	return 0
}

// signedCount writes a count delta with its sign: +730, -12, 0.
func signedCount(n int64) string {
	if n > 0 {
		return "+" + units.Num(n)
	}
	return units.Num(n)
}

// signedMs writes a millisecond delta with its sign, rounded as reports round: +1,095,
// -1.5, 0.
func signedMs(x float64) string {
	x = change.Round(x)
	switch {
	case x > 0:
		return "+" + units.Ms(x)
	case x < 0:
		return units.Ms(x)
	}
	return "0"
}

// points writes the change of fill in percentage points: +4.5 pp, -39 pp, 0 pp; none
// when a side lacks the table.
func points(t change.TableChange) string {
	if t.Before == nil || t.After == nil {
		return none
	}
	p := change.Round(t.After.Fill-t.Before.Fill) * 100
	prec := 0
	if math.Abs(p) < 10 {
		prec = 1
	}
	s := strconv.FormatFloat(p, 'f', prec, 64)
	if s == "0.0" || s == "-0.0" || s == "-0" {
		return "0 pp"
	}
	if p > 0 {
		s = "+" + s
	}
	return s + " pp"
}

// writeDiffText writes the change for a terminal: one block per changed table with its
// figures before, after and the delta in aligned columns, the model totals, the new,
// worsened, improved and resolved findings in the GNU style, the gate (the limits
// crossed, each breach), the verdict and one
// summary line. Every string from the input is escaped (escape.Text) and the page is
// guarded for the CI runner that reads it (escape.Log).
func writeDiffText(w io.Writer, r *DiffResult, useColor bool) error {
	paint := painter(useColor)
	bold := paint(color.New(color.Bold))
	faint := paint(color.New(color.Faint))
	green := paint(color.New(color.FgGreen))
	sev := severityPaint(paint)
	red := sev[rules.Error]
	d := r.Diff
	var b strings.Builder
	fmt.Fprintf(&b, "%s %s -> %s\n", bold("scangate diff:"), escape.Text(d.Base), escape.Text(d.Head))
	finding := func(f rules.Finding, suffix string) {
		fmt.Fprintf(&b, "%s: %s: %s %s%s\n", bold(escape.Text(change.Location(f))), sev[f.Severity](f.Severity.String()), escape.Text(f.Message), faint("["+escape.Text(f.Rule)+"]"), suffix)
		for _, h := range f.Hints {
			fmt.Fprintf(&b, "    hint: %s\n", escape.Text(h))
		}
	}
	if len(d.Invalid) > 0 {
		b.WriteByte('\n')
		for _, inv := range d.Invalid {
			for _, f := range inv.Findings {
				finding(f, "")
			}
		}
		fmt.Fprintf(&b, "\n%s %s\n", red("cannot compare:"), invalidWords(d))
		_, err := io.WriteString(w, escape.Log(b.String()))
		return err
	}

	if files := fileLines(d); len(files) > 0 {
		b.WriteByte('\n')
		for _, l := range files {
			fmt.Fprintf(&b, "%s\n", l)
		}
	}

	// Every block shares one set of column widths, so the figures line up down the page.
	type block struct {
		title   string
		metrics []metric
	}
	var blocks []block
	for _, m := range d.Models {
		if m.Status == change.Unchanged {
			continue
		}
		for t := range m.TableChanges() {
			if t.Status == change.Unchanged {
				continue
			}
			blocks = append(blocks, block{fmt.Sprintf("%s: %s (%s%s)", escape.Text(m.Name), escape.Text(t.Name), t.Status, filesWords(t)), tableMetrics(t)})
		}
		blocks = append(blocks, block{fmt.Sprintf("%s: model total (%s)", escape.Text(m.Name), m.Status), totalMetrics(m)})
	}
	widths := [4]int{0, len("before"), len("after"), len("delta")}
	for _, bl := range blocks {
		for _, x := range bl.metrics {
			for i, s := range []string{x.name, x.before, x.after, x.delta} {
				widths[i] = max(widths[i], utf8.RuneCountInString(s))
			}
		}
	}
	pad := func(s string, w int) string { return strings.Repeat(" ", max(0, w-utf8.RuneCountInString(s))) + s }
	for _, bl := range blocks {
		fmt.Fprintf(&b, "\n%s\n", bold(bl.title))
		fmt.Fprintf(&b, "  %s  %s  %s  %s\n", strings.Repeat(" ", widths[0]), faint(pad("before", widths[1])), faint(pad("after", widths[2])), faint(pad("delta", widths[3])))
		for _, x := range bl.metrics {
			delta := pad(x.delta, widths[3])
			switch x.worse {
			case 1:
				delta = red(delta)
			case -1:
				delta = green(delta)
			}
			fmt.Fprintf(&b, "  %s%s  %s  %s  %s\n", x.name, strings.Repeat(" ", widths[0]-len(x.name)), pad(x.before, widths[1]), pad(x.after, widths[2]), delta)
		}
	}

	if len(d.Introduced) > 0 {
		fmt.Fprintf(&b, "\n%s\n", bold(fmt.Sprintf("new findings (%d):", len(d.Introduced))))
		for _, f := range d.Introduced {
			finding(f.Finding, "")
		}
	}
	for _, sec := range []struct {
		title string
		list  []change.FindingChange
	}{{"worsened findings", d.Worsened}, {"improved findings", d.Improved}} {
		if len(sec.list) == 0 {
			continue
		}
		fmt.Fprintf(&b, "\n%s\n", bold(fmt.Sprintf("%s (%d):", sec.title, len(sec.list))))
		for _, f := range sec.list {
			finding(f.Finding, faint(" ("+escape.Text(f.Moved())+")"))
		}
	}
	if len(d.Resolved) > 0 {
		fmt.Fprintf(&b, "\n%s\n", bold(fmt.Sprintf("resolved findings (%d):", len(d.Resolved))))
		for _, f := range d.Resolved {
			fmt.Fprintf(&b, "%s: %s %s: %s %s\n", bold(escape.Text(change.Location(f.Finding))), green("resolved"), f.Finding.Severity, escape.Text(f.Finding.Message), faint("["+escape.Text(f.Finding.Rule)+"]"))
		}
	}

	b.WriteByte('\n')
	if r.Failed() {
		fmt.Fprintf(&b, "%s %s\n", red("gate failed:"), strings.Join(r.crossed(), ", "))
		for _, br := range r.Breaches {
			fmt.Fprintf(&b, "  %s\n", escape.Text(br.Message))
		}
	} else {
		fmt.Fprintf(&b, "%s %s\n", green("gate passed:"), r.gateWords(func(s string) string { return s }))
	}
	fmt.Fprintf(&b, "%s\n%s\n", bold(escape.Text(d.Verdict())), escape.Text(r.diffSummary()))
	_, err := io.WriteString(w, escape.Log(b.String()))
	return err
}

// filesWords names where a table is: ", in b.yaml", or ", a.yaml -> b.yaml" when its
// file was renamed or it moved to another file. The paths are escaped (escape.Text).
func filesWords(t change.TableChange) string {
	base, head := escape.Text(t.BaseFile), escape.Text(t.HeadFile)
	switch {
	case t.BaseFile == "":
		return ", in " + head
	case t.HeadFile == "":
		return ", was in " + base
	case t.Moved:
		return ", " + base + " -> " + head
	}
	return ", in " + head
}

// fileLines says which files were added, removed or renamed, by repository path:
// "file renamed: a.yaml -> b.yaml (model sales)". Files kept at their path are left out.
// Paths and names are escaped (escape.Text).
func fileLines(d *change.Diff) []string {
	var out []string
	for _, f := range d.Files {
		model := escape.Text(f.Model)
		switch f.Status {
		case change.FileAdded:
			out = append(out, fmt.Sprintf("file added: %s (model %s)", escape.Text(f.Head.Key), model))
		case change.FileRemoved:
			out = append(out, fmt.Sprintf("file removed: %s (model %s)", escape.Text(f.Base.RepoPath()), model))
		case change.FileRenamed:
			out = append(out, fmt.Sprintf("file renamed: %s -> %s (model %s)", escape.Text(f.Base.RepoPath()), escape.Text(f.Head.Key), model))
		}
	}
	return out
}

// invalidWords says which side holds the files that could not be checked.
func invalidWords(d *change.Diff) string {
	var base, head int
	for _, inv := range d.Invalid {
		if inv.Side == "base" {
			base++
		} else {
			head++
		}
	}
	var parts []string
	if base > 0 {
		parts = append(parts, fmt.Sprintf("%s of the base (%s)", plural(base, "file"), escape.Text(d.Base)))
	}
	if head > 0 {
		parts = append(parts, fmt.Sprintf("%s of the head (%s)", plural(head, "file"), escape.Text(d.Head)))
	}
	verb := "break"
	if base+head == 1 {
		verb = "breaks"
	}
	return strings.Join(parts, " and ") + " " + verb + " the schema or cannot be read; fix the errors above and run again"
}
