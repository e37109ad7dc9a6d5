package report

import (
	"fmt"
	"slices"
	"strings"

	"github.com/scangate/scangate/internal/escape"
	"github.com/scangate/scangate/internal/units"

	"github.com/scangate/scangate/internal/advisor"
	"github.com/scangate/scangate/internal/analysis"
	"github.com/scangate/scangate/internal/layout"
	"github.com/scangate/scangate/schema"
)

// planWidth is the terminal width the plan is written for; only the manifest snippet,
// which must stay exact, may run longer.
const planWidth = 80

// planText writes the plan of every table for an 80-column terminal, separated by blank
// lines. Names from the manifest reach it in headings, paragraphs (para), grid cells
// (grid) and the snippet; each of those escapes what it writes (escape.Text).
func planText(doc *Plan) string {
	var b strings.Builder
	n := 0
	for _, f := range doc.Files {
		for _, p := range f.Plans {
			if n > 0 {
				b.WriteString("\n")
			}
			n++
			renderPlan(&b, doc, f.Manifest, p)
		}
	}
	return b.String()
}

func renderPlan(b *strings.Builder, doc *Plan, m *schema.Manifest, p analysis.TablePlan) {
	e := m.Engine
	t := p.Spec
	fmt.Fprintf(b, "== %s (%s:%d:%d)\n", escape.Text(t.Name), escape.Text(m.File), t.Pos.Line, t.Pos.Col)
	if p.Problems != "" {
		fmt.Fprintf(b, "   %s\n", escape.Text(p.Problems))
		return
	}
	sw := p.Sweep
	now := &sw.Candidates[sw.Today]
	growth := "no growth"
	if t.GrowthPerYear != 0 {
		growth = fmt.Sprintf("growing %s a year", units.Pct(t.GrowthPerYear))
	}
	para(b, "   ", fmt.Sprintf("%s rows, %s; segments of %s rows, %d cores, %s ms per segment per scan.",
		units.Count(now.Rows), growth, units.Count(e.SegmentRows), e.Cores, units.Ms(e.SegmentOverheadMs)))

	b.WriteString("\nLayout today\n")
	renderGroups(b, t, e.SegmentRows)
	l := now.Layout
	fmt.Fprintf(b, "   segments %s, ideal %s, excess %s, fill %s\n", units.Num(l.Segments), units.Num(l.Ideal), units.Num(l.Excess), units.Pct(l.Fill))
	if l.ClosedExcess != l.Excess {
		fmt.Fprintf(b, "   excess outside the open partition: %s (what truncated-segments counts)\n", units.Num(l.ClosedExcess))
	}
	budgets := m.Budgets.Override(t.Budgets)
	var rows [][]string
	row := func(name, value, limitName string, limit *float64, fig float64, unit func(float64) string) {
		r := []string{name, value, "", ""}
		if limit != nil && *limit > 0 {
			r[2], r[3] = limitName+" "+unit(*limit), units.Pct(fig / *limit)
		}
		rows = append(rows, r)
	}
	row("fixed CPU per full scan", msText(l.FixedMs), "budget", budgets.ScanOverheadMs, l.FixedMs, msText)
	if now.Widest != "" {
		row("scan wall, "+now.Widest, msText(now.WallMs), "budget", budgets.ScanMs, now.WallMs, msText)
	} else {
		rows = append(rows, []string{"scan wall", "-", "needs column profiles", ""})
	}
	if sw.Profiled {
		name := "refresh peak (model)"
		if len(t.Columns) == 0 {
			name = "refresh peak (others)" // this table's own size is unknown without profiles
		}
		row(name, units.Size(now.Peak), "engine", bytesLimit(e.Memory), now.Peak, units.Size)
		if p.RefreshBudget != nil {
			row("", "", "budget", p.RefreshBudget, now.Peak, units.Size)
		}
	}
	grid(b, "   ", []column{{head: "figure", clip: true}, {head: "today", right: true}, {head: "limit"}, {head: "share", right: true}}, rows)
	renderRefresh(b, p.TablePlan, now, e)

	renderSweep(b, sw, e.SegmentRows)
	renderRecommendation(b, p, now)
	renderForecast(b, doc, p)
}

// renderRefresh writes what a full and (when declared) the routine refresh of the table
// rebuild, how long each takes, and the model's peak during each.
func renderRefresh(b *strings.Builder, p advisor.TablePlan, now *advisor.Candidate, e schema.Engine) {
	sw := p.Sweep
	par := e.RefreshWorkers()
	fmt.Fprintf(b, "   refresh, %d %s at a time, %s rows a second each:\n", par, units.Plural(int64(par), "partition", "partitions"), units.Count(int64(e.RefreshRowsPerS)))
	peak := func(v *float64) string {
		if !sw.Profiled || v == nil {
			return "-"
		}
		return units.Size(*v)
	}
	rows := [][]string{{"full", units.Num(int64(now.Full.Partitions)), units.Count(now.Full.Rows), units.Seconds(now.Full.Seconds), peak(&now.Peak)}}
	if !sw.Window.Whole {
		r := now.Routine
		name := fmt.Sprintf("routine, last %s", units.Plural(int64(p.Spec.Routine.RecentPartitions), "partition", units.Num(int64(p.Spec.Routine.RecentPartitions))+" partitions"))
		if d := int64(p.Spec.Routine.RecentDays); d > 0 {
			name = fmt.Sprintf("routine, newest %s", units.Plural(d, "day", units.Num(d)+" days"))
		}
		rows = append(rows, []string{name, units.Num(int64(r.Partitions)), units.Count(r.Rows), units.Seconds(r.Seconds), peak(p.RoutinePeak)})
	}
	grid(b, "     ", []column{{head: "refresh", clip: true}, {head: "partitions", right: true}, {head: "rows", right: true}, {head: "time", right: true}, {head: "peak (model)", right: true}}, rows)
}

// rebuildWords is what one refresh rebuilds: "3 partitions, 12.3M rows, 4.11 s".
func rebuildWords(r layout.Rebuild) string {
	return fmt.Sprintf("%s %s, %s rows, %s", units.Num(int64(r.Partitions)), units.Plural(int64(r.Partitions), "partition", "partitions"), units.Count(r.Rows), units.Seconds(r.Seconds))
}

// horizonWords is the end of a forecast with its length: "2027-03 (12-month horizon)".
func horizonWords(doc *Plan) string {
	return fmt.Sprintf("%s (%d-month horizon)", advisor.Month(advisor.AddMonths(doc.Today, doc.Horizon)), doc.Horizon)
}

// msText writes a scan figure or budget with its unit. Each limit is written in its own
// figure's unit: guessing it from the size wrote a 2,000,000 ms budget as 1.91 MiB and a
// 1 B memory budget as 1.0 ms.
func msText(v float64) string { return units.Ms(v) + " ms" }

func bytesLimit(n int64) *float64 {
	if n <= 0 {
		return nil
	}
	v := float64(n)
	return &v
}

// group is one line of the layout today: a tier, the even split, one listed partition.
type group struct {
	label            string
	count            int
	minRows, maxRows int64
	minSeg, maxSeg   int64
	minFill, maxFill float64 // of each partition's last segment
	open             bool
}

func renderGroups(b *strings.Builder, t schema.Table, s int64) {
	parts, err := layout.Expand(t)
	if err != nil {
		return
	}
	var gs []group
	for n, p := range parts {
		label := p.Name()
		switch {
		case p.Tier >= 0:
			label = string(t.Partitions.Tiers[p.Tier].Grain)
		case t.Partitions.Scheme == schema.SchemeEven:
			label = "even"
		}
		seg := layout.Segments(p.Rows, s)
		fill := 0.0
		if seg > 0 {
			fill = float64(p.Rows-(seg-1)*s) / float64(s)
		}
		k := len(gs) - 1
		sameTier := k >= 0 && p.Tier >= 0 && parts[n-1].Tier == p.Tier
		if sameTier || (k >= 0 && p.Tier < 0 && label == "even") {
			g := &gs[k]
			g.count++
			g.minRows, g.maxRows = min(g.minRows, p.Rows), max(g.maxRows, p.Rows)
			g.minSeg, g.maxSeg = min(g.minSeg, seg), max(g.maxSeg, seg)
			g.minFill, g.maxFill = min(g.minFill, fill), max(g.maxFill, fill)
			continue
		}
		gs = append(gs, group{label, 1, p.Rows, p.Rows, seg, seg, fill, fill, p.Open})
	}
	const maxLines = 12 // a long list is summarised; the sweep and snippet carry the rest
	rows := [][]string{}
	for n, g := range gs {
		if n == maxLines && len(gs) > maxLines+1 {
			rows = append(rows, []string{fmt.Sprintf("... %d more", len(gs)-maxLines), "", "", "", ""})
			break
		}
		rows = append(rows, []string{g.label, units.Num(int64(g.count)), span(units.Count(g.minRows), units.Count(g.maxRows)),
			span(units.Num(g.minSeg), units.Num(g.maxSeg)), span(units.Pct(g.minFill), units.Pct(g.maxFill))})
	}
	grid(b, "   ", []column{{head: "partitions", clip: true}, {head: "count", right: true},
		{head: "rows each"}, {head: "segments"}, {head: "last segment full"}}, rows)
	if len(parts) > 0 && parts[0].Open {
		fmt.Fprintf(b, "   the newest %s is the open partition (still filling; not counted as excess)\n", escape.Text(gs[0].label))
	}
}

// span writes a range, or one value when both ends agree.
func span(lo, hi string) string {
	if lo == hi {
		return lo
	}
	return lo + ".." + hi
}

// clip shortens s to n runes with a trailing "~".
func clip(s string, n int) string {
	r := []rune(s)
	if len(r) <= n {
		return s
	}
	return string(r[:n-1]) + "~"
}

func renderSweep(b *strings.Builder, sw *advisor.Sweep, today int64) {
	mem := "less refresh memory"
	if !sw.Profiled {
		mem = "smaller segments (without column profiles the segment size stands in for refresh memory)"
	}
	fmt.Fprintf(b, "\nWhat-if sweep: %d layouts\n", len(sw.Candidates))
	para(b, "   ", fmt.Sprintf("* Pareto front: fewer fixed ms per scan against %s; > recommended; = today; ! breaks a budget; # segment size fixed", mem))
	var rows [][]string
	for k := range sw.Candidates {
		c := &sw.Candidates[k]
		mark := []byte("   ")
		if c.Front {
			mark[0] = '*'
		}
		switch {
		case k == sw.Recommended:
			mark[1] = '>'
		case c.Today():
			mark[1] = '='
		}
		switch {
		case c.Locked:
			mark[2] = '#'
		case !c.Fits:
			mark[2] = '!'
		}
		wall, peak := "-", "-"
		if c.Widest != "" {
			wall = units.Ms(c.WallMs)
		}
		if sw.Profiled {
			peak = units.Size(c.Peak)
		}
		rows = append(rows, []string{string(mark), units.Count(c.SegmentRows), c.Label, units.Num(int64(c.Layout.Partitions)),
			units.Num(c.Layout.Segments), units.Ms(c.Layout.FixedMs), wall, peak})
	}
	grid(b, "   ", []column{{}, {head: "seg"}, {head: "partitions", clip: true}, {head: "parts", right: true},
		{head: "segs", right: true}, {head: "fixed ms", right: true}, {head: "wall ms", right: true}, {head: "refresh", right: true}}, rows)
}

// renderRecommendation prints the table's one recommendation, the same check quotes in
// its hints (analysis.Recommendation), with its figures and the snippet that makes it.
func renderRecommendation(b *strings.Builder, p analysis.TablePlan, now *advisor.Candidate) {
	sw := p.Sweep
	b.WriteString("\n")
	if p.Rec == nil {
		line := "Recommended: " + strings.Replace(p.Keep, "the recommendation keeps", "keep", 1)
		if c, _, ok := sw.Pick(); ok && c.Today() && len(c.Warnings) > 0 {
			line += " (still warns: " + strings.Join(c.Warnings, "; ") + ")"
		}
		para(b, "", line+".")
		return
	}
	c := p.Rec.Candidate
	if p.Rec.Fits {
		para(b, "", "Recommended: "+c.Change+".")
		para(b, "   ", "(the layout that fits every budget with the fewest warnings left, at today's segment size if any fits, else the smallest, keeping the most partitions)")
	} else {
		para(b, "", "No layout in the sweep fits every budget. Closest: "+c.Change+".")
		para(b, "   ", "(the layout nearest every budget at once, by the sum of the shares by which it passes each, among those that break no budget today's layout keeps and make none worse)")
	}
	fmt.Fprintf(b, "   %-15s %s -> %s\n", "segments", units.Num(now.Layout.Segments), units.Num(c.Layout.Segments))
	fmt.Fprintf(b, "   %-15s %s -> %s ms per scan (%s ms)\n", "fixed CPU", units.Ms(now.Layout.FixedMs), units.Ms(c.Layout.FixedMs), units.Signed(c.Layout.FixedMs-now.Layout.FixedMs))
	if c.Widest != "" {
		fmt.Fprintf(b, "   %-15s %s -> %s ms (%s)\n", "scan wall", units.Ms(now.WallMs), units.Ms(c.WallMs), clip(escape.Text(c.Widest), 30))
	}
	if sw.Profiled {
		fmt.Fprintf(b, "   %-15s %s -> %s\n", "refresh peak", units.Size(now.Peak), units.Size(c.Peak))
	}
	fmt.Fprintf(b, "   %-15s %s -> %s\n", "partitions", units.Num(int64(now.Layout.Partitions)), units.Num(int64(c.Layout.Partitions)))
	fmt.Fprintf(b, "   %-15s %s -> %s\n", "full refresh", units.Seconds(now.Full.Seconds), units.Seconds(c.Full.Seconds))
	if !sw.Window.Whole {
		para(b, "   ", fmt.Sprintf("%-15s %s -> %s", "routine refresh", rebuildWords(now.Routine), rebuildWords(c.Routine)))
	}
	if r := advisor.RoutineWords(now.Routine, c.Routine); r != "" {
		para(b, "   ", r)
	}
	for _, miss := range c.Misses {
		para(b, "   ", "still breaks: "+miss)
	}
	for _, w := range c.Warnings {
		para(b, "   ", "still warns: "+w)
	}
	if p.Rec.Growth && p.Rec.HoldsThrough != "" {
		para(b, "   ", "It "+p.Rec.Holds()+".")
	}
	if c.Engine {
		para(b, "   ", "segment_rows is an engine setting: every table of the model moves with it (the sweep checked that none breaks its scan budgets).")
	}
	b.WriteString("\n")
	for _, line := range strings.Split(strings.TrimRight(advisor.Snippet(c), "\n"), "\n") {
		b.WriteString("   " + escape.Text(line) + "\n")
	}
}

func renderForecast(b *strings.Builder, doc *Plan, p analysis.TablePlan) {
	fc := p.Now
	if fc == nil {
		return
	}
	end := advisor.Month(advisor.AddMonths(doc.Today, doc.Horizon))
	b.WriteString("\n")
	if p.Spec.GrowthPerYear == 0 {
		para(b, "", fmt.Sprintf("Forecast: no growth_per_year, so the table's own figures stay as today through %s.", end))
	} else {
		para(b, "", fmt.Sprintf("Forecast from %s for %d months at %s growth a year, today's layout:",
			doc.Today.Format("2006-01-02"), doc.Horizon, units.Pct(p.Spec.GrowthPerYear)))
	}
	if len(fc.Crossings) > 0 {
		var rows [][]string
		for _, c := range fc.Crossings {
			when := "already over today"
			switch {
			case c.Month < 0:
				when = fmt.Sprintf("not by %s (%s)", end, c.Format(c.Value))
			case c.Month > 0:
				when = fmt.Sprintf("%s (%s)", advisor.Month(c.Date), c.Format(c.Value))
			}
			rows = append(rows, []string{c.Name, c.Format(c.Limit), c.Format(c.Now), when})
		}
		grid(b, "   ", []column{{head: "budget", clip: true}, {head: "limit", right: true}, {head: "today", right: true}, {head: "first crossed"}}, rows)
	}
	if p.Spec.GrowthPerYear == 0 {
		return
	}
	// Every quarter, the last month and each month a budget is first crossed.
	months := []int{doc.Horizon}
	for t := 0; t < doc.Horizon; t += 3 {
		months = append(months, t)
	}
	for _, c := range fc.Crossings {
		if c.Month > 0 {
			months = append(months, c.Month)
		}
	}
	slices.Sort(months)
	months = slices.Compact(months)
	var rows [][]string
	for _, t := range months {
		pr := fc.Months[t]
		wall, peak := "-", "-"
		if pr.Widest != "" {
			wall = units.Ms(pr.WallMs)
		}
		if p.Sweep.Profiled {
			peak = units.Size(pr.Peak)
		}
		rows = append(rows, []string{advisor.Month(pr.Date), units.Count(pr.Rows), units.Num(pr.Layout.Segments), units.Ms(pr.Layout.FixedMs), wall, peak})
	}
	grid(b, "   ", []column{{head: "month"}, {head: "rows", right: true}, {head: "segs", right: true},
		{head: "fixed ms", right: true}, {head: "wall ms", right: true}, {head: "refresh", right: true}}, rows)
	if fc := p.TablePlan.Rec; fc != nil && p.Rec != nil {
		what := "The recommended layout"
		if !p.Rec.Fits {
			what = "The closest layout"
		}
		para(b, "", what+" "+holdsText(fc, horizonWords(doc))+".")
	}
	// Another layout that holds to the end is a second choice, never a rival: it is
	// named only when the recommendation itself does not hold that long.
	holds := p.Rec != nil && p.Rec.HoldsMonths >= doc.Horizon
	switch h := p.Holds; {
	case holds:
	case h == nil:
		para(b, "", fmt.Sprintf("No layout in the sweep holds every budget through %s; try larger capacities with --segment-rows or a shorter --horizon.", horizonWords(doc)))
	case h.Today():
		para(b, "", fmt.Sprintf("Today's layout holds every budget through %s.", horizonWords(doc)))
	case p.Rec == nil || h.Change != p.Rec.Candidate.Change:
		para(b, "", fmt.Sprintf("Alternative, not the recommendation, that holds every budget through %s: %s (%s segments, %s ms per scan today).", horizonWords(doc), h.Change, units.Num(h.Layout.Segments), units.Ms(h.Layout.FixedMs)))
	}
}

// holdsText says until when a layout's forecast stays within every budget.
func holdsText(fc *advisor.Forecast, end string) string {
	first := -1
	var cross advisor.Crossing
	for _, c := range fc.Crossings {
		if c.Month >= 0 && (first < 0 || c.Month < first) {
			first, cross = c.Month, c
		}
	}
	switch {
	case first < 0:
		return "holds every budget through " + end
	case first == 0:
		return fmt.Sprintf("is over the %s from the start (%s)", cross.Name, cross.Format(cross.Now))
	}
	return fmt.Sprintf("holds through %s; the %s of %s breaks in %s (%s)",
		advisor.Month(advisor.AddMonths(fc.Start, first-1)), cross.Name, cross.Format(cross.Limit), advisor.Month(cross.Date), cross.Format(cross.Value))
}

// para writes text word-wrapped to planWidth, every line starting with indent.
func para(b *strings.Builder, indent, text string) {
	line := indent
	for _, w := range strings.Fields(escape.Text(text)) {
		if len([]rune(line))+1+len([]rune(w)) > planWidth && strings.TrimSpace(line) != "" {
			b.WriteString(strings.TrimRight(line, " ") + "\n")
			line = indent + "  "
		}
		if strings.TrimSpace(line) != "" {
			line += " "
		}
		line += w
	}
	b.WriteString(line + "\n")
}

// column is one column of a grid: its heading, alignment, and whether it may be
// shortened to keep the grid within planWidth.
type column struct {
	head  string
	right bool
	clip  bool
}

// grid writes rows under their headings, each column as wide as its widest cell; when
// the lines would pass planWidth, the clippable column gives up the difference. Cells
// are escaped (escape.Text) before they are measured.
func grid(b *strings.Builder, indent string, cols []column, rows [][]string) {
	for _, r := range rows {
		for i := range r {
			r[i] = escape.Text(r[i])
		}
	}
	w := make([]int, len(cols))
	for i, c := range cols {
		w[i] = runes(c.head)
		for _, r := range rows {
			w[i] = max(w[i], runes(r[i]))
		}
	}
	total := runes(indent) + 2*(len(cols)-1)
	for _, x := range w {
		total += x
	}
	for i, c := range cols {
		if c.clip && total > planWidth {
			cut := min(total-planWidth, w[i]-8)
			w[i] -= cut
			total -= cut
		}
	}
	line := func(cells []string) {
		var l strings.Builder
		l.WriteString(indent)
		for i, cell := range cells {
			if i > 0 {
				l.WriteString("  ")
			}
			cell = clip(cell, w[i])
			pad := strings.Repeat(" ", w[i]-runes(cell))
			if cols[i].right {
				l.WriteString(pad + cell)
			} else {
				l.WriteString(cell + pad)
			}
		}
		b.WriteString(strings.TrimRight(l.String(), " ") + "\n")
	}
	heads := make([]string, len(cols))
	for i, c := range cols {
		heads[i] = c.head
	}
	line(heads)
	for _, r := range rows {
		line(r)
	}
}

func runes(s string) int { return len([]rune(s)) }
