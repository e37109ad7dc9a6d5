package run

import (
	"fmt"
	"strings"

	"github.com/scangate/scangate/internal/suggest"
)

// Shells are the shells the completion command writes a script for (its subcommands;
// a test in cmd/scangate keeps the two lists equal).
var Shells = []string{"bash", "fish", "powershell", "zsh"}

// CheckShell refuses an argument of the completion command that names no shell it
// writes a script for, with the nearest shell when one is close: completion bsh.
func CheckShell(args []string) error {
	if len(args) == 0 {
		return nil
	}
	list := strings.Join(Shells, ", ")
	if near, ok := suggest.Nearest(args[0], Shells); ok {
		return fmt.Errorf("unknown shell %q for \"scangate completion\"; did you mean %s? Use one of %s", args[0], near, list)
	}
	return fmt.Errorf("unknown shell %q for \"scangate completion\"; use one of %s", args[0], list)
}
