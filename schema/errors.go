package schema

import (
	"fmt"
	"strings"

	"go.yaml.in/yaml/v3"
)

// Problem is one reason a manifest cannot be checked, at the place it is about.
type Problem struct {
	Pos     Pos
	Path    string // JSON pointer of the value, "" when the file as a whole is at fault
	Message string // what is wrong and what to change
}

func problemAt(n *yaml.Node, ptr, msg string) *Problem {
	p := &Problem{Path: ptr, Message: msg}
	if n != nil {
		p.Pos = Pos{Line: n.Line, Col: n.Column}
	}
	return p
}

// Text is the problem as one line without the file: "/tables/2/rows: must be >= 0".
func (p Problem) Text() string {
	if p.Path == "" {
		return p.Message
	}
	return p.Path + ": " + p.Message
}

// Error lists every problem found in one file; Load returns it for invalid input.
type Error struct {
	File     string
	Problems []Problem
}

func (e *Error) Error() string {
	lines := make([]string, 0, len(e.Problems))
	for _, p := range e.Problems {
		lines = append(lines, fmt.Sprintf("%s:%d:%d: %s", e.File, p.Pos.Line, p.Pos.Col, p.Text()))
	}
	return strings.Join(lines, "\n")
}
