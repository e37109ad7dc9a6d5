package schema

import (
	"fmt"
	"os"
	"strings"
	"testing"

	"go.yaml.in/yaml/v3"
)

// jsonAsYAML is JSON text both readers accept (no \/ escape, no surrogate pairs, keys
// within 1024 characters): the strict reader must build the tree the YAML parser builds.
var jsonAsYAML = []string{
	`{"a":1}`,
	"{\n  \"format\": 1,\n  \"model\": \"m\",\n  \"engine\": {\"segment_rows\": \"8Mi\", \"cores\": 4},\n  \"tables\": [\n    {\"name\": \"t\", \"rows\": -5, \"growth_per_year\": 1.5e-3,\n     \"partitions\": {\"scheme\": \"none\"}, \"columns\": []}\n  ]\n}\n",
	"[1, -0, 2.5, 1E3, true, false, null, \"\", {}, [], [[]], {\"x\": {\"y\": [null]}}]",
	"{ \"tab\"\t:\t\"caf\u00e9 \\u00e9 \\n \\\" \\\\\" ,\"k\" : [ 1 , 2 ] }",
	"{\"crlf\":\r\n 1,\r\n \"cr\":\r 2}",
	"\uFEFF{\"bom\": \"\u00e9\u00e9\", \"after\": 1}",
	"\"just a string\"",
	"99999999999999999999",
}

// TestJSONTreeMatchesYAML compares the two readers node by node: kind, tag, value, line
// and column. Positions in messages then agree whichever reader read the file.
func TestJSONTreeMatchesYAML(t *testing.T) {
	design, err := os.ReadFile("testdata/design-example.json")
	if err != nil {
		t.Fatal(err)
	}
	for _, src := range append(jsonAsYAML, string(design)) {
		got, p := parseJSON([]byte(src), DefaultLimits, "")
		if p != nil {
			t.Fatalf("%.40q: strict reader refused it: %v", src, p)
		}
		want, p := parseYAML([]byte(src), "")
		if p != nil {
			t.Fatalf("%.40q: YAML parser refused it: %v", src, p)
		}
		var a, b []string
		flatten(got, &a)
		flatten(want, &b)
		if strings.Join(a, "\n") != strings.Join(b, "\n") {
			t.Errorf("%.40q: trees differ\nJSON: %s\nYAML: %s", src, strings.Join(a, " | "), strings.Join(b, " | "))
		}
	}
}

func flatten(n *yaml.Node, out *[]string) {
	tag := n.Tag
	if tag == "!!float" && !strings.ContainsAny(n.Value, ".eE") {
		tag = "!!int" // YAML tags an integer past int64 as a float; both convert it alike
	}
	*out = append(*out, fmt.Sprintf("%d:%d %d %s %q", n.Line, n.Column, n.Kind, tag, n.Value))
	for _, c := range n.Content {
		flatten(c, out)
	}
}

// The strict reader's recursion stops at the conversion's depth limit, with its message
// and position, however deep the input.
func TestJSONDepthAndNodeLimits(t *testing.T) {
	deep := strings.Repeat("[", 200_000) + strings.Repeat("]", 200_000)
	_, p := parseJSON([]byte(deep), DefaultLimits, "")
	if p == nil || p.Pos != (Pos{1, DefaultLimits.MaxDepth + 2}) || !strings.Contains(p.Message, "nesting deeper than 64 levels") {
		t.Errorf("deep JSON: %v", p)
	}
	yamlTree, yp := parse("deep.yaml", []byte(strings.Repeat("[", 100)+strings.Repeat("]", 100)), DefaultLimits, "")
	_, jp := parse("deep.json", []byte(strings.Repeat("[", 100)+strings.Repeat("]", 100)), DefaultLimits, "")
	if yamlTree != nil || len(yp) != 1 || len(jp) != 1 || yp[0] != jp[0] {
		t.Errorf("depth problems differ: YAML %v, JSON %v", yp, jp)
	}
	lim := DefaultLimits
	lim.MaxNodes = 10
	_, yp = parse("n.yaml", []byte(`{"a": [1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11]}`), lim, "")
	_, jp = parse("n.json", []byte(`{"a": [1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11]}`), lim, "")
	if len(yp) != 1 || len(jp) != 1 || yp[0] != jp[0] || !strings.Contains(jp[0].Message, "more than 10 nodes") {
		t.Errorf("node limit problems differ: YAML %v, JSON %v", yp, jp)
	}
}
