package report

import (
	"bytes"
	"encoding/binary"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/scangate/scangate/schema"
)

// What a reader of the plan picture needs: bars in the order the manifest gives, a
// caption that says so, a legend, labels that fit and do not overlap, and every mark
// inside the drawing. Text widths are the renderer's estimate (textWidth), so these
// tests check the layout the drawing intends; the PNG test renders it for real.

// testdataPlans plans every manifest under testdata that loads (demo, valid, hostile,
// rules), so the longest names there are drawn.
func testdataPlans(t *testing.T) map[string]*Plan {
	t.Helper()
	var files []string
	for _, pattern := range []string{"demo/*.yaml", "valid/*.yaml", "hostile/*.yaml", "rules/*/*.yaml"} {
		m, err := filepath.Glob(filepath.Join("..", "..", "testdata", pattern))
		if err != nil {
			t.Fatal(err)
		}
		files = append(files, m...)
	}
	out := map[string]*Plan{}
	for _, f := range files {
		src, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		m, err := schema.Load(f, src, schema.DefaultLimits)
		if err != nil {
			continue // a manifest of schema errors has nothing to draw
		}
		out[f] = planOf(m)
	}
	if len(out) < 10 {
		t.Fatalf("only %d manifests under testdata planned", len(out))
	}
	return out
}

func planOf(m *schema.Manifest) *Plan {
	idx := make([]int, len(m.Tables))
	for i := range idx {
		idx[i] = i
	}
	return planFixture(m, idx)
}

// num reads a numeric attribute; a missing one is 0.
func num(t *testing.T, n svgNode, name string) float64 {
	t.Helper()
	v := n.attr(name)
	if v == "" {
		return 0
	}
	f, err := strconv.ParseFloat(v, 64)
	if err != nil {
		t.Fatalf("%s=%q: %v", name, v, err)
	}
	return f
}

// textBoxes is the extent of every text of a band, in the band's coordinates, as the
// drawing estimates it: upright (rotated) labels run up from their start.
func textBoxes(t *testing.T, band svgNode) ([]box, []string) {
	t.Helper()
	var boxes []box
	var texts []string
	for _, n := range band.all("text") {
		px := num(t, n, "font-size")
		if px == 0 {
			px = 11
		}
		w := textWidth(n.Text, px)
		if n.attr("font-weight") == "bold" {
			w *= 1.15
		}
		x, y := num(t, n, "x"), num(t, n, "y")
		bx := textBox(x, y, w, px, n.attr("text-anchor"))
		if strings.HasPrefix(n.attr("transform"), "rotate(-90 ") {
			bx = box{x - px*0.8, y - w, x + px*0.25, y}
		}
		boxes = append(boxes, bx)
		texts = append(texts, n.Text)
	}
	return boxes, texts
}

// checkLegible fails when a band's texts leave the band or overlap, or a ring or
// point leaves the sweep chart's frame.
func checkLegible(t *testing.T, name string, root svgNode) {
	t.Helper()
	for i, band := range bands(root) {
		boxes, texts := textBoxes(t, band)
		for k, a := range boxes {
			if a.x0 < 0 || a.x1 > svgWidth || a.y0 < 0 || a.y1 > bandH {
				t.Errorf("%s band %d: %q leaves the band: %+v", name, i, texts[k], a)
			}
			for l := k + 1; l < len(boxes); l++ {
				if a.overlaps(boxes[l]) {
					t.Errorf("%s band %d: %q overlaps %q", name, i, texts[k], texts[l])
				}
			}
		}
		for _, c := range band.all("circle") {
			cx, cy, r := num(t, c, "cx"), num(t, c, "cy"), num(t, c, "r")+num(t, c, "stroke-width")/2
			if cx-r < frontLeft || cx+r > frontLeft+frontW || cy-r < chartTop || cy+r > chartTop+chartH {
				t.Errorf("%s band %d: circle at %v,%v r %v leaves the sweep chart", name, i, cx, cy, r)
			}
		}
	}
}

// Every manifest under testdata, the longest names there included, draws with no text
// outside its band, no two texts over each other and every point inside its chart.
func TestSVGLegibleForTestdata(t *testing.T) {
	for f, p := range testdataPlans(t) {
		checkLegible(t, f, decodeSVG(t, render(t, "svg", p, false)))
	}
}

// Names far longer than any in testdata are cut with an ellipsis and still fit.
func TestSVGLongNamesCut(t *testing.T) {
	long := strings.Repeat("very_long_partition_name_", 4)
	src := fmt.Sprintf(`format: 1
model: long
engine: {segment_rows: 1000}
budgets: {scan_overhead_ms: 1}
tables:
  - name: %s
    rows: 3000
    partitions:
      scheme: list
      items:
        - {name: %sa, rows: 1000}
        - {name: %sb, rows: 500}
        - {name: "%s", rows: 1500}
`, strings.Repeat("table_", 33), long, long, strings.Repeat("ｗ", 40))
	p := planDoc(t, "long.yaml", src)
	out := render(t, "svg", p, false)
	root := decodeSVG(t, out)
	checkLegible(t, "long.yaml", root)
	if !strings.Contains(out, "…") {
		t.Errorf("no name was cut:\n%s", out)
	}
	// A cut partition name keeps its fill: the first item fills its one segment.
	_, texts := textBoxes(t, bands(root)[0])
	if !slices.ContainsFunc(texts, func(s string) bool { return strings.HasPrefix(s, "very_long") && strings.HasSuffix(s, "… 100%") }) {
		t.Errorf("no cut name with its fill in %q", texts)
	}
}

// Bars stand in the order the manifest gives: list items as written, even parts from
// part 1, time periods oldest first; the caption says which, and each bar names its
// partition and fill.
func TestSVGBarOrderAndCaption(t *testing.T) {
	src := `format: 1
model: order
engine: {segment_rows: 1000}
tables:
  - name: listed
    rows: 3000
    partitions:
      scheme: list
      items:
        - {name: zulu, rows: 1000}
        - {name: alpha, rows: 500}
        - {name: mike, rows: 1500}
  - name: timed
    rows: 3000
    partitions: {scheme: time, tiers: [{grain: month, keep: 3}]}
  - name: evened
    rows: 2500
    partitions: {scheme: even, count: 3}
`
	root := decodeSVG(t, render(t, "svg", planDoc(t, "order.yaml", src), false))
	cases := []struct {
		caption string
		names   []string
		heights []float64 // fill x chart height: zulu 1,000 of 1,000, alpha 500 of 1,000, mike 1,500 of 2,000
	}{
		{"in the order listed, first left", []string{"zulu", "alpha", "mike"}, []float64{190, 95, 142.5}},
		{"oldest left, newest right", []string{"month 3", "month 2", "month 1"}, []float64{190, 190, 190}},
		{"part 1 left to part 3 right", []string{"part 1", "part 2", "part 3"}, []float64{158.5, 158.3, 158.3}}, // 834, 833, 833 rows of 1,000, of 190
	}
	for i, band := range bands(root) {
		c := cases[i]
		_, texts := textBoxes(t, band)
		if !slices.Contains(texts, c.caption) {
			t.Errorf("band %d: no caption %q in %q", i, c.caption, texts)
		}
		var got []float64
		for _, r := range fillBars(band) {
			got = append(got, num(t, r, "height"))
		}
		if len(got) != len(c.heights) {
			t.Fatalf("band %d: bar heights %v, want %v", i, got, c.heights)
		}
		for k := range got {
			if d := got[k] - c.heights[k]; d > 0.6 || d < -0.6 {
				t.Errorf("band %d: bar heights %v, want %v", i, got, c.heights)
				break
			}
		}
		// Each bar's name, left to right, with its fill on the next line.
		var names []float64
		for _, n := range band.all("text") {
			if k := slices.Index(c.names, n.Text); k >= 0 {
				names = append(names, num(t, n, "x"))
			}
		}
		if len(names) != 3 || !slices.IsSorted(names) {
			t.Errorf("band %d: names %q at x %v, want one each, left to right", i, c.names, names)
		}
	}
	if _, texts := textBoxes(t, bands(root)[0]); !slices.Contains(texts, "50%") || !slices.Contains(texts, "75%") {
		t.Errorf("listed: fill labels missing from %q", texts)
	}
}

// The legend names each fill colour with the bound the bars are coloured by.
func TestSVGFillLegend(t *testing.T) {
	root := decodeSVG(t, render(t, "svg", planDoc(t, "m.yaml", fixtureManifest), false))
	band := bands(root)[0]
	swatch := map[string]string{}
	for _, r := range band.all("rect") {
		if r.attr("width") == "10" {
			swatch[r.attr("fill")] = r.attr("x")
		}
	}
	for colour, text := range map[string]string{fillColour(0.9): "90% full or more", fillColour(0.5): "50% to 90%", fillColour(0.49): "below 50%"} {
		x, ok := swatch[colour]
		if !ok {
			t.Errorf("no swatch of %s", colour)
			continue
		}
		found := false
		for _, n := range band.all("text") {
			sx, _ := strconv.ParseFloat(x, 64)
			if n.Text == text && num(t, n, "x") == sx+14 {
				found = true
			}
		}
		if !found {
			t.Errorf("no %q beside the %s swatch", text, colour)
		}
	}
}

// Too many partitions for a label each: the ends are named under the chart and the
// lowest and highest fill are written out (meter_reads: 730 days, 70% to 88% full, as
// the text plan's "70%..88%" says).
func TestSVGSummaryWhenBarsAreNarrow(t *testing.T) {
	src, err := os.ReadFile("../../testdata/demo/meter-telemetry.yaml")
	if err != nil {
		t.Fatal(err)
	}
	root := decodeSVG(t, render(t, "svg", planDoc(t, "meter-telemetry.yaml", string(src)), false))
	_, texts := textBoxes(t, bands(root)[0])
	for _, want := range []string{"day 730", "day 1", "lowest fill 70% (day 730), highest 88% (day 1)", "oldest left, newest right, 2 partitions per bar"} {
		if !slices.Contains(texts, want) {
			t.Errorf("no %q in %q", want, texts)
		}
	}
}

// Every demo manifest's plan picture renders to a PNG of the drawing's size.
// rsvg-convert comes with librsvg2-bin; .ci/run installs it.
func TestSVGRendersToPNG(t *testing.T) {
	tool, err := exec.LookPath("rsvg-convert")
	if err != nil {
		if os.Getenv("CI") == "true" {
			t.Fatal("rsvg-convert is missing (apt-get install librsvg2-bin)")
		}
		t.Skip("rsvg-convert is missing (apt-get install librsvg2-bin)")
	}
	files, err := filepath.Glob("../../testdata/demo/*.yaml")
	if err != nil || len(files) == 0 {
		t.Fatalf("demo manifests: %v %v", files, err)
	}
	dir := t.TempDir()
	for _, f := range files {
		src, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		p := planDoc(t, filepath.Base(f), string(src))
		in := filepath.Join(dir, filepath.Base(f)+".svg")
		out := filepath.Join(dir, filepath.Base(f)+".png")
		if err := os.WriteFile(in, []byte(render(t, "svg", p, false)), 0o644); err != nil {
			t.Fatal(err)
		}
		var stderr bytes.Buffer
		cmd := exec.Command(tool, "-o", out, in)
		cmd.Stderr = &stderr
		if err := cmd.Run(); err != nil || stderr.Len() > 0 {
			t.Errorf("%s: rsvg-convert: %v %s", f, err, stderr.String())
			continue
		}
		w, h := pngSize(t, out)
		if w != svgWidth || h != bandH*len(p.Files[0].Plans) {
			t.Errorf("%s: PNG %dx%d, want %dx%d", f, w, h, svgWidth, bandH*len(p.Files[0].Plans))
		}
	}
}

// pngSize reads the width and height from a PNG's IHDR chunk (PNG specification,
// W3C: the 8-byte signature, then IHDR's length, type, width and height).
func pngSize(t *testing.T, path string) (int, int) {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if len(b) < 24 || !bytes.Equal(b[:8], []byte("\x89PNG\r\n\x1a\n")) || string(b[12:16]) != "IHDR" {
		t.Fatalf("%s is not a PNG", path)
	}
	return int(binary.BigEndian.Uint32(b[16:20])), int(binary.BigEndian.Uint32(b[20:24]))
}
