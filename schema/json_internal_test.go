package schema

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"go.yaml.in/yaml/v3"
)

// Valid JSON takes the quick builder, invalid JSON the decoder's tokens; both must build
// the same tree, positions included, or an error would point elsewhere than a success.
var jsonSamples = []string{
	`{}`, `[]`, `0`, `-1.5e3`, `"x"`, `true`, `false`, `null`,
	` { "a" : [ 1 , 2.0 , -0 , 1E+2 ] , "b" : { } , "c" : "\u00e9\n\"\\/" } `,
	"{\r\n\"é\": \"ü\",\r\"k\":\n[null,true,false]}",
	"\t[\"tab\\tescaped\", \"😀\", {\"\": \"\"}]\n",
	`{"a":{"b":{"c":[[[["deep"]]]]}}}`,
}

func TestJSONBuildersAgree(t *testing.T) {
	samples := append([]string(nil), jsonSamples...)
	paths, _ := filepath.Glob(filepath.Join("..", "testdata", "baselines", "*.json"))
	for _, p := range paths {
		data, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		samples = append(samples, string(data))
	}
	valid := 0
	for _, s := range samples {
		if compareBuilders(t, []byte(s)) {
			valid++
		}
	}
	if valid < len(jsonSamples)+2 {
		t.Errorf("only %d valid samples compared", valid)
	}
}

// compareBuilders reports whether data was valid JSON (and so compared).
func compareBuilders(t *testing.T, data []byte) bool {
	t.Helper()
	data = []byte(strings.TrimPrefix(string(data), "\ufeff"))
	if !json.Valid(data) {
		return false
	}
	quick, p := (&validJSON{data: data, at: &cursor{data: data, line: 1, col: 1}, lim: DefaultLimits}).value(0)
	if p != nil {
		t.Fatalf("%q: quick builder: %v", data, p.Message)
	}
	tokens, p := tokenTree(data, &cursor{data: data, line: 1, col: 1}, DefaultLimits)
	if p != nil {
		t.Fatalf("%q: token builder: %v", data, p.Message)
	}
	if a, b := dumpNode(quick), dumpNode(tokens); a != b {
		t.Errorf("%q: the builders differ:\n quick  %s\n tokens %s", data, a, b)
	}
	return true
}

func dumpNode(n *yaml.Node) string {
	var b strings.Builder
	var walk func(n *yaml.Node)
	walk = func(n *yaml.Node) {
		fmt.Fprintf(&b, "(%d %s %q %d:%d", n.Kind, n.Tag, n.Value, n.Line, n.Column)
		for _, c := range n.Content {
			walk(c)
		}
		b.WriteString(")")
	}
	walk(n)
	return b.String()
}

// FuzzLoadBaseline: any bytes give a document or positioned problems, never a panic, and
// the two builders agree on every valid JSON input.
func FuzzLoadBaseline(f *testing.F) {
	for _, s := range jsonSamples {
		f.Add([]byte(s))
	}
	f.Add([]byte(`{"schema_version":1,"entries":[{"fingerprint":"0123456789abcdef0123456789abcdef","rule":"scan-time","file":"m.yaml","message":""}]}`))
	f.Add([]byte("{\"schema_version\":1,\n\"entries\":[}"))
	f.Fuzz(func(t *testing.T, data []byte) {
		_, err := LoadBaseline("f.json", data, DefaultLimits)
		if err != nil {
			se, ok := err.(*Error)
			if !ok || len(se.Problems) == 0 {
				t.Fatalf("error %v is not a positioned *Error", err)
			}
			for _, p := range se.Problems {
				if p.Pos.Line < 1 || p.Pos.Col < 1 || p.Message == "" {
					t.Fatalf("problem %+v has no position or message", p)
				}
			}
		}
		if encodingProblem(data) == nil {
			compareBuilders(t, data)
		}
	})
}
