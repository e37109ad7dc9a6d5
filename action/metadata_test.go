package action_test

import (
	"bytes"
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"slices"
	"strings"
	"testing"

	"github.com/rhysd/actionlint"
	"go.yaml.in/yaml/v3"
)

func readYAML(t *testing.T, path string, v any) {
	t.Helper()
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if err := yaml.Unmarshal(data, v); err != nil {
		t.Fatalf("%s: %v", path, err)
	}
}

func readFile(t *testing.T, path string) string {
	t.Helper()
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return string(data)
}

// get is the value of key in a YAML mapping node, or nil.
func get(n *yaml.Node, key string) *yaml.Node {
	if n == nil || n.Kind != yaml.MappingNode {
		return nil
	}
	for i := 0; i+1 < len(n.Content); i += 2 {
		if n.Content[i].Value == key {
			return n.Content[i+1]
		}
	}
	return nil
}

// keys lists a mapping node's keys in file order.
func keys(n *yaml.Node) []string {
	var ks []string
	if n != nil && n.Kind == yaml.MappingNode {
		for i := 0; i+1 < len(n.Content); i += 2 {
			ks = append(ks, n.Content[i].Value)
		}
	}
	return ks
}

// ref is a property path an expression reads, e.g. [inputs paths] or [steps run outputs findings].
type ref []string

// exprRefs parses every ${{ }} in s (or s itself, when bare, as `if:` conditions are)
// with actionlint's expression parser and returns the inputs.* and steps.* paths read.
func exprRefs(s string, bare bool) ([]ref, error) {
	var refs []ref
	parse := func(src string) (int, error) {
		lex := actionlint.NewExprLexer(src)
		node, err := actionlint.NewExprParser().Parse(lex)
		if err != nil {
			return 0, fmt.Errorf("%q: %s", src, err.Message)
		}
		actionlint.VisitExprNode(node, func(n, parent actionlint.ExprNode, entering bool) {
			if !entering {
				return
			}
			if _, isDeref := parent.(*actionlint.ObjectDerefNode); isDeref {
				return // only the outermost dereference of a chain
			}
			var path ref
			for {
				switch d := n.(type) {
				case *actionlint.ObjectDerefNode:
					path = append(ref{strings.ToLower(d.Property)}, path...)
					n = d.Receiver
					continue
				case *actionlint.VariableNode:
					if d.Name == "inputs" || d.Name == "steps" {
						refs = append(refs, append(ref{d.Name}, path...))
					}
				}
				return
			}
		})
		return lex.Offset(), nil
	}
	if bare {
		_, err := parse(s + "}}")
		return refs, err
	}
	for {
		i := strings.Index(s, "${{")
		if i < 0 {
			return refs, nil
		}
		n, err := parse(s[i+3:])
		if err != nil {
			return refs, err
		}
		s = s[i+3+n:]
	}
}

// scalars calls f for every scalar in the tree under n with the key it is the value of.
func scalars(n *yaml.Node, key string, f func(key string, v *yaml.Node)) {
	switch n.Kind {
	case yaml.DocumentNode, yaml.SequenceNode:
		for _, c := range n.Content {
			scalars(c, key, f)
		}
	case yaml.MappingNode:
		for i := 0; i+1 < len(n.Content); i += 2 {
			scalars(n.Content[i+1], n.Content[i].Value, f)
		}
	case yaml.ScalarNode:
		f(key, n)
	}
}

var inputVar = regexp.MustCompile(`\bINPUT_[A-Z0-9_]+`)

// envName is the environment variable action.yml passes an input in.
func envName(input string) string {
	return "INPUT_" + strings.ToUpper(strings.ReplaceAll(input, "-", "_"))
}

// actionProblems checks an action.yml against the metadata rules that can be checked
// offline. scripts maps a script's name (run.sh, install.sh) to its text: a run step
// that calls one gets its INPUT_* variables and the outputs it writes.
func actionProblems(data []byte, scripts map[string]string) []string {
	var problems []string
	bad := func(n *yaml.Node, format string, args ...any) {
		line := 0
		if n != nil {
			line = n.Line
		}
		problems = append(problems, fmt.Sprintf("action.yml:%d: %s", line, fmt.Sprintf(format, args...)))
	}
	var doc yaml.Node
	if err := yaml.Unmarshal(data, &doc); err != nil {
		return []string{"action.yml: " + err.Error()}
	}
	if len(doc.Content) != 1 || doc.Content[0].Kind != yaml.MappingNode {
		return []string{"action.yml: not a mapping"}
	}
	top := doc.Content[0]
	for _, k := range keys(top) {
		if !slices.Contains([]string{"name", "author", "description", "inputs", "outputs", "runs", "branding"}, k) {
			bad(get(top, k), "unknown top-level key %q", k)
		}
	}
	for _, k := range []string{"name", "description"} {
		if v := get(top, k); v == nil || v.Kind != yaml.ScalarNode || strings.TrimSpace(v.Value) == "" {
			bad(top, "required key %s is missing or empty", k)
		}
	}
	runs := get(top, "runs")
	if runs == nil {
		bad(top, "required key runs is missing")
		return problems
	}
	if u := get(runs, "using"); u == nil || u.Value != "composite" {
		bad(runs, "runs.using must be composite")
	}

	inputs := map[string]bool{} // declared input -> referenced
	for _, name := range keys(get(top, "inputs")) {
		in := get(get(top, "inputs"), name)
		if !regexp.MustCompile(`^[A-Za-z_][A-Za-z0-9_-]*$`).MatchString(name) {
			bad(in, "input %q: an input ID is letters, digits, - and _", name)
		}
		if get(in, "description") == nil {
			bad(in, "input %s has no description", name)
		}
		for _, k := range keys(in) {
			if !slices.Contains([]string{"description", "required", "default", "deprecationMessage"}, k) {
				bad(get(in, k), "input %s: unknown key %q", name, k)
			}
		}
		inputs[strings.ToLower(name)] = false
	}

	steps := get(runs, "steps")
	if steps == nil || steps.Kind != yaml.SequenceNode || len(steps.Content) == 0 {
		bad(runs, "a composite action needs runs.steps")
		return problems
	}
	stepIndex := map[string]int{} // id -> position
	stepWrites := map[string][]string{}
	for i, s := range steps.Content {
		for _, k := range keys(s) {
			if !slices.Contains([]string{"id", "if", "name", "env", "run", "shell", "uses", "with", "working-directory", "continue-on-error"}, k) {
				bad(get(s, k), "step %d: unknown key %q", i+1, k)
			}
		}
		run, uses := get(s, "run"), get(s, "uses")
		switch {
		case (run == nil) == (uses == nil):
			bad(s, "step %d: needs exactly one of run and uses", i+1)
		case run != nil:
			if sh := get(s, "shell"); sh == nil || sh.Value == "" {
				bad(s, "step %d: a composite run step must declare shell", i+1)
			}
			if strings.Contains(run.Value, "${{") {
				bad(run, "step %d: ${{ }} inside a run script pastes input into code; pass it through env", i+1)
			}
		case uses != nil:
			if !regexp.MustCompile(`^(\./\S+|[\w.-]+/[\w.-]+(/[\w./-]+)?@[\w.-]+)$`).MatchString(uses.Value) {
				bad(uses, "step %d: uses %q is neither ./path nor owner/repo[/path]@ref", i+1, uses.Value)
			}
		}
		if id := get(s, "id"); id != nil {
			if _, dup := stepIndex[id.Value]; dup {
				bad(id, "step id %s is used twice", id.Value)
			}
			stepIndex[id.Value] = i
		}

		// The INPUT_* variables a run step reads must be the inputs it is given.
		text := ""
		if run != nil {
			text = run.Value
			for name, script := range scripts {
				if !strings.Contains(text, name) {
					continue
				}
				text += "\n" + script
				if id := get(s, "id"); id != nil {
					for _, m := range regexp.MustCompile(`"([a-z][a-z0-9-]*)=`).FindAllStringSubmatch(script, -1) {
						stepWrites[id.Value] = append(stepWrites[id.Value], m[1])
					}
				}
			}
		}
		env := get(s, "env")
		read := inputVar.FindAllString(text, -1)
		for _, v := range read {
			if get(env, v) == nil {
				bad(s, "step %d reads %s, which its env does not set", i+1, v)
			}
		}
		for _, k := range keys(env) {
			if !strings.HasPrefix(k, "INPUT_") {
				continue
			}
			if !slices.Contains(read, k) {
				bad(get(env, k), "step %d sets %s, which it never reads", i+1, k)
			}
			refs, err := exprRefs(get(env, k).Value, false)
			if err != nil || len(refs) != 1 || len(refs[0]) != 2 || refs[0][0] != "inputs" || envName(refs[0][1]) != k {
				bad(get(env, k), "step %d: %s must be set to ${{ inputs.<its input> }}", i+1, k)
			}
		}
	}

	// Every expression: inputs it reads must be declared; steps it reads must exist
	// (and, inside a step, come before it); step outputs must be written.
	check := func(n *yaml.Node, bare bool, here int) {
		refs, err := exprRefs(n.Value, bare)
		if err != nil {
			bad(n, "expression: %v", err)
			return
		}
		for _, r := range refs {
			switch {
			case r[0] == "inputs" && len(r) >= 2:
				if _, ok := inputs[r[1]]; !ok {
					bad(n, "unknown input %s", r[1])
				} else {
					inputs[r[1]] = true
				}
			case r[0] == "steps" && len(r) >= 2:
				at, ok := stepIndex[r[1]]
				switch {
				case !ok:
					bad(n, "no step has id %s", r[1])
				case at >= here:
					bad(n, "step %s is read before it runs", r[1])
				case len(r) >= 4 && r[2] == "outputs" && stepWrites[r[1]] != nil && !slices.Contains(stepWrites[r[1]], r[3]):
					bad(n, "step %s never writes output %s", r[1], r[3])
				}
			}
		}
	}
	for i, s := range steps.Content {
		for _, k := range keys(s) {
			if k == "if" {
				check(get(s, k), !strings.Contains(get(s, k).Value, "${{"), i)
			} else {
				scalars(get(s, k), k, func(_ string, v *yaml.Node) { check(v, false, i) })
			}
		}
	}
	outputs := get(top, "outputs")
	for _, name := range keys(outputs) {
		o := get(outputs, name)
		if get(o, "description") == nil {
			bad(o, "output %s has no description", name)
		}
		v := get(o, "value")
		if v == nil {
			bad(o, "output %s: a composite action's output needs a value", name)
			continue
		}
		refs, _ := exprRefs(v.Value, false)
		if len(refs) == 0 || refs[0][0] != "steps" {
			bad(v, "output %s must come from a step's outputs", name)
		}
		check(v, false, len(steps.Content))
	}
	for _, name := range sortedKeys(inputs) {
		if !inputs[name] {
			bad(get(get(top, "inputs"), name), "input %s is declared but never used", name)
		}
	}
	return problems
}

// TestActionMetadata checks action/action.yml against the metadata rules: required
// keys, a composite run with shell on every run step, inputs declared and used, INPUT_*
// variables wired to their inputs, outputs read from step outputs that exist.
func TestActionMetadata(t *testing.T) {
	data := []byte(readFile(t, filepath.Join(root, "action", "action.yml")))
	for _, p := range actionProblems(data, actionScripts(t)) {
		t.Error(p)
	}

	// The inputs the brief of the action promises, with their defaults.
	var md struct {
		Inputs  map[string]struct{ Default string }
		Outputs map[string]struct{ Value string }
	}
	if err := yaml.Unmarshal(data, &md); err != nil {
		t.Fatal(err)
	}
	wantInputs := map[string]string{"version": "", "paths": ".", "config": "", "fail-on": "error", "baseline": "",
		"diff-base": "", "max-added-ms": "", "max-added-segments": "", "sarif-file": "scangate.sarif", "upload-sarif": "true",
		"sarif-category": "", "summary": "true"}
	if got := sortedKeys(md.Inputs); !slices.Equal(got, sortedKeys(wantInputs)) {
		t.Errorf("inputs %v, want %v", got, sortedKeys(wantInputs))
	}
	for name, def := range wantInputs {
		if in, ok := md.Inputs[name]; ok && in.Default != def {
			t.Errorf("input %s defaults to %q, want %q", name, in.Default, def)
		}
	}
	if got, want := sortedKeys(md.Outputs), []string{"errors", "exit-code", "findings", "sarif-file", "warnings"}; !slices.Equal(got, want) {
		t.Errorf("outputs %v, want %v", got, want)
	}
	if !strings.Contains(string(data), `bash "$GITHUB_ACTION_PATH/install.sh" install`) {
		t.Error("action.yml does not install scangate with install.sh")
	}
}

// actionScripts are the scripts action.yml's run steps call, by name.
func actionScripts(t *testing.T) map[string]string {
	t.Helper()
	return map[string]string{
		"run.sh":     readFile(t, filepath.Join(root, "action", "run.sh")),
		"install.sh": readFile(t, filepath.Join(root, "action", "install.sh")),
	}
}

// TestActionMetadataCatches feeds broken copies of action.yml to the checker: each
// must be caught, or the check above proves nothing.
func TestActionMetadataCatches(t *testing.T) {
	data := readFile(t, filepath.Join(root, "action", "action.yml"))
	scripts := actionScripts(t)
	for _, c := range []struct{ name, old, new, want string }{
		{"no shell", "      shell: bash\n      env:\n        INPUT_VERSION", "      env:\n        INPUT_VERSION", "must declare shell"},
		{"input pasted into a script", `run: bash "$GITHUB_ACTION_PATH/run.sh"`, `run: bash "$GITHUB_ACTION_PATH/run.sh" ${{ inputs.paths }}`, "inside a run script"},
		{"unknown input", "${{ inputs.paths }}", "${{ inputs.pathz }}", "unknown input pathz"},
		{"unused input", "inputs:\n", "inputs:\n  extra:\n    description: never read\n", "input extra is declared but never used"},
		{"env wired to another input", "INPUT_CONFIG: ${{ inputs.config }}", "INPUT_CONFIG: ${{ inputs.baseline }}", "INPUT_CONFIG must be set"},
		{"env not read", "INPUT_SUMMARY: ${{ inputs.summary }}", "INPUT_SUMMARY: ${{ inputs.summary }}\n        INPUT_SPARE: ${{ inputs.summary }}", "sets INPUT_SPARE, which it never reads"},
		{"output not written", "steps.run.outputs.errors", "steps.run.outputs.mistakes", "never writes output mistakes"},
		{"output from a missing step", "steps.run.outputs.warnings", "steps.runner.outputs.warnings", "no step has id runner"},
		{"step read before it runs", "if: always() && steps.run.outputs.upload-sarif == 'true' && steps.run.outputs.sarif-file != ''", "if: steps.missing.outputs.x", "no step has id missing"},
		{"install output not written", "steps.plan.outputs.cache-key", "steps.plan.outputs.cache-kee", "never writes output cache-kee"},
		{"not composite", "using: composite", "using: node20", "runs.using must be composite"},
		{"no description", "\ndescription: ", "\nsummary-line: ", "required key description"},
	} {
		t.Run(strings.ReplaceAll(c.name, " ", "_"), func(t *testing.T) {
			if !strings.Contains(data, c.old) {
				t.Fatalf("action.yml no longer holds %q; update the case", c.old)
			}
			got := actionProblems([]byte(strings.Replace(data, c.old, c.new, 1)), scripts)
			if !slices.ContainsFunc(got, func(p string) bool { return strings.Contains(p, c.want) }) {
				t.Errorf("want a problem containing %q, got %q", c.want, got)
			}
		})
	}
	// run.sh reads a variable action.yml does not set.
	scripts["run.sh"] += "\necho \"$INPUT_NEW_THING\"\n"
	got := actionProblems([]byte(data), scripts)
	if !slices.ContainsFunc(got, func(p string) bool { return strings.Contains(p, "reads INPUT_NEW_THING") }) {
		t.Errorf("a variable run.sh reads but action.yml does not set went unnoticed: %q", got)
	}
}

// newLinter is actionlint with shellcheck on the run: scripts when the machine has it
// (the hosted runners do); without it the other checks still run.
func newLinter(t *testing.T) (*actionlint.Linter, *actionlint.Project) {
	t.Helper()
	shellcheck, _ := exec.LookPath("shellcheck")
	l, err := actionlint.NewLinter(io.Discard, &actionlint.LinterOptions{WorkingDir: root, Shellcheck: shellcheck})
	if err != nil {
		t.Fatal(err)
	}
	p, err := actionlint.NewProject(root)
	if err != nil {
		t.Fatal(err)
	}
	return l, p
}

func lint(t *testing.T, name string, content []byte) []*actionlint.Error {
	t.Helper()
	l, p := newLinter(t)
	errs, err := l.Lint(name, content, p)
	if err != nil {
		t.Fatal(err)
	}
	return errs
}

// TestWorkflowsLint runs actionlint on every workflow; uses: ./action makes it read
// action.yml too and check the inputs passed to it.
func TestWorkflowsLint(t *testing.T) {
	files, err := filepath.Glob(filepath.Join(root, ".github", "workflows", "*.y*ml"))
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"ci.yml", "example.yml"} {
		if !slices.Contains(files, filepath.Join(root, ".github", "workflows", want)) {
			t.Errorf(".github/workflows/%s is missing", want)
		}
	}
	for _, f := range files {
		rel, _ := filepath.Rel(root, f)
		for _, e := range lint(t, rel, []byte(readFile(t, f))) {
			t.Errorf("%s:%d:%d: %s [%s]", rel, e.Line, e.Column, e.Message, e.Kind)
		}
	}
}

// TestActionStepsLint runs actionlint on the action's steps. actionlint reads workflows,
// not action metadata, so the steps are put into a reusable workflow whose inputs are the
// action's: expressions, contexts, step references and known actions' inputs get the
// same checks as in a workflow.
func TestActionStepsLint(t *testing.T) {
	wf := actionAsWorkflow(t, []byte(readFile(t, filepath.Join(root, "action", "action.yml"))))
	for _, e := range lint(t, "action.yml", wf) {
		t.Errorf("action.yml as a workflow, line %d: %s [%s]\n%s", e.Line, e.Message, e.Kind, lineOf(wf, e.Line))
	}
}

// TestLintCatches makes sure actionlint is wired in: a misspelt input of ./action and a
// step read before it exists must be reported.
func TestLintCatches(t *testing.T) {
	bad := []byte(`on: pull_request
jobs:
  scangate:
    runs-on: ubuntu-latest
    steps:
      - uses: ./action
        with:
          pathz: models
      - run: echo "$X"
        env:
          X: ${{ steps.nothing.outputs.findings }}
`)
	errs := lint(t, ".github/workflows/bad.yml", bad)
	var msgs []string
	for _, e := range errs {
		msgs = append(msgs, e.Message)
	}
	all := strings.Join(msgs, "\n")
	for _, want := range []string{`"pathz"`, `"nothing"`} {
		if !strings.Contains(all, want) {
			t.Errorf("actionlint did not report %s; it said:\n%s", want, all)
		}
	}
	wf := actionAsWorkflow(t, []byte(strings.Replace(readFile(t, filepath.Join(root, "action", "action.yml")),
		"go-version: stable", "go-versoin: stable", 1)))
	if errs := lint(t, "action.yml", wf); len(errs) == 0 {
		t.Error("actionlint passed the action's steps with a misspelt input of actions/setup-go")
	}
}

// actionAsWorkflow wraps the composite steps of an action.yml in a reusable workflow
// that declares the action's inputs as string inputs.
func actionAsWorkflow(t *testing.T, data []byte) []byte {
	t.Helper()
	var doc yaml.Node
	if err := yaml.Unmarshal(data, &doc); err != nil {
		t.Fatal(err)
	}
	top := doc.Content[0]
	str := func(s string) *yaml.Node { return &yaml.Node{Kind: yaml.ScalarNode, Value: s} }
	mapping := func(kv ...*yaml.Node) *yaml.Node { return &yaml.Node{Kind: yaml.MappingNode, Content: kv} }
	inputs := mapping()
	for _, name := range keys(get(top, "inputs")) {
		inputs.Content = append(inputs.Content, str(name), mapping(str("type"), str("string"), str("required"), str("false")))
	}
	wf := mapping(
		str("on"), mapping(str("workflow_call"), mapping(str("inputs"), inputs)),
		str("jobs"), mapping(str("action"), mapping(
			str("runs-on"), str("ubuntu-latest"),
			str("steps"), get(get(top, "runs"), "steps"),
		)),
	)
	var b bytes.Buffer
	enc := yaml.NewEncoder(&b)
	enc.SetIndent(2)
	if err := enc.Encode(wf); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

func lineOf(data []byte, n int) string {
	lines := strings.Split(string(data), "\n")
	if n < 1 || n > len(lines) {
		return ""
	}
	return "    " + lines[n-1]
}

// TestShellcheck runs shellcheck on the action's and the release's scripts when the machine has it.
func TestShellcheck(t *testing.T) {
	shellcheck, err := exec.LookPath("shellcheck")
	if err != nil {
		t.Skip("shellcheck is not on PATH")
	}
	for _, script := range []string{"run.sh", "install.sh", "pre-commit.sh", "../.ci/release-check"} {
		cmd := exec.Command(shellcheck, "--shell=bash", "--severity=style", script)
		if out, err := cmd.CombinedOutput(); err != nil {
			t.Errorf("shellcheck %s: %v\n%s", script, err, out)
		}
	}
}

// TestREADMESection keeps the README's CI section in step with action.yml and the
// pre-commit hook: its input table lists every input with its default, and its snippets
// use only inputs and hook IDs that exist.
func TestREADMESection(t *testing.T) {
	readme := readFile(t, filepath.Join(root, "README.md"))
	start := strings.Index(readme, "\n## Use it in CI\n")
	if start < 0 {
		t.Fatal(`README.md has no "## Use it in CI" section`)
	}
	section := readme[start+1:]
	if end := strings.Index(section, "\n## "); end >= 0 {
		section = section[:end]
	}
	var md struct {
		Inputs  map[string]struct{ Default string }
		Outputs map[string]any
	}
	readYAML(t, filepath.Join(root, "action", "action.yml"), &md)

	table := map[string]string{}
	for _, m := range regexp.MustCompile("(?m)^\\| `([a-z-]+)` \\| *`?([^`|]*?)`? *\\|").FindAllStringSubmatch(section, -1) {
		table[m[1]] = m[2]
	}
	if got, want := sortedKeys(table), sortedKeys(md.Inputs); !slices.Equal(got, want) {
		t.Errorf("the README's input table lists %v; action.yml has %v", got, want)
	}
	for name, in := range md.Inputs {
		if def, ok := table[name]; ok && def != in.Default {
			t.Errorf("the README says input %s defaults to %q; action.yml says %q", name, def, in.Default)
		}
	}
	for name := range md.Outputs {
		if !strings.Contains(section, "`"+name+"`") {
			t.Errorf("the README does not name output %s", name)
		}
	}

	blocks := regexp.MustCompile("(?s)```yaml\n(.*?)```").FindAllStringSubmatch(section, -1)
	if len(blocks) != 2 {
		t.Fatalf("the section has %d yaml blocks, want 2 (the action, the hook)", len(blocks))
	}
	var steps []struct {
		Uses string
		With map[string]any
	}
	if err := yaml.Unmarshal([]byte(blocks[0][1]), &steps); err != nil || len(steps) != 1 {
		t.Fatalf("the action snippet is not one step: %v", err)
	}
	// Until the first release tag, main (a source build); then a full release tag.
	if !regexp.MustCompile(`^scangate/scangate/action@(main|v[0-9]+\.[0-9]+\.[0-9]+)$`).MatchString(steps[0].Uses) {
		t.Errorf("the snippet uses %q", steps[0].Uses)
	}
	for k := range steps[0].With {
		if _, ok := md.Inputs[k]; !ok {
			t.Errorf("the snippet passes %s, which the action does not take", k)
		}
	}
	var pc struct {
		Repos []struct{ Hooks []struct{ ID string } }
	}
	if err := yaml.Unmarshal([]byte(blocks[1][1]), &pc); err != nil || len(pc.Repos) != 1 || len(pc.Repos[0].Hooks) != 1 {
		t.Fatalf("the hook snippet is not one repo with one hook: %v", err)
	}
	var hooks []struct{ ID string }
	readYAML(t, filepath.Join(root, ".pre-commit-hooks.yaml"), &hooks)
	if len(hooks) == 0 || pc.Repos[0].Hooks[0].ID != hooks[0].ID {
		t.Errorf("the hook snippet names %q; .pre-commit-hooks.yaml defines %v", pc.Repos[0].Hooks[0].ID, hooks)
	}
}

// TestExampleWorkflow: the workflow users copy runs on pull requests with the history
// diff-base needs, the permissions the SARIF upload needs, and the action's inputs.
func TestExampleWorkflow(t *testing.T) {
	var wf struct {
		On          map[string]any
		Permissions map[string]string
		Jobs        map[string]struct {
			Steps []struct {
				Uses string
				With map[string]any
			}
		}
	}
	readYAML(t, filepath.Join(root, ".github", "workflows", "example.yml"), &wf)
	if _, ok := wf.On["pull_request"]; !ok {
		t.Error("example.yml does not run on pull_request")
	}
	if wf.Permissions["contents"] != "read" || wf.Permissions["security-events"] != "write" {
		t.Errorf("example.yml permissions %v, want contents read and security-events write", wf.Permissions)
	}
	var checkout, action bool
	for _, job := range wf.Jobs {
		for _, s := range job.Steps {
			switch {
			case strings.HasPrefix(s.Uses, "actions/checkout@"):
				checkout = s.With["fetch-depth"] == 0
			case s.Uses == "./action":
				action = s.With["paths"] != nil && s.With["diff-base"] == "origin/${{ github.base_ref }}" && s.With["upload-sarif"] == true
			}
		}
	}
	if !checkout || !action {
		t.Errorf("example.yml: checkout with fetch-depth 0 %v, ./action with paths, diff-base and upload-sarif %v; want both", checkout, action)
	}
}

// TestReleaseRunsOnlyFirstPartyActions holds the release workflow to its promise: the job
// that can write releases and packages runs no third-party action code, and the tools it
// runs are pinned to exact versions.
func TestReleaseRunsOnlyFirstPartyActions(t *testing.T) {
	var wf struct {
		Jobs map[string]struct {
			Steps []struct {
				Uses string `yaml:"uses"`
				Run  string `yaml:"run"`
			} `yaml:"steps"`
		} `yaml:"jobs"`
	}
	if err := yaml.Unmarshal([]byte(readFile(t, filepath.Join(root, ".github", "workflows", "release.yml"))), &wf); err != nil {
		t.Fatal(err)
	}
	installs := 0
	for name, job := range wf.Jobs {
		for _, s := range job.Steps {
			if s.Uses != "" && !strings.HasPrefix(s.Uses, "actions/") {
				t.Errorf("job %s uses %s: only first-party actions/* may run in the release job", name, s.Uses)
			}
			for _, line := range strings.Split(s.Run, "\n") {
				if _, mod, ok := strings.Cut(line, "go install "); ok {
					installs++
					if _, v, _ := strings.Cut(mod, "@"); !regexp.MustCompile(`^v\d+\.\d+\.\d+$`).MatchString(strings.TrimSpace(v)) {
						t.Errorf("job %s: %q is not pinned to an exact version", name, strings.TrimSpace(line))
					}
				}
			}
		}
	}
	if installs == 0 {
		t.Error("the release job installs no tools: the test reads the wrong file or shape")
	}
}
