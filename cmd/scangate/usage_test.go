package main

import (
	"io"
	"slices"
	"strings"
	"testing"

	"github.com/scangate/scangate/internal/run"
)

// A shell the completion command does not know is a usage error (exit 2), not its help
// with exit 0; the shells it knows print a script.
func TestCompletionShells(t *testing.T) {
	r := scangate(t, root(t), "", nil, "completion", "tcsh")
	if r.code != 2 || !strings.Contains(r.stderr, `unknown shell "tcsh" for "scangate completion"; use one of bash, fish, powershell, zsh`) {
		t.Errorf("completion tcsh: exit %d, %q", r.code, r.stderr)
	}
	// A typo gets the shell meant (internal/suggest): "bsh" is one letter from "bash".
	r = scangate(t, root(t), "", nil, "completion", "bsh")
	if r.code != 2 || !strings.Contains(r.stderr, `unknown shell "bsh" for "scangate completion"; did you mean bash?`) {
		t.Errorf("completion bsh: exit %d, %q", r.code, r.stderr)
	}
	// The same for --format.
	r = scangate(t, root(t), "", nil, "check", "--format", "sarf", "testdata/demo")
	if r.code != 2 || !strings.Contains(r.stderr, `--format "sarf": unknown format; did you mean sarif?`) {
		t.Errorf("check --format sarf: exit %d, %q", r.code, r.stderr)
	}
	for _, shell := range []string{"bash", "zsh", "fish", "powershell"} {
		r := scangate(t, root(t), "", nil, "completion", shell)
		if r.code != 0 || !strings.Contains(r.stdout, "scangate") {
			t.Errorf("completion %s: exit %d, %d bytes", shell, r.code, len(r.stdout))
		}
	}
	wantCode(t, scangate(t, root(t), "", nil, "completion"), 0)
	// The shells the refusal names are the completion command's own.
	c, _, err := newRoot(nil, io.Discard, io.Discard).Find([]string{"completion"})
	if err != nil {
		t.Fatal(err)
	}
	var subs []string
	for _, sub := range c.Commands() {
		if sub.IsAvailableCommand() {
			subs = append(subs, sub.Name())
		}
	}
	if !slices.Equal(subs, run.Shells) {
		t.Errorf("completion writes %v, run.Shells says %v", subs, run.Shells)
	}
}

// Every embedded schema prints by name, manifest by default, and an unknown name lists
// the ones there are.
func TestSchemaNames(t *testing.T) {
	for _, name := range []string{"manifest", "config", "output", "diff", "plan", "baseline", "calibration", "survey"} {
		r := scangate(t, root(t), "", nil, "schema", name)
		if r.code != 0 || !strings.Contains(r.stdout, `"$schema": "https://json-schema.org/draft/2020-12/schema"`) {
			t.Errorf("schema %s: exit %d", name, r.code)
		}
	}
	if a, b := scangate(t, root(t), "", nil, "schema"), scangate(t, root(t), "", nil, "schema", "manifest"); a.stdout != b.stdout {
		t.Error("schema without a name is not the manifest schema")
	}
	r := scangate(t, root(t), "", nil, "schema", "nope")
	if r.code != 2 || !strings.Contains(r.stderr, `unknown schema "nope"; use manifest, config, output, diff, plan, baseline, calibration`) {
		t.Errorf("schema nope: exit %d, %q", r.code, r.stderr)
	}
}
