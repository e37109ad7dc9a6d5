package report

import (
	"testing"

	"github.com/scangate/scangate/rules"
)

// URI and Key index the files once; the first file of a name wins, a file added later is
// found, and a name no file has is returned as given.
func TestResultURIAndKey(t *testing.T) {
	r := &Result{Files: []File{{Name: "a.yaml", URI: "models/a.yaml"}, {Name: "a.yaml", URI: "other/a.yaml"}}}
	if got := r.URI("a.yaml"); got != "models/a.yaml" {
		t.Errorf("URI(a.yaml) = %q", got)
	}
	if got := r.URI("b.yaml"); got != "b.yaml" {
		t.Errorf("URI(b.yaml) = %q", got)
	}
	r.Files = append(r.Files, File{Name: "b.yaml", URI: "../b.yaml", Key: "b.yaml"})
	if got := r.URI("b.yaml"); got != "../b.yaml" {
		t.Errorf("after adding b.yaml: %q", got)
	}
	// Key falls back to URI; the fingerprint hashes the key.
	if got := r.Key("a.yaml"); got != "models/a.yaml" {
		t.Errorf("Key(a.yaml) = %q", got)
	}
	f := rules.Finding{Rule: "scan-time", File: "b.yaml", Table: "t", Subject: "s"}
	if got, want := r.Fingerprint(f), rules.Fingerprint(f, "b.yaml"); got != want {
		t.Errorf("Fingerprint hashes %q, want the key", got)
	}
}
