package report

import (
	"errors"
	"os"
	"os/exec"
	"path/filepath"
	"testing"

	"github.com/scangate/scangate/rules"
)

// sarifValidator is the independent SARIF 2.1.0 validator the project keeps beside the
// repository (../shared/validators/README.md): it checks the schema and the
// specification's rules and exits 1 on any error or warning, 2 when it cannot run.
func sarifValidator(t *testing.T) string {
	t.Helper()
	if os.Getenv("SCANGATE_RULE_COPY") != "" {
		t.Skip("the repository copy TestAddingARule runs the suite in has no ../shared beside it")
	}
	bin := filepath.Join("..", "..", "..", "shared", "validators", "sarif-validate")
	missing := func(why string) {
		if os.Getenv("CI") == "true" {
			t.Fatalf("SARIF validator: %s", why)
		}
		t.Skipf("SARIF validator: %s", why)
	}
	if _, err := os.Stat(bin); err != nil {
		missing(err.Error())
	}
	if _, err := exec.LookPath("npm"); err != nil {
		missing("npm is not installed")
	}
	if _, err := exec.LookPath("node"); err != nil {
		missing("node is not installed")
	}
	return bin
}

// checkedFiles is one run over several manifests, each given as name and URI the way
// internal/run names them (RepositoryPath), with the findings the rules raise.
func checkedFiles(t *testing.T, nameURIs ...string) *Result {
	t.Helper()
	r := &Result{Version: "v0.0.0-test", FailOn: rules.Error}
	for i := 0; i < len(nameURIs); i += 2 {
		one := analysedResult(t, nameURIs[i], nameURIs[i+1], fixtureManifest, rules.Error)
		r.Files = append(r.Files, one.Files...)
		r.Findings = append(r.Findings, one.Findings...)
	}
	r.Summary = Summarize(r.Files)
	return r
}

// The demo golden, a run over files outside the repository root (absolute and relative
// to the working directory, beside one inside it whose name needs escaping) and a run
// over standard input all pass the validator with no error and no warning. Before:
// SARIF1004 (an absolute path on %SRCROOT%), SARIF1001 (a rule name equal to its id),
// SARIF2004 (index -1) and SARIF2005 (a version not starting with a digit).
func TestSARIFIndependentValidator(t *testing.T) {
	bin := sarifValidator(t)
	dir := t.TempDir()
	outside := filepath.Join(dir, "outside models", "m#1.yaml")
	logs := map[string]string{"demo": filepath.Join("..", "..", "testdata", "golden", "demo.sarif")}
	for name, r := range map[string]*Result{
		"outside": checkedFiles(t, outside, filepath.ToSlash(outside), "../m.yaml", "../m.yaml", "my models/m.yaml", "my models/m.yaml"),
		"stdin":   checkedFiles(t, stdinName, "stdin"),
	} {
		if len(r.Findings) == 0 {
			t.Fatalf("%s: no findings to locate", name)
		}
		logs[name] = filepath.Join(dir, name+".sarif")
		if err := os.WriteFile(logs[name], []byte(render(t, "sarif", r, false)), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	for name, path := range logs {
		t.Run(name, func(t *testing.T) {
			t.Parallel() // the validator takes seconds a file, mostly waiting
			out, err := exec.Command(bin, path).CombinedOutput()
			var exit *exec.ExitError
			switch {
			case errors.As(err, &exit) && exit.ExitCode() == 2:
				if os.Getenv("CI") == "true" {
					t.Fatalf("the validator could not run:\n%s", out)
				}
				t.Skipf("the validator could not run:\n%s", out)
			case err != nil:
				t.Errorf("the validator reports errors or warnings (%v):\n%s", err, out)
			}
		})
	}
}
