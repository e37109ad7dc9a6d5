package report

import "testing"

// URI indexes the files once; the first file of a name wins, a file added later is found,
// and a name no file has is returned as given.
func TestResultURI(t *testing.T) {
	r := &Result{Files: []File{{Name: "a.yaml", URI: "models/a.yaml"}, {Name: "a.yaml", URI: "other/a.yaml"}}}
	if got := r.URI("a.yaml"); got != "models/a.yaml" {
		t.Errorf("URI(a.yaml) = %q", got)
	}
	if got := r.URI("b.yaml"); got != "b.yaml" {
		t.Errorf("URI(b.yaml) = %q", got)
	}
	r.Files = append(r.Files, File{Name: "b.yaml", URI: "models/b.yaml"})
	if got := r.URI("b.yaml"); got != "models/b.yaml" {
		t.Errorf("after adding b.yaml: %q", got)
	}
}
