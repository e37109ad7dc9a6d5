// Package run is the driver behind the commands: it finds the inputs, reads the
// project config, loads and checks files on a bounded pool of workers within the run's
// partition budget, reads the base revision from git for diff, applies a baseline and
// writes reports safely. The commands parse flags and call it; it never reaches back
// into them.
package run

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"regexp"
	"sort"
	"strings"
	"syscall"
)

// Input is one manifest to check: the name to report and its bytes, or why it could
// not be read. A file found on disk may keep only its path and limit, and be read when
// it is checked: a run over thousands of files then holds the bytes of the few in flight.
type Input struct {
	name  string
	data  []byte
	err   error
	path  string // where to read the bytes when data is nil and err is nil
	limit int    // the size bound to read path with
	root  string // the directory named on the command line that led to it ("" for stdin)
}

// bytes returns the input's bytes, reading its file now if they were not kept.
func (in Input) bytes() ([]byte, error) {
	if in.data == nil && in.err == nil && in.path != "" {
		r := readFile(in.path, in.limit)
		return r.data, r.err
	}
	return in.data, in.err
}

// lazy drops the bytes of a file that was read, to be read again when it is checked.
func (in Input) lazy(path string, limit int) Input {
	if in.err == nil {
		in.data, in.path, in.limit = nil, path, limit
	}
	return in
}

// StdinName is how standard input is named in reports.
const StdinName = "<stdin>"

// manifestMarker tells a manifest from other YAML or JSON files in a directory walk.
var manifestMarker = regexp.MustCompile(`(?m)(^|[{,\s])["']?format["']?\s*:`)

// Collect resolves the paths of the command line into inputs, in a stable order:
// files as given, directories walked for *.yaml, *.yml and *.json files that hold
// "format:", "-" read from stdin; the default is the current directory. keep filters
// the files found by walking directories (the project's include and exclude globs);
// nil keeps every file. A path that does not exist is an error.
func Collect(paths []string, stdin io.Reader, maxBytes int, keep func(string) bool) ([]Input, error) {
	if len(paths) == 0 {
		paths = []string{"."}
	}
	var out []Input
	for _, p := range paths {
		if p == "-" {
			data, err := ReadLimited(stdin, maxBytes)
			out = append(out, Input{name: StdinName, data: data, err: err})
			continue
		}
		info, err := os.Stat(p)
		if err != nil {
			return nil, fmt.Errorf("cannot read %s: %w", p, UnwrapPath(err))
		}
		switch {
		case info.IsDir():
			found, err := walk(p, maxBytes, keep)
			if err != nil {
				return nil, err
			}
			if len(found) == 0 {
				return nil, fmt.Errorf("no manifest found under %s (looked for *.yaml, *.yml and *.json files that hold \"format:\")", p)
			}
			for i := range found {
				found[i].root = p
			}
			out = append(out, found...)
		case info.Mode().IsRegular():
			out = append(out, Input{name: filepath.ToSlash(p), path: p, limit: maxBytes, root: filepath.Dir(p)})
		default:
			return nil, fmt.Errorf("%s is not a regular file or a directory", p)
		}
	}
	return out, nil
}

// walk finds the manifests below dir, skipping hidden directories, sorted by path.
func walk(dir string, maxBytes int, keep func(string) bool) ([]Input, error) {
	var names []string
	err := filepath.WalkDir(dir, func(path string, d fs.DirEntry, err error) error {
		if err != nil {
			if path == dir {
				return err
			}
			names = append(names, path) // reported as unreadable below
			return nil
		}
		if d.IsDir() {
			if path != dir && strings.HasPrefix(d.Name(), ".") {
				return filepath.SkipDir
			}
			return nil
		}
		switch strings.ToLower(filepath.Ext(path)) {
		case ".yaml", ".yml", ".json":
		default:
			return nil
		}
		if d.Type()&fs.ModeSymlink != 0 {
			if info, err := os.Stat(path); err != nil || !info.Mode().IsRegular() {
				return nil
			}
		} else if !d.Type().IsRegular() {
			return nil // FIFOs, sockets and devices are never manifests
		}
		if keep == nil || keep(path) {
			names = append(names, path)
		}
		return nil
	})
	if err != nil {
		return nil, fmt.Errorf("cannot read %s: %w", dir, UnwrapPath(err))
	}
	sort.Strings(names)
	var out []Input
	for _, n := range names {
		in := readFile(n, maxBytes)
		if in.err == nil && !manifestMarker.Match(in.data) {
			continue
		}
		out = append(out, in.lazy(n, maxBytes))
	}
	return out, nil
}

// readFile reads a regular file, at most maxBytes+1 bytes of it. Opening never waits
// (a FIFO without a writer would block for ever), and anything but a regular file is
// refused: a device such as /dev/zero never ends.
func readFile(path string, maxBytes int) Input {
	name := filepath.ToSlash(path)
	f, err := os.OpenFile(path, os.O_RDONLY|syscall.O_NONBLOCK, 0)
	if err != nil {
		return Input{name: name, err: UnwrapPath(err)}
	}
	defer f.Close()
	info, err := f.Stat()
	if err != nil || !info.Mode().IsRegular() {
		return Input{name: name, err: errors.New("not a regular file")}
	}
	data, err := readLimited(f, maxBytes, info.Size())
	return Input{name: name, data: data, err: err}
}

// ReadLimited reads at most maxBytes+1 bytes, so the loader can refuse an oversized
// file without the whole of it in memory.
func ReadLimited(r io.Reader, maxBytes int) ([]byte, error) {
	return readLimited(r, maxBytes, 0)
}

// readLimited is ReadLimited into a buffer sized for size bytes (a file's size when
// opened; it may still change), so a file is read without growing the buffer.
func readLimited(r io.Reader, maxBytes int, size int64) ([]byte, error) {
	var b bytes.Buffer
	if size > 0 && size <= int64(maxBytes) {
		b.Grow(int(size) + bytes.MinRead) // room for the read that finds the end
	}
	_, err := io.Copy(&b, io.LimitReader(r, int64(maxBytes)+1))
	return b.Bytes(), UnwrapPath(err)
}

// UnwrapPath drops the operation and path from an *fs.PathError; the caller names the path.
func UnwrapPath(err error) error {
	var pe *fs.PathError
	if errors.As(err, &pe) {
		return pe.Err
	}
	return err
}

// OnlyManifests drops readable inputs that are not manifests, as a directory walk does.
func OnlyManifests(inputs []Input) []Input {
	out := inputs[:0]
	for _, in := range inputs {
		if data, err := in.bytes(); err != nil || manifestMarker.Match(data) {
			out = append(out, in)
		}
	}
	return out
}

// Paths are the files the inputs are read from, for GuardTargets; standard input and
// blobs of a git revision have none.
func Paths(inputs []Input) []string {
	var out []string
	for _, in := range inputs {
		switch {
		case in.path != "":
			out = append(out, in.path)
		case in.name != StdinName:
			out = append(out, in.name)
		}
	}
	return out
}
