package report

import (
	"bytes"
	"fmt"
	"html"
	"io"
	"math"
	"strings"

	"github.com/scangate/scangate/internal/escape"
	"github.com/scangate/scangate/internal/units"

	"github.com/scangate/scangate/internal/advisor"
	"github.com/scangate/scangate/internal/analysis"
	"github.com/scangate/scangate/internal/layout"
	"github.com/scangate/scangate/schema"
)

func init() {
	register(writers{
		traits: Traits{Name: "svg", Kinds: PlanReport},
		plan: func(w io.Writer, p *Plan, _ bool) error {
			_, err := w.Write(planSVG(p))
			return err
		},
	})
}

// SVG geometry: one band per table, a fill chart on the left and the sweep's
// ms-against-memory chart on the right, each with its captions above and its
// figures and legend below.
const (
	svgWidth    = 960
	bandH       = 340
	chartTop    = 60
	chartH      = 190
	fillLeft    = 50
	fillW       = 400
	frontLeft   = 560
	frontW      = 360
	plotPad     = 10  // points sit this far inside the frame, so their rings stay inside it
	textW       = 440 // room for a line of text under the fill chart
	maxFillBars = 400 // more partitions than this are drawn as averaged buckets
)

// planSVG draws, per table, the fill of each partition's segments and the sweep's
// fixed-ms-against-refresh-memory chart with the front and the recommendation, every
// number as text so it can be read without a viewer.
func planSVG(doc *Plan) []byte {
	var b bytes.Buffer
	type band struct {
		m *schema.Manifest
		p analysis.TablePlan
	}
	var plans []band
	var names []string
	for _, f := range doc.Files {
		names = append(names, f.Manifest.File)
		for _, p := range f.Plans {
			plans = append(plans, band{f.Manifest, p})
		}
	}
	h := bandH * max(len(plans), 1)
	fmt.Fprintf(&b, `<?xml version="1.0" encoding="UTF-8"?>`+"\n")
	fmt.Fprintf(&b, `<svg xmlns="http://www.w3.org/2000/svg" width="%d" height="%d" viewBox="0 0 %d %d" font-family="sans-serif" font-size="11">`+"\n", svgWidth, h, svgWidth, h)
	fmt.Fprintf(&b, "<title>scangate plan: %s</title>\n", esc(strings.Join(names, ", ")))
	fmt.Fprintf(&b, `<rect width="%d" height="%d" fill="#ffffff"/>`+"\n", svgWidth, h)
	for n, bd := range plans {
		m, p := bd.m, bd.p
		fmt.Fprintf(&b, `<g transform="translate(0,%d)">`+"\n", n*bandH)
		fmt.Fprintf(&b, `<text x="10" y="18" font-size="14" font-weight="bold">%s</text>`+"\n", fitEsc(p.Spec.Name, 14, (svgWidth-20)/1.15)) // bold runs wider
		if p.Problems == "" {
			fillChart(&b, m, p)
			frontChart(&b, p.Sweep)
		} else {
			fmt.Fprintf(&b, `<text x="10" y="40">%s</text>`+"\n", fitEsc(p.Problems, 11, svgWidth-20))
		}
		b.WriteString("</g>\n")
	}
	b.WriteString("</svg>\n")
	return b.Bytes()
}

// esc is every string the picture shows, as XML text (escape.XML).
func esc(s string) string { return escape.XML(s) }

// fitEsc is s made visible (escape.Text), cut to maxW pixels at font size px and
// escaped for XML.
func fitEsc(s string, px, maxW float64) string {
	return html.EscapeString(fit(escape.Text(s), px, maxW))
}

// f1 writes a coordinate with one decimal, so the file is the same on every machine.
func f1(x float64) string { return fmt.Sprintf("%.1f", x) }

// glyphW is a rune's width in em, an estimate for a sans-serif face: narrow
// punctuation and letters, capitals and digits, and East Asian wide runes apart
// (common practice; slightly wide on average, so an estimate that fits does fit).
func glyphW(r rune) float64 {
	switch {
	case strings.ContainsRune(" .,:;'|!ilj()[]-", r):
		return 0.36
	case r >= 'A' && r <= 'Z' || r >= '0' && r <= '9' || r == 'm' || r == 'w' || r == '%' || r == '@':
		return 0.72
	case r >= 0x1100 && (r <= 0x115f || r >= 0x2e80):
		return 1.0
	}
	return 0.6
}

// textWidth estimates the width of s in pixels at font size px.
func textWidth(s string, px float64) float64 {
	w := 0.0
	for _, r := range s {
		w += glyphW(r)
	}
	return w * px
}

// fit cuts s to at most maxW pixels at font size px, ending it with an ellipsis when cut.
func fit(s string, px, maxW float64) string {
	if textWidth(s, px) <= maxW {
		return s
	}
	room := maxW - textWidth("…", px)
	w := 0.0
	for i, r := range s {
		if w+glyphW(r)*px > room {
			return s[:i] + "…"
		}
		w += glyphW(r) * px
	}
	return s
}

// wrapPx breaks s at spaces into at most n lines of maxW pixels; the last is cut to fit.
func wrapPx(s string, px, maxW float64, n int) []string {
	var lines []string
	line := ""
	for _, word := range strings.Fields(s) {
		switch {
		case line == "":
			line = word
		case textWidth(line+" "+word, px) <= maxW || len(lines) == n-1:
			line += " " + word
		default:
			lines = append(lines, line)
			line = word
		}
	}
	return append(lines, fit(line, px, maxW))
}

// fillBar is one bar of the fill chart: one partition, or a bucket of them.
type fillBar struct {
	first, last string // partition names; equal for one partition
	fill        float64
}

func (f fillBar) name() string {
	if f.first == f.last {
		return f.first
	}
	return f.first + "–" + f.last
}

// drawOrder is the partitions as the fill chart shows them, left to right: time
// partitions oldest first (they expand newest first), the others as expanded.
func drawOrder(scheme schema.Scheme, parts []layout.Partition) []layout.Partition {
	if scheme != schema.SchemeTime {
		return parts
	}
	out := make([]layout.Partition, len(parts))
	for i, p := range parts {
		out[len(parts)-1-i] = p
	}
	return out
}

// orderCaption says how the bars are ordered, for each scheme.
func orderCaption(scheme schema.Scheme, n int) string {
	switch scheme {
	case schema.SchemeTime:
		return "oldest left, newest right"
	case schema.SchemeList:
		return "in the order listed, first left"
	case schema.SchemeEven:
		return fmt.Sprintf("part 1 left to part %s right", units.Num(int64(n)))
	}
	return "one partition"
}

// fillChart draws one bar per partition: how full its segments are,
// rows / (segments x segment_rows), with its name and fill where they fit, else the
// names at both ends and the lowest and highest fill.
func fillChart(b *bytes.Buffer, m *schema.Manifest, p analysis.TablePlan) {
	s := m.Engine.SegmentRows
	parts, err := layout.Expand(p.Spec)
	if err != nil || len(parts) == 0 {
		return
	}
	parts = drawOrder(p.Spec.Partitions.Scheme, parts)
	fills := make([]float64, len(parts))
	lo, hi := 0, 0
	for i, pt := range parts {
		if seg := layout.Segments(pt.Rows, s); seg > 0 {
			fills[i] = float64(pt.Rows) / (float64(seg) * float64(s))
		}
		if fills[i] < fills[lo] {
			lo = i
		}
		if fills[i] > fills[hi] {
			hi = i
		}
	}
	per := (len(fills) + maxFillBars - 1) / maxFillBars // partitions per bar
	var bars []fillBar
	for i := 0; i < len(fills); i += per {
		j := min(i+per, len(fills))
		sum := 0.0
		for _, f := range fills[i:j] {
			sum += f
		}
		bars = append(bars, fillBar{first: parts[i].Name(), last: parts[j-1].Name(), fill: sum / float64(j-i)})
	}
	note := orderCaption(p.Spec.Partitions.Scheme, len(parts))
	if per > 1 {
		note += fmt.Sprintf(", %d partitions per bar", per)
	}
	fmt.Fprintf(b, `<text x="%d" y="%d">%s</text>`+"\n", fillLeft, chartTop-22, fitEsc("segment fill by partition ("+units.Count(s)+" rows per segment)", 11, textW))
	fmt.Fprintf(b, `<text x="%d" y="%d" font-size="9">%s</text>`+"\n", fillLeft, chartTop-8, fitEsc(note, 9, fillW))
	axes(b, fillLeft, fillW, "100%", "0%")
	w := float64(fillW) / float64(len(bars))
	for i, f := range bars {
		bh := f.fill * chartH
		if f.fill > 0 {
			bh = max(bh, 1.5) // a nearly empty partition still shows its colour
		}
		fmt.Fprintf(b, `<rect class="bar" x="%s" y="%s" width="%s" height="%s" fill="%s"/>`+"\n",
			f1(fillLeft+float64(i)*w), f1(chartTop+chartH-bh), f1(barWidth(w)), f1(bh), fillColour(f.fill))
	}
	labelled := barLabels(b, bars, w)
	below := float64(chartTop + chartH)
	if !labelled {
		first, last := bars[0].first, bars[len(bars)-1].last
		fmt.Fprintf(b, `<text x="%d" y="%s" font-size="9">%s</text>`+"\n", fillLeft, f1(below+12), fitEsc(first, 9, fillW/2-6))
		fmt.Fprintf(b, `<text x="%d" y="%s" font-size="9" text-anchor="end">%s</text>`+"\n", fillLeft+fillW, f1(below+12), fitEsc(last, 9, fillW/2-6))
	}
	l := p.Sweep.Candidates[p.Sweep.Today].Layout
	fmt.Fprintf(b, `<text x="%d" y="%s">%s</text>`+"\n", fillLeft, f1(below+28), fitEsc(fmt.Sprintf("%s, %s (ideal %s), fill %s",
		counted(int64(l.Partitions), "partition"), counted(l.Segments, "segment"), units.Num(l.Ideal), units.Pct(l.Fill)), 11, textW))
	if !labelled && len(parts) > 1 {
		spread := fmt.Sprintf("lowest fill %s (%s), highest %s (%s)", units.Pct(fills[lo]), parts[lo].Name(), units.Pct(fills[hi]), parts[hi].Name())
		if units.Pct(fills[lo]) == units.Pct(fills[hi]) {
			spread = "every partition " + units.Pct(fills[lo]) + " full"
		}
		fmt.Fprintf(b, `<text x="%d" y="%s">%s</text>`+"\n", fillLeft, f1(below+43), fitEsc(spread, 11, textW))
	}
	fillLegend(b, below+62)
}

// barLabels writes each bar's name and fill on or above it: two level lines where
// the bars are wide enough, one line turned upright where they are at least a line
// high, else none; it reports whether it wrote them.
func barLabels(b *bytes.Buffer, bars []fillBar, w float64) bool {
	const px = 9.0
	level := true
	for _, f := range bars {
		if textWidth(f.name(), px) > w-4 || textWidth(units.Pct(f.fill), px) > w-4 {
			level = false
		}
	}
	if !level && w < px+2 {
		return false
	}
	for i, f := range bars {
		cx := fillLeft + (float64(i)+0.5)*w
		top := chartTop + chartH - f.fill*chartH
		inside := f.fill*chartH >= 30
		if level {
			y := top - 15
			if inside {
				y = top + 12
			}
			colour := labelColour(f.fill, inside)
			for k, line := range []string{f.name(), units.Pct(f.fill)} {
				fmt.Fprintf(b, `<text x="%s" y="%s" font-size="9" text-anchor="middle" fill="%s">%s</text>`+"\n", f1(cx), f1(y+float64(k)*11), colour, fitEsc(line, px, w-4))
			}
			continue
		}
		// Upright: the text runs up from its start; inside the bar if it fits, else above it.
		text := f.name() + " " + units.Pct(f.fill)
		inRoom, upRoom := f.fill*chartH-8, chartH-f.fill*chartH-8
		start, room, in := top-4, upRoom, false
		if textWidth(text, px) <= inRoom || inRoom > upRoom && textWidth(text, px) > upRoom {
			start, room, in = chartTop+chartH-4, inRoom, true
		}
		x := cx + px*0.35
		// A long name is cut, never the fill after it.
		pct := " " + units.Pct(f.fill)
		text = fit(escape.Text(f.name()), px, room-textWidth(pct, px)) + pct
		fmt.Fprintf(b, `<text x="%s" y="%s" font-size="9" transform="rotate(-90 %s %s)" fill="%s">%s</text>`+"\n",
			f1(x), f1(start), f1(x), f1(start), labelColour(f.fill, in), fitEsc(text, px, room))
	}
	return true
}

// labelColour keeps a label readable on its bar's colour, or black on white above it.
func labelColour(f float64, inside bool) string {
	if inside && (f >= 0.9 || f < 0.5) {
		return "#ffffff"
	}
	return "#000000"
}

// fillLegend names the three fill colours in a row at baseline y.
func fillLegend(b *bytes.Buffer, y float64) {
	x := float64(fillLeft)
	for _, item := range []struct {
		f    float64
		text string
	}{{1, "90% full or more"}, {0.5, "50% to 90%"}, {0, "below 50%"}} {
		fmt.Fprintf(b, `<rect x="%s" y="%s" width="10" height="10" fill="%s"/>`+"\n", f1(x), f1(y-9), fillColour(item.f))
		fmt.Fprintf(b, `<text x="%s" y="%s">%s</text>`+"\n", f1(x+14), f1(y), esc(item.text))
		x += 14 + textWidth(item.text, 11) + 16
	}
}

// barWidth leaves a gap between bars only where there is room for one.
func barWidth(w float64) float64 {
	if w < 3 {
		return w
	}
	return w - 1
}

func fillColour(f float64) string {
	switch {
	case f >= 0.9:
		return "#2e7d32"
	case f >= 0.5:
		return "#f9a825"
	}
	return "#c62828"
}

// axes draws a chart's frame with its top and bottom labels on the y axis.
func axes(b *bytes.Buffer, left, width int, top, bottom string) {
	fmt.Fprintf(b, `<rect x="%d" y="%d" width="%d" height="%d" fill="none" stroke="#888888"/>`+"\n", left, chartTop, width, chartH)
	fmt.Fprintf(b, `<text x="%d" y="%d" text-anchor="end">%s</text>`+"\n", left-4, chartTop+4, fitEsc(top, 11, 90))
	fmt.Fprintf(b, `<text x="%d" y="%d" text-anchor="end">%s</text>`+"\n", left-4, chartTop+chartH, fitEsc(bottom, 11, 90))
}

// box is a text's extent in the picture, to keep labels apart.
type box struct{ x0, y0, x1, y1 float64 }

func (a box) overlaps(b box) bool { return a.x0 < b.x1 && b.x0 < a.x1 && a.y0 < b.y1 && b.y0 < a.y1 }

// textBox is the extent of text of width w at font size px with its baseline at y.
func textBox(x, y, w, px float64, anchor string) box {
	switch anchor {
	case "end":
		x -= w
	case "middle":
		x -= w / 2
	}
	return box{x, y - px*0.8, x + w, y + px*0.25}
}

// frontChart plots every available candidate of the sweep, fixed ms per scan across
// and refresh memory (or segment size) up, joins the front and labels its points.
func frontChart(b *bytes.Buffer, sw *advisor.Sweep) {
	var cs []*advisor.Candidate
	for k := range sw.Candidates {
		if !sw.Candidates[k].Locked {
			cs = append(cs, &sw.Candidates[k])
		}
	}
	if len(cs) == 0 {
		return
	}
	mem := func(c *advisor.Candidate) float64 {
		if sw.Profiled {
			return c.Peak
		}
		return float64(c.SegmentRows)
	}
	memText := func(v float64) string {
		if sw.Profiled {
			return units.Size(v)
		}
		return units.Count(units.Int64(v)) + " rows"
	}
	x0, x1 := math.Inf(1), math.Inf(-1)
	y0, y1 := math.Inf(1), math.Inf(-1)
	for _, c := range cs {
		x0, x1 = min(x0, c.Layout.FixedMs), max(x1, c.Layout.FixedMs)
		y0, y1 = min(y0, mem(c)), max(y1, mem(c))
	}
	// Fixed ms span orders of magnitude across segment sizes: a log scale keeps the
	// cheap end readable. A flat axis puts every point in its middle.
	logX := x0 > 0 && x1/x0 >= 5
	const innerW, innerH = frontW - 2*plotPad, chartH - 2*plotPad
	px := func(v float64) float64 {
		switch {
		case x1 == x0:
			return frontLeft + frontW/2
		case logX:
			return frontLeft + plotPad + math.Log(v/x0)/math.Log(x1/x0)*innerW
		}
		return frontLeft + plotPad + (v-x0)/(x1-x0)*innerW
	}
	py := func(v float64) float64 {
		if y1 == y0 {
			return chartTop + chartH/2
		}
		return chartTop + plotPad + innerH - (v-y0)/(y1-y0)*innerH
	}
	axis := "refresh peak"
	if !sw.Profiled {
		axis = "segment size"
	}
	scale := ""
	if logX {
		scale = ", log scale"
	}
	fmt.Fprintf(b, `<text x="%d" y="%d">sweep: fixed ms per scan (across%s)</text>`+"\n", frontLeft, chartTop-22, scale)
	fmt.Fprintf(b, `<text x="%d" y="%d" font-size="9">against %s (up); blue: the Pareto front, joined; grey: the others</text>`+"\n", frontLeft, chartTop-8, axis)
	axes(b, frontLeft, frontW, memText(y1), memText(y0)) // equal when flat: both label the one value
	fmt.Fprintf(b, `<text x="%d" y="%d">%s</text>`+"\n", frontLeft, chartTop+chartH+14, fitEsc(units.Ms(x0)+" ms", 11, frontW/2-40))
	if x1 != x0 {
		fmt.Fprintf(b, `<text x="%d" y="%d" text-anchor="end">%s</text>`+"\n", frontLeft+frontW, chartTop+chartH+14, fitEsc(units.Ms(x1)+" ms", 11, frontW/2-40))
	}
	var front []*advisor.Candidate
	for _, c := range cs {
		colour := "#9e9e9e"
		if c.Front {
			colour = "#1565c0"
			front = append(front, c)
		}
		fmt.Fprintf(b, `<circle cx="%s" cy="%s" r="3" fill="%s"/>`+"\n", f1(px(c.Layout.FixedMs)), f1(py(mem(c))), colour)
	}
	// The front, left to right: fewer ms costs more memory along it.
	for i := 1; i < len(front); i++ {
		for j := i; j > 0 && front[j].Layout.FixedMs < front[j-1].Layout.FixedMs; j-- {
			front[j], front[j-1] = front[j-1], front[j]
		}
	}
	if len(front) > 1 {
		b.WriteString(`<polyline fill="none" stroke="#1565c0" points="`)
		for i, c := range front {
			if i > 0 {
				b.WriteString(" ")
			}
			fmt.Fprintf(b, "%s,%s", f1(px(c.Layout.FixedMs)), f1(py(mem(c))))
		}
		b.WriteString(`"/>` + "\n")
	}
	point := func(c *advisor.Candidate) (float64, float64) { return px(c.Layout.FixedMs), py(mem(c)) }
	figures := func(c *advisor.Candidate) string { return units.Ms(c.Layout.FixedMs) + " ms, " + memText(mem(c)) }
	var dots []box // every point, and the rings of today's and the recommended layout
	for _, c := range cs {
		x, y := point(c)
		dots = append(dots, box{x - 3, y - 3, x + 3, y + 3})
	}
	for _, k := range []int{sw.Today, sw.Recommended} {
		if k >= 0 && !sw.Candidates[k].Locked {
			x, y := point(&sw.Candidates[k])
			dots = append(dots, box{x - 7, y - 7, x + 7, y + 7})
		}
	}
	unlabelled := frontLabels(b, front, point, figures, dots)
	y := float64(chartTop + chartH + 28)
	mark := func(k int, colour, what string) {
		if k < 0 || sw.Candidates[k].Locked {
			return
		}
		c := &sw.Candidates[k]
		fmt.Fprintf(b, `<circle cx="%s" cy="%s" r="6" fill="none" stroke="%s" stroke-width="2"/>`+"\n", f1(px(c.Layout.FixedMs)), f1(py(mem(c))), colour)
		text := fmt.Sprintf("%s: %s %s, %s, %s ms, %s", what, units.Count(c.SegmentRows), c.Label, counted(c.Layout.Segments, "segment"), units.Ms(c.Layout.FixedMs), memText(mem(c)))
		for _, line := range wrapPx(escape.Text(text), 11, svgWidth-10-frontLeft, 2) {
			fmt.Fprintf(b, `<text x="%d" y="%s" fill="%s">%s</text>`+"\n", frontLeft, f1(y), colour, html.EscapeString(line))
			y += 13
		}
	}
	mark(sw.Today, "#6a1b9a", "today")
	mark(sw.Recommended, "#2e7d32", "recommended")
	if unlabelled > 0 {
		fmt.Fprintf(b, `<text x="%d" y="%s" font-size="9">%s</text>`+"\n", frontLeft, f1(y),
			esc(fmt.Sprintf("%s of the front not labelled for room: see the text plan", counted(int64(unlabelled), "point"))))
	}
}

// frontLabels names the front's points, one label for points drawn at the same place,
// each at the first spot around its point that stays inside the frame and clear of
// the labels and points already there; it returns how many points got no label.
func frontLabels(b *bytes.Buffer, front []*advisor.Candidate, point func(*advisor.Candidate) (float64, float64), figures func(*advisor.Candidate) string, dots []box) int {
	const px = 9.0
	frame := box{frontLeft + 1, chartTop + 1, frontLeft + frontW - 1, chartTop + chartH - 1}
	var taken []box
	left := 0
	for i := 0; i < len(front); {
		c := front[i]
		x, y := point(c)
		j := i + 1
		for j < len(front) {
			if xj, yj := point(front[j]); math.Abs(xj-x) >= 1 || math.Abs(yj-y) >= 1 {
				break
			}
			j++
		}
		name := units.Count(c.SegmentRows) + " " + c.Label
		if j-i > 1 {
			name += fmt.Sprintf(" and %d more", j-i-1)
		}
		// The label with its figures where it fits, else the layout's name alone.
		placed := false
		for _, long := range []string{name + ": " + figures(c), name} {
			if placed = placeLabel(b, fit(escape.Text(long), px, frontW-20), x, y, frame, &taken, dots); placed {
				break
			}
		}
		if !placed {
			left += j - i
		}
		i = j
	}
	return left
}

// labelSpots are the places tried for a point's label, nearest first.
var labelSpots = []struct {
	dx, dy float64
	anchor string
}{{8, -5, "start"}, {-8, -5, "end"}, {8, 12, "start"}, {-8, 12, "end"}, {0, -10, "middle"}, {0, 18, "middle"},
	{8, -16, "start"}, {-8, -16, "end"}, {8, 23, "start"}, {-8, 23, "end"}}

// placeLabel writes text at the first spot around (x, y) inside frame and clear of the
// taken labels and the other dots, and reports whether there was one.
func placeLabel(b *bytes.Buffer, text string, x, y float64, frame box, taken *[]box, dots []box) bool {
	const px = 9.0
	w := textWidth(text, px)
	for _, spot := range labelSpots {
		bx := textBox(x+spot.dx, y+spot.dy, w, px, spot.anchor)
		// Coordinates are written to a tenth of a pixel: keep that much apart, so the
		// rounded boxes do not touch either.
		padded := box{bx.x0 - 0.1, bx.y0 - 0.1, bx.x1 + 0.1, bx.y1 + 0.1}
		if bx.x0 < frame.x0 || bx.x1 > frame.x1 || bx.y0 < frame.y0 || bx.y1 > frame.y1 || hits(padded, *taken) || hitsOther(bx, dots, x, y) {
			continue
		}
		*taken = append(*taken, bx)
		fmt.Fprintf(b, `<text x="%s" y="%s" font-size="9" text-anchor="%s">%s</text>`+"\n", f1(x+spot.dx), f1(y+spot.dy), spot.anchor, html.EscapeString(text))
		return true
	}
	return false
}

// hits reports whether bx overlaps any of taken.
func hits(bx box, taken []box) bool {
	for _, t := range taken {
		if bx.overlaps(t) {
			return true
		}
	}
	return false
}

// hitsOther reports whether bx covers a dot other than those centred on (x, y), the
// point it labels.
func hitsOther(bx box, dots []box, x, y float64) bool {
	for _, d := range dots {
		own := math.Abs((d.x0+d.x1)/2-x) < 1 && math.Abs((d.y0+d.y1)/2-y) < 1
		if !own && bx.overlaps(d) {
			return true
		}
	}
	return false
}

// counted writes "1 segment", "730 segments".
func counted(n int64, what string) string {
	if n == 1 {
		return "1 " + what
	}
	return units.Num(n) + " " + what + "s"
}
