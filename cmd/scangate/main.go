// Command scangate checks column-store model manifests for segment layouts that waste
// scan time or memory, and fails a pipeline when a change breaks a budget.
package main

import (
	"io"
	"os"
)

func main() {
	os.Exit(run(os.Args[1:], os.Stdin, os.Stdout, os.Stderr))
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

// run executes the command line and returns the process exit code.
func run(args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	root := newRoot(stdin, stdout, stderr)
	root.SetArgs(args)
	err := root.Execute()
	if err == nil {
		return exitClean
	}
	if e, ok := err.(*exitError); ok {
		if e.msg != "" {
			io.WriteString(stderr, "scangate: "+e.msg+"\n")
		}
		return e.code
	}
	// Cobra's own errors are usage errors: unknown command or flag, wrong arguments.
	io.WriteString(stderr, "scangate: "+err.Error()+"\nRun 'scangate --help' for usage.\n")
	return exitInvalid
}
