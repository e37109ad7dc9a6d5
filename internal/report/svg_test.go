package report

import (
	"encoding/xml"
	"fmt"
	"strings"
	"testing"

	"github.com/scangate/scangate/internal/advisor"
	"github.com/scangate/scangate/internal/analysis"
)

// svgNode is an element of the drawing with its attributes, text and children.
type svgNode struct {
	XMLName  xml.Name
	Attrs    []xml.Attr `xml:",any,attr"`
	Text     string     `xml:",chardata"`
	Children []svgNode  `xml:",any"`
}

func (n svgNode) attr(name string) string {
	for _, a := range n.Attrs {
		if a.Name.Local == name {
			return a.Value
		}
	}
	return ""
}

// all lists the descendants of n named name, in document order.
func (n svgNode) all(name string) []svgNode {
	var out []svgNode
	for _, c := range n.Children {
		if c.XMLName.Local == name {
			out = append(out, c)
		}
		out = append(out, c.all(name)...)
	}
	return out
}

// decodeSVG parses the drawing as XML 1.0 and checks its root is an SVG element in the
// SVG namespace (SVG 1.1, W3C recommendation).
func decodeSVG(t *testing.T, out string) svgNode {
	t.Helper()
	var root svgNode
	d := xml.NewDecoder(strings.NewReader(out))
	d.Strict = true
	if err := d.Decode(&root); err != nil {
		t.Fatalf("SVG is not XML: %v\n%s", err, out)
	}
	if root.XMLName.Local != "svg" || root.XMLName.Space != "http://www.w3.org/2000/svg" {
		t.Fatalf("root element %v, want svg in the SVG namespace", root.XMLName)
	}
	return root
}

// bands are the root's groups, one per planned table.
func bands(root svgNode) []svgNode {
	var out []svgNode
	for _, c := range root.Children {
		if c.XMLName.Local == "g" {
			out = append(out, c)
		}
	}
	return out
}

// One band per planned table, stacked, named for its table, with a fill bar per
// partition and a point per layout of the sweep.
func TestSVGOneBandPerTable(t *testing.T) {
	p := planDoc(t, "m.yaml", fixtureManifest)
	root := decodeSVG(t, render(t, "svg", p, false))
	if h := root.attr("height"); h != fmt.Sprint(bandH*len(p.Files[0].Plans)) {
		t.Errorf("height %s for %d bands", h, len(p.Files[0].Plans))
	}
	bs := bands(root)
	if len(bs) != len(p.Files[0].Plans) || len(p.Files[0].Plans) != 4 {
		t.Fatalf("%d bands for %d plans", len(bs), len(p.Files[0].Plans))
	}
	partitions := map[string]int{"events": 1, "readings": 40, "quiet": 1, "waived": 1}
	for i, b := range bs {
		plan := p.Files[0].Plans[i]
		name := plan.Spec.Name
		if tr := b.attr("transform"); tr != fmt.Sprintf("translate(0,%d)", i*bandH) {
			t.Errorf("band %d: transform %q", i, tr)
		}
		if texts := b.all("text"); len(texts) == 0 || texts[0].Text != name {
			t.Errorf("band %d: first text %v, want %s", i, texts, name)
		}
		if bars := fillBars(b); len(bars) != partitions[name] {
			t.Errorf("%s: %d fill bars, want one per partition (%d)", name, len(bars), partitions[name])
		}
		// One point per unlocked layout, plus a ring for today's and the recommended one.
		points := 0
		for _, c := range plan.Sweep.Candidates {
			if !c.Locked {
				points++
			}
		}
		rings := 1
		if plan.Sweep.Recommended >= 0 {
			rings++
		}
		if got := len(b.all("circle")); got != points+rings {
			t.Errorf("%s: %d circles, want %d layouts and %d rings", name, got, points, rings)
		}
	}
	if title := root.all("title"); len(title) != 1 || title[0].Text != "scangate plan: m.yaml" {
		t.Errorf("title %v", title)
	}
}

// Only the planned tables are drawn, and a table that could not be laid out still has
// its band, saying why.
func TestSVGSubsetAndProblems(t *testing.T) {
	p := planDoc(t, "m.yaml", fixtureManifest)
	p.Files[0].Plans = []analysis.TablePlan{p.Files[0].Plans[1], {TablePlan: advisor.TablePlan{Index: 2, Spec: p.Files[0].Plans[2].Spec, Problems: "its partitions cannot be laid out"}}}
	root := decodeSVG(t, render(t, "svg", p, false))
	bs := bands(root)
	if len(bs) != 2 || root.attr("height") != fmt.Sprint(2*bandH) {
		t.Fatalf("%d bands, height %s", len(bs), root.attr("height"))
	}
	if texts := bs[1].all("text"); len(texts) != 2 || texts[0].Text != "quiet" || texts[1].Text != "its partitions cannot be laid out" {
		t.Errorf("problem band: %+v", texts)
	}
}

// Table names and the file name are escaped, and many partitions are averaged into at
// most maxFillBars bars.
func TestSVGEscapingAndBuckets(t *testing.T) {
	src := strings.Replace(fixtureManifest, "name: readings\n    rows: 10000\n    partitions: {scheme: even, count: 40}",
		"name: \"r<&>'\\\"s\"\n    rows: 100000\n    partitions: {scheme: even, count: 1000}", 1)
	if src == fixtureManifest {
		t.Fatal("fixture: readings not replaced")
	}
	p := planDoc(t, "a&b.yaml", src)
	root := decodeSVG(t, render(t, "svg", p, false))
	b := bands(root)[1]
	if got := b.all("text")[0].Text; got != `r<&>'"s` {
		t.Errorf("name %q", got)
	}
	// 1,000 partitions at 3 per bar: 334 bars.
	if bars := len(fillBars(b)); bars != 334 || !strings.Contains(render(t, "svg", p, false), "3 partitions per bar") {
		t.Errorf("%d bars for 1,000 partitions, want 334", len(fillBars(b)))
	}
	if title := root.all("title"); len(title) != 1 || title[0].Text != "scangate plan: a&b.yaml" {
		t.Errorf("title %v", title)
	}
}

// fillBars are a band's fill bars (not the frames nor the legend's swatches).
func fillBars(band svgNode) []svgNode {
	var out []svgNode
	for _, r := range band.all("rect") {
		if r.attr("class") == "bar" {
			out = append(out, r)
		}
	}
	return out
}
