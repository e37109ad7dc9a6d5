package run

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"

	"github.com/scangate/scangate/internal/adopt"
	"github.com/scangate/scangate/internal/escape"
	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

// Adoption is adopt's plan for one run: each manifest's result, or why it could not be
// adopted. Nothing is written until Write.
type Adoption struct {
	Results []*adopt.Result
	Errors  []error // each naming its file; a *schema.Error for a manifest that breaks its schema
}

// Adopt works out, for the manifests the paths name (files, or directories walked as
// check walks them), each table's recommendation written into its source. table limits
// it to one table; cfg gives the warning levels the recommendations are ranked by, as
// check's are.
func Adopt(paths []string, proj Project, cfg rules.Config, table string, limits schema.Limits) (*Adoption, error) {
	for _, p := range paths {
		if p == "-" {
			return nil, errors.New("adopt rewrites the manifest files it reads; name a file, not - (standard input)")
		}
	}
	inputs, err := Collect(paths, nil, limits.MaxFileBytes, proj.Keep)
	if err != nil {
		return nil, err
	}
	inputs = OnlyManifests(inputs)
	o := adopt.Options{Limits: limits, Project: proj.Config, Levels: cfg.Levels(), Table: table}
	a := &Adoption{}
	missing := 0
	for _, in := range inputs {
		data, err := readWritable(in.path, limits.MaxFileBytes) // the loader refuses one above the limit
		if err != nil {
			a.Errors = append(a.Errors, err)
			continue
		}
		r, err := adopt.File(in.name, data, o)
		var none *adopt.NoTable
		switch {
		case errors.As(err, &none) && len(inputs) > 1:
			missing++
			continue // --table over several files: the files without it are left alone
		case err != nil:
			a.Errors = append(a.Errors, err)
			continue
		}
		a.Results = append(a.Results, r)
	}
	if missing > 0 && missing == len(inputs) {
		return nil, fmt.Errorf("--table %q: none of the %d manifests has such a table", table, len(inputs))
	}
	return a, nil
}

// readWritable reads a manifest adopt may write back: a regular file that is not a
// symbolic link and has no other hard link, so the rename that replaces it changes this
// one file and nothing else.
func readWritable(path string, maxBytes int) ([]byte, error) {
	name := filepath.ToSlash(path)
	if err := writable(path); err != nil {
		return nil, err
	}
	data, err := readRegular(path, maxBytes)
	if err != nil {
		return nil, fmt.Errorf("cannot read %s: %v", escape.Text(name), err)
	}
	return data, nil
}

// writable refuses what adopt must not replace: a symbolic link (the rename would turn
// it into a copy and leave its target as it was), a device, FIFO or socket, a file with
// other hard links, a file it may not write.
func writable(path string) error {
	name := escape.Text(filepath.ToSlash(path))
	info, err := os.Lstat(path)
	if err != nil {
		return fmt.Errorf("cannot read %s: %v", name, UnwrapPath(err))
	}
	switch m := info.Mode(); {
	case m&os.ModeSymlink != 0:
		target, _ := os.Readlink(path)
		return fmt.Errorf("%s is a symbolic link to %s; adopt rewrites regular files only: run it on the file the link names", name, escape.Text(target))
	case !m.IsRegular():
		return fmt.Errorf("%s: %s", name, strings.Replace(notRegular(info).Error(), "the baseline file", "the manifest file", 1))
	}
	if n := hardLinks(info); n > 1 {
		return fmt.Errorf("%s has %d hard links; rewriting it would part it from the others: copy it to a file of its own first", name, n)
	}
	if info.Mode().Perm()&0o200 == 0 {
		return fmt.Errorf("%s is read-only; make it writable to adopt into it", name)
	}
	return nil
}

// PrintErrors prints why manifests could not be adopted, a manifest's schema problems
// each at its line and column; false when there were none.
func (a *Adoption) PrintErrors(stderr io.Writer) bool {
	for _, err := range a.Errors {
		var se *schema.Error
		if errors.As(err, &se) {
			printProblems(stderr, se)
		} else {
			fmt.Fprint(stderr, escape.Log("scangate: "+escape.Text(err.Error())+"\n"))
		}
	}
	return len(a.Errors) > 0
}

// Write writes every changed manifest through a temporary file and a rename, each only
// if it still holds the bytes adopt read, and names each file written on out; a dry
// run writes nothing.
func (a *Adoption) Write(out io.Writer, dryRun bool) error {
	for _, r := range a.Results {
		if !r.Changed() || dryRun {
			continue
		}
		if err := writable(r.File); err != nil {
			return err
		}
		now, err := readRegular(r.File, len(r.Before)+1)
		if err != nil || !bytes.Equal(now, r.Before) {
			return fmt.Errorf("%s changed while adopt ran; nothing more was written: run adopt again", escape.Text(r.File))
		}
		if err := WriteFileAtomic(r.File, r.After); err != nil {
			return err
		}
		fmt.Fprint(out, escape.Log("wrote "+escape.Text(r.File)+"\n"))
	}
	return nil
}

// Summary words the run: per file, each table adopted with its recommendation and the
// keys rewritten, each table with nothing to adopt; then the diff when diff is set.
func (a *Adoption) Summary(dryRun bool) string {
	diff := dryRun
	var b strings.Builder
	for _, r := range a.Results {
		fmt.Fprintf(&b, "%s\n", escape.Text(r.File))
		if len(r.Tables) == 0 {
			b.WriteString("  no table to adopt\n")
		}
		for _, t := range r.Tables {
			name := escape.Text(t.Table)
			switch {
			case t.Adopted:
				fmt.Fprintf(&b, "  %s: %s\n", name, escape.Text(t.Hint))
				if len(t.Edits) > 0 {
					fmt.Fprintf(&b, "    rewrites %s\n", escape.Text(strings.Join(t.Edits, ", ")))
				}
			case t.Hint != "":
				fmt.Fprintf(&b, "  %s: %s\n", name, escape.Text(t.Hint))
			default:
				fmt.Fprintf(&b, "  %s: nothing to adopt (today's layout is kept)\n", name)
			}
			for _, n := range t.Notes {
				fmt.Fprintf(&b, "    note: %s\n", escape.Text(n))
			}
		}
	}
	if diff {
		for _, r := range a.Results {
			b.WriteString(r.Diff())
		}
	}
	changed := 0
	for _, r := range a.Results {
		if r.Changed() {
			changed++
		}
	}
	switch {
	case changed == 0:
		b.WriteString("nothing to adopt; no file changed\n")
	case dryRun:
		fmt.Fprintf(&b, "dry run: %d %s would change; nothing was written (run without --dry-run to write)\n", changed, plural(changed, "file", "files"))
	}
	return escape.Log(b.String())
}

func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}
