package report

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/scangate/scangate/rules"
)

// A result of one finding in each place a file can be: inside the repository root,
// outside it (absolute, or relative to the working directory), and standard input. The
// File values are those internal/run gives such inputs (RepositoryPath).
func placesResult(t *testing.T) (*Result, map[string]string) {
	t.Helper()
	abs := filepath.Join(t.TempDir(), "my models", "a#1.yaml")
	wd, err := os.Getwd()
	if err != nil {
		t.Fatal(err)
	}
	above := filepath.Join(filepath.Dir(wd), "b.yaml")
	files := []File{
		{Name: "models/m.yaml", URI: "models/m.yaml"},
		{Name: "my models/x y.yaml", URI: "my models/x y.yaml"},
		{Name: abs, URI: filepath.ToSlash(abs)},
		{Name: "../b.yaml", URI: "../b.yaml"},
		{Name: stdinName, URI: "stdin"},
	}
	r := &Result{Version: "v1.2.3", Files: files}
	for _, f := range files {
		r.Findings = append(r.Findings, rules.Finding{Rule: "scan-time", Severity: rules.Warning,
			File: f.Name, Table: "t", Message: "m"})
	}
	// RFC 8089 file URIs, RFC 3986 percent-encoding of space (%20) and "#" (%23).
	want := map[string]string{
		"models/m.yaml":      "models/m.yaml",
		"my models/x y.yaml": "my%20models/x%20y.yaml",
		abs:                  "file://" + strings.ReplaceAll(strings.ReplaceAll(filepath.ToSlash(abs), " ", "%20"), "#", "%23"),
		"../b.yaml":          "file://" + filepath.ToSlash(above),
	}
	return r, want
}

type sarifLocation struct {
	URI         string `json:"uri"`
	URIBaseID   string `json:"uriBaseId"`
	Description *struct{ Text string }
}

// Inside the root: a relative reference on %SRCROOT%, which the run defines. Outside: an
// absolute file URI and no base id (SARIF 2.1.0, 3.4.4: a base id with an absolute URI is
// an error). Standard input: no URI, which it does not have, and a description saying so.
func TestSARIFArtifactLocations(t *testing.T) {
	r, want := placesResult(t)
	out := render(t, "sarif", r, false)
	decodeSARIF(t, out)
	var doc struct {
		Runs []struct {
			OriginalURIBaseIDs map[string]sarifLocation `json:"originalUriBaseIds"`
			Results            []struct {
				Locations []struct {
					PhysicalLocation struct{ ArtifactLocation sarifLocation }
				}
			}
		}
	}
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatal(err)
	}
	run := doc.Runs[0]
	if root, ok := run.OriginalURIBaseIDs[srcRoot]; !ok || root.Description == nil || root.URI != "" {
		t.Errorf("originalUriBaseIds %+v: want %s described, without a machine's path", run.OriginalURIBaseIDs, srcRoot)
	}
	for i, f := range r.Findings {
		got := run.Results[i].Locations[0].PhysicalLocation.ArtifactLocation
		switch {
		case f.File == stdinName:
			if got.URI != "" || got.URIBaseID != "" || got.Description == nil || got.Description.Text != "standard input" {
				t.Errorf("stdin: %+v, want no uri and the description \"standard input\"", got)
			}
		case strings.HasPrefix(want[f.File], "file://"):
			if got.URI != want[f.File] || got.URIBaseID != "" {
				t.Errorf("%s: %+v, want the absolute %s and no uriBaseId", f.File, got, want[f.File])
			}
		default:
			if got.URI != want[f.File] || got.URIBaseID != srcRoot {
				t.Errorf("%s: %+v, want %s on %s", f.File, got, want[f.File], srcRoot)
			}
		}
	}
}

// A run with no file inside the root does not define a base nobody uses.
func TestSARIFNoRootWithoutRelativeFiles(t *testing.T) {
	r := &Result{Version: "v1", Files: []File{{Name: stdinName, URI: "stdin"}},
		Findings: []rules.Finding{{Rule: "scan-time", Severity: rules.Note, File: stdinName, Message: "m"}}}
	if out := render(t, "sarif", r, false); strings.Contains(out, "originalUriBaseIds") || strings.Contains(out, srcRoot) {
		t.Errorf("stdin only: %s defined\n%s", srcRoot, out)
	}
}

// The log holds only what is set: no -1 "unset" sentinel and no empty array, but for the
// results list of a clean run (measured before: 102 empty arrays and 42 -1 values in the
// 6-result demo log).
func TestSARIFNoSentinelsOrEmptyArrays(t *testing.T) {
	r, _ := placesResult(t)
	for name, doc := range map[string]*Result{"hand": handResult(), "places": r, "clean": {Version: "v"}} {
		var v any
		if err := json.Unmarshal([]byte(render(t, "sarif", doc, false)), &v); err != nil {
			t.Fatal(err)
		}
		walkJSON(v, "", func(path string, v any) {
			switch x := v.(type) {
			case float64:
				if x == -1 && !strings.Contains(path, ".properties.") {
					t.Errorf("%s: %s is -1", name, path)
				}
			case []any:
				if len(x) == 0 && !strings.HasSuffix(path, ".results") {
					t.Errorf("%s: %s is an empty array", name, path)
				}
			}
		})
	}
}

func walkJSON(v any, path string, visit func(string, any)) {
	visit(path, v)
	switch x := v.(type) {
	case map[string]any:
		for k, e := range x {
			walkJSON(e, path+"."+k, visit)
		}
	case []any:
		for _, e := range x {
			walkJSON(e, path+"[]", visit)
		}
	}
}

// compactSARIF keeps member order and every value it does not drop, property bags whole.
func TestCompactSARIF(t *testing.T) {
	in := `{"b":[],"a":{"index":-1,"uri":"x","arguments":[]},"results":[],"properties":{"n":-1,"l":[]},"rank":-1.5,"s":"-1"}`
	got, err := compactSARIF([]byte(in))
	if err != nil {
		t.Fatal(err)
	}
	want := "{\n  \"a\": {\n    \"uri\": \"x\"\n  },\n  \"results\": [],\n  \"properties\": {\n    \"n\": -1,\n    \"l\": []\n  },\n  \"rank\": -1.5,\n  \"s\": \"-1\"\n}\n"
	if string(got) != want {
		t.Errorf("got\n%s\nwant\n%s", got, want)
	}
	if _, err := compactSARIF([]byte(`{"a":`)); err == nil {
		t.Error("truncated JSON: no error")
	}
}

// The automation id keeps its category and names the set of files checked: the same set
// in any order gives the same id, another set another one.
func TestSARIFAutomationID(t *testing.T) {
	a := &Result{Files: []File{{Name: "a.yaml", URI: "a.yaml"}, {Name: "b.yaml", URI: "b.yaml"}}}
	b := &Result{Files: []File{{Name: "b.yaml", URI: "b.yaml"}, {Name: "a.yaml", URI: "a.yaml"}}}
	c := &Result{Files: []File{{Name: "a.yaml", URI: "a.yaml"}}}
	idA, idB, idC := automationID(a), automationID(b), automationID(c)
	if !strings.HasPrefix(idA, automationCategory) || len(idA) != len(automationCategory)+16 {
		t.Errorf("id %q: want %s and 16 hex digits", idA, automationCategory)
	}
	if idA != idB || idA == idC {
		t.Errorf("ids %q %q %q: want the first two equal, the third different", idA, idB, idC)
	}
}

// Versions as SARIF wants them: starting with a digit; semanticVersion only when the
// string is Semantic Versioning 2.0.0 (semver.org).
func TestSARIFVersions(t *testing.T) {
	for _, c := range []struct{ in, version string }{
		{"v1.2.3", "1.2.3"},
		{"v0.0.0-20260101120000-abcdef123456+dirty", "0.0.0-20260101120000-abcdef123456+dirty"},
		{"(devel)", "0.0.0-devel"},
		{"", "0.0.0-devel"},
		{"1.4", "1.4"},
	} {
		if got := numericVersion(c.in); got != c.version {
			t.Errorf("numericVersion(%q) = %q, want %q", c.in, got, c.version)
		}
	}
	if !semver.MatchString("1.2.3-rc.1+b.5") || semver.MatchString("1.4") || semver.MatchString("01.2.3") {
		t.Error("semver grammar")
	}
}

// Percent-encoding of URI paths (RFC 3986, 2.1 and 3.3): what a path may hold stays, the
// rest is %XX of its UTF-8 bytes; a relative reference encodes ":" (RFC 3986, 4.2).
func TestEscapePath(t *testing.T) {
	for _, c := range []struct {
		in       string
		relative bool
		want     string
	}{
		{"models/m.yaml", true, "models/m.yaml"},
		{"a b/c#d?e%f.yaml", true, "a%20b/c%23d%3Fe%25f.yaml"},
		{"c:d/x.yaml", true, "c%3Ad/x.yaml"},
		{"/C:/x y.yaml", false, "/C:/x%20y.yaml"},
		{"é\n\"<>\\.yaml", true, "%C3%A9%0A%22%3C%3E%5C.yaml"},
		{"keep-._~!$&'()*+,;=@", true, "keep-._~!$&'()*+,;=@"},
	} {
		if got := escapePath(c.in, c.relative); got != c.want {
			t.Errorf("escapePath(%q, %v) = %q, want %q", c.in, c.relative, got, c.want)
		}
	}
}
