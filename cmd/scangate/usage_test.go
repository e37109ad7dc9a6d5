package main

import (
	"strings"
	"testing"
)

// A shell the completion command does not know is a usage error (exit 2), not its help
// with exit 0; the shells it knows print a script.
func TestCompletionShells(t *testing.T) {
	r := scangate(t, root(t), "", nil, "completion", "tcsh")
	if r.code != 2 || !strings.Contains(r.stderr, `unknown command "tcsh" for "scangate completion"`) {
		t.Errorf("completion tcsh: exit %d, %q", r.code, r.stderr)
	}
	for _, shell := range []string{"bash", "zsh", "fish", "powershell"} {
		r := scangate(t, root(t), "", nil, "completion", shell)
		if r.code != 0 || !strings.Contains(r.stdout, "scangate") {
			t.Errorf("completion %s: exit %d, %d bytes", shell, r.code, len(r.stdout))
		}
	}
	wantCode(t, scangate(t, root(t), "", nil, "completion"), 0)
}

// Every embedded schema prints by name, manifest by default, and an unknown name lists
// the ones there are.
func TestSchemaNames(t *testing.T) {
	for _, name := range []string{"manifest", "config", "output", "diff", "baseline", "survey"} {
		r := scangate(t, root(t), "", nil, "schema", name)
		if r.code != 0 || !strings.Contains(r.stdout, `"$schema": "https://json-schema.org/draft/2020-12/schema"`) {
			t.Errorf("schema %s: exit %d", name, r.code)
		}
	}
	if a, b := scangate(t, root(t), "", nil, "schema"), scangate(t, root(t), "", nil, "schema", "manifest"); a.stdout != b.stdout {
		t.Error("schema without a name is not the manifest schema")
	}
	r := scangate(t, root(t), "", nil, "schema", "nope")
	if r.code != 2 || !strings.Contains(r.stderr, `unknown schema "nope"; use manifest, config, output, diff, baseline`) {
		t.Errorf("schema nope: exit %d, %q", r.code, r.stderr)
	}
}
