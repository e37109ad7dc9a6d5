package report

import (
	"bytes"
	"fmt"
	"io"
	"math"

	"github.com/scangate/scangate/internal/escape"
	"github.com/scangate/scangate/internal/units"

	"github.com/scangate/scangate/internal/advisor"
	"github.com/scangate/scangate/internal/layout"
	"github.com/scangate/scangate/schema"
)

func init() {
	register(writers{
		traits: Traits{Name: "svg", Kinds: PlanReport},
		plan: func(w io.Writer, p *Plan, _ bool) error {
			_, err := w.Write(planSVG(p.Manifest, p.Plans))
			return err
		},
	})
}

// SVG geometry: one band per table, a fill chart on the left and the sweep's
// ms-against-memory chart on the right.
const (
	svgWidth    = 960
	bandH       = 310
	chartTop    = 60
	chartH      = 190
	fillLeft    = 50
	fillW       = 400
	frontLeft   = 560
	frontW      = 360
	maxFillBars = 400 // more partitions than this are drawn as averaged buckets
)

// planSVG draws, per table, the fill of each partition's segments and the sweep's
// fixed-ms-against-refresh-memory chart with the front and the recommendation, every
// number as text so it can be read without a viewer.
func planSVG(m *schema.Manifest, plans []advisor.TablePlan) []byte {
	var b bytes.Buffer
	h := bandH * max(len(plans), 1)
	fmt.Fprintf(&b, `<?xml version="1.0" encoding="UTF-8"?>`+"\n")
	fmt.Fprintf(&b, `<svg xmlns="http://www.w3.org/2000/svg" width="%d" height="%d" viewBox="0 0 %d %d" font-family="sans-serif" font-size="11">`+"\n", svgWidth, h, svgWidth, h)
	fmt.Fprintf(&b, "<title>scangate plan: %s</title>\n", esc(m.File))
	fmt.Fprintf(&b, `<rect width="%d" height="%d" fill="#ffffff"/>`+"\n", svgWidth, h)
	for n, p := range plans {
		fmt.Fprintf(&b, `<g transform="translate(0,%d)">`+"\n", n*bandH)
		fmt.Fprintf(&b, `<text x="10" y="18" font-size="14" font-weight="bold">%s</text>`+"\n", esc(p.Spec.Name))
		if p.Problems == "" {
			fillChart(&b, m, p)
			frontChart(&b, p.Sweep)
		} else {
			fmt.Fprintf(&b, `<text x="10" y="40">%s</text>`+"\n", esc(p.Problems))
		}
		b.WriteString("</g>\n")
	}
	b.WriteString("</svg>\n")
	return b.Bytes()
}

// esc is every string the picture shows, as XML text (escape.XML).
func esc(s string) string { return escape.XML(s) }

// f1 writes a coordinate with one decimal, so the file is the same on every machine.
func f1(x float64) string { return fmt.Sprintf("%.1f", x) }

// fillChart draws one bar per partition (oldest left, newest right): how full its
// segments are, rows / (segments x segment_rows).
func fillChart(b *bytes.Buffer, m *schema.Manifest, p advisor.TablePlan) {
	s := m.Engine.SegmentRows
	parts, err := layout.Expand(p.Spec)
	if err != nil || len(parts) == 0 {
		return
	}
	fills := make([]float64, len(parts))
	for i, pt := range parts {
		if seg := layout.Segments(pt.Rows, s); seg > 0 {
			fills[len(parts)-1-i] = float64(pt.Rows) / (float64(seg) * float64(s))
		}
	}
	per := (len(fills) + maxFillBars - 1) / maxFillBars // partitions per bar
	var bars []float64
	for i := 0; i < len(fills); i += per {
		j := min(i+per, len(fills))
		sum := 0.0
		for _, f := range fills[i:j] {
			sum += f
		}
		bars = append(bars, sum/float64(j-i))
	}
	note := "oldest left, newest right"
	if per > 1 {
		note += fmt.Sprintf(", %d partitions per bar", per)
	}
	fmt.Fprintf(b, `<text x="%d" y="%d">segment fill by partition (%s rows per segment)</text>`+"\n", fillLeft, chartTop-22, units.Count(s))
	fmt.Fprintf(b, `<text x="%d" y="%d" font-size="9">%s</text>`+"\n", fillLeft, chartTop-8, esc(note))
	axes(b, fillLeft, fillW, "100%", "0%")
	w := float64(fillW) / float64(len(bars))
	for i, f := range bars {
		bh := f * chartH
		fmt.Fprintf(b, `<rect x="%s" y="%s" width="%s" height="%s" fill="%s"/>`+"\n",
			f1(fillLeft+float64(i)*w), f1(chartTop+chartH-bh), f1(barWidth(w)), f1(bh), fillColour(f))
	}
	l := p.Sweep.Candidates[p.Sweep.Today].Layout
	fmt.Fprintf(b, `<text x="%d" y="%d">%s, %s (ideal %s), fill %s</text>`+"\n",
		fillLeft, chartTop+chartH+18, counted(int64(l.Partitions), "partition"), counted(l.Segments, "segment"), units.Num(l.Ideal), units.Pct(l.Fill))
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
	fmt.Fprintf(b, `<text x="%d" y="%d" text-anchor="end">%s</text>`+"\n", left-4, chartTop+4, esc(top))
	fmt.Fprintf(b, `<text x="%d" y="%d" text-anchor="end">%s</text>`+"\n", left-4, chartTop+chartH, esc(bottom))
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
	px := func(v float64) float64 {
		switch {
		case x1 == x0:
			return frontLeft + frontW/2
		case logX:
			return frontLeft + math.Log(v/x0)/math.Log(x1/x0)*frontW
		}
		return frontLeft + (v-x0)/(x1-x0)*frontW
	}
	py := func(v float64) float64 {
		if y1 == y0 {
			return chartTop + chartH/2
		}
		return chartTop + chartH - (v-y0)/(y1-y0)*chartH
	}
	axis := "refresh peak"
	if !sw.Profiled {
		axis = "segment size"
	}
	scale := ""
	if logX {
		scale = ", log scale"
	}
	fmt.Fprintf(b, `<text x="%d" y="%d">sweep: fixed ms per scan (across%s) against %s (up)</text>`+"\n", frontLeft, chartTop-22, scale, axis)
	fmt.Fprintf(b, `<text x="%d" y="%d" font-size="9">blue: the Pareto front, joined; grey: the other layouts</text>`+"\n", frontLeft, chartTop-8)
	axes(b, frontLeft, frontW, memText(y1), memText(y0)) // equal when flat: both label the one value
	fmt.Fprintf(b, `<text x="%d" y="%d">%s ms</text>`+"\n", frontLeft, chartTop+chartH+14, units.Ms(x0))
	if x1 != x0 {
		fmt.Fprintf(b, `<text x="%d" y="%d" text-anchor="end">%s ms</text>`+"\n", frontLeft+frontW, chartTop+chartH+14, units.Ms(x1))
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
	for i, c := range front {
		// Alternate above and below the point so neighbouring labels do not collide.
		dy := -4.0
		if i%2 == 1 {
			dy = 12
		}
		x, anchor := px(c.Layout.FixedMs)+5, "start"
		if x > frontLeft+frontW/2 { // keep the label inside the picture
			x, anchor = x-10, "end"
		}
		fmt.Fprintf(b, `<text x="%s" y="%s" font-size="9" text-anchor="%s">%s</text>`+"\n", f1(x), f1(py(mem(c))+dy), anchor,
			esc(fmt.Sprintf("%s %s: %s ms, %s", units.Count(c.SegmentRows), c.Label, units.Ms(c.Layout.FixedMs), memText(mem(c)))))
	}
	mark := func(k int, colour, what string, dy int) {
		if k < 0 || sw.Candidates[k].Locked {
			return
		}
		c := &sw.Candidates[k]
		fmt.Fprintf(b, `<circle cx="%s" cy="%s" r="6" fill="none" stroke="%s" stroke-width="2"/>`+"\n", f1(px(c.Layout.FixedMs)), f1(py(mem(c))), colour)
		fmt.Fprintf(b, `<text x="%d" y="%d" fill="%s">%s</text>`+"\n", frontLeft, chartTop+chartH+28+dy, colour,
			esc(fmt.Sprintf("%s: %s %s, %s, %s ms, %s", what, units.Count(c.SegmentRows), c.Label, counted(c.Layout.Segments, "segment"), units.Ms(c.Layout.FixedMs), memText(mem(c)))))
	}
	mark(sw.Today, "#6a1b9a", "today", 0)
	mark(sw.Recommended, "#2e7d32", "recommended", 14)
}

// counted writes "1 segment", "730 segments".
func counted(n int64, what string) string {
	if n == 1 {
		return "1 " + what
	}
	return units.Num(n) + " " + what + "s"
}
