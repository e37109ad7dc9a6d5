package run

import (
	"errors"
	"fmt"
	"io"

	"github.com/scangate/scangate/internal/escape"
	"github.com/scangate/scangate/schema"
)

// Verdict is what a command found, for its exit code: Clean, Failed (findings or a
// change at the gate) or Invalid (an input that breaks its schema).
type Verdict int

const (
	Clean Verdict = iota
	Failed
	Invalid
)

// Problems reports a *schema.Error in err the way manifest errors are reported: every
// problem on stderr at its file, line and column, tagged [tag]; it then returns msg, what
// to do, as the error. Any other error is returned as it is, and nil stays nil.
func Problems(stderr io.Writer, err error, tag, msg string) error {
	var se *schema.Error
	if !errors.As(err, &se) {
		return err
	}
	for _, p := range se.Problems {
		fmt.Fprintf(stderr, "%s:%d:%d: error: %s [%s]\n", say(se.File), p.Pos.Line, p.Pos.Col, say(p.Text()), tag)
	}
	return errors.New(msg)
}

// say is a user's string on stderr: one visible line (escape.Text) that no CI runner
// reads as a command (escape.Log).
func say(s string) string { return escape.Log(escape.Text(s)) }
