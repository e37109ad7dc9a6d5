// Command scangate checks column-store model manifests for segment layouts that waste
// scan time or memory, and fails a pipeline when a change breaks a budget.
package main

// go generate ./... rebuilds every generated artefact: first the manifest schema's
// waiver rule list, which the rest reads, then the README's manifest reference and rule
// table, docs/rules.md, the config schema and the golden reports.
//go:generate go test . -run ^TestGeneratedWaiverRuleEnum$ -update -count=1
//go:generate go test . -run Golden|Generated -update -count=1

import (
	"errors"
	"fmt"
	"io"
	"os"
	"runtime/debug"

	"github.com/scangate/scangate/internal/escape"
	"github.com/scangate/scangate/internal/run"
)

func main() {
	run.PaceGC(os.Getenv) // a short run's collector pace; GOGC or GOMEMLIMIT override it
	os.Exit(execute(os.Args[1:], os.Stdin, os.Stdout, os.Stderr))
}

// Exit codes: 0 clean at the --fail-on level, 1 findings at or above it, 2 invalid
// input or usage.
const (
	exitClean    = 0
	exitFindings = 1
	exitInvalid  = 2
)

// exitError carries an exit code out of a command; its message, if any, is printed.
type exitError struct {
	code int
	msg  string
}

func (e *exitError) Error() string { return e.msg }

// execute runs the command line and returns the process exit code.
func execute(args []string, stdin io.Reader, stdout, stderr io.Writer) (code int) {
	// A panic is a bug in scangate; the pipeline still gets a clear line and exit 2.
	defer func() {
		if p := recover(); p != nil {
			fmt.Fprintf(stderr, "scangate: internal error: %s\n%s\nPlease report this with the input that caused it.\n", say(fmt.Sprint(p)), debug.Stack())
			code = exitInvalid
		}
	}()
	out := run.Watch(stdout)
	root := newRoot(stdin, out, stderr)
	root.SetArgs(args)
	err := root.Execute()
	// A report that did not reach standard output is lost: say so and fail, whatever
	// the findings were.
	if err := out.Err(); err != nil {
		fmt.Fprintf(stderr, "scangate: cannot write to standard output: %v\n", run.UnwrapPath(err))
		return exitInvalid
	}
	if err == nil {
		return exitClean
	}
	var e *exitError
	if errors.As(err, &e) {
		if e.msg != "" {
			io.WriteString(stderr, "scangate: "+say(e.msg)+"\n")
		}
		return e.code
	}
	// Cobra's own errors are usage errors: unknown command or flag, wrong arguments.
	io.WriteString(stderr, "scangate: "+say(err.Error())+"\nRun 'scangate --help' for usage.\n")
	return exitInvalid
}

// say is a message for stderr, which may quote paths, names and values from the input:
// one visible line (escape.Text) that no CI runner reads as a command (escape.Log).
func say(msg string) string { return escape.Log(escape.Text(msg)) }
