package main

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
)

// input is one manifest to check: the name to report and its bytes, or why it could
// not be read. A file found on disk may keep only its path and limit, and be read when
// it is checked: a run over thousands of files then holds the bytes of the few in flight.
type input struct {
	name  string
	data  []byte
	err   error
	path  string // where to read the bytes when data is nil and err is nil
	limit int    // the size bound to read path with
}

// bytes returns the input's bytes, reading its file now if they were not kept.
func (in input) bytes() ([]byte, error) {
	if in.data == nil && in.err == nil && in.path != "" {
		r := readFile(in.path, in.limit)
		return r.data, r.err
	}
	return in.data, in.err
}

// lazy drops the bytes of a file that was read, to be read again when it is checked.
func (in input) lazy(path string, limit int) input {
	if in.err == nil {
		in.data, in.path, in.limit = nil, path, limit
	}
	return in
}

const stdinName = "<stdin>"

// manifestMarker tells a manifest from other YAML or JSON files in a directory walk.
var manifestMarker = regexp.MustCompile(`(?m)(^|[{,\s])["']?format["']?\s*:`)

// collect resolves the paths of the command line into inputs, in a stable order:
// files as given, directories walked for *.yaml, *.yml and *.json files that hold
// "format:", "-" read from stdin. A path that does not exist is a usage error.
func collect(paths []string, stdin io.Reader, maxBytes int) ([]input, error) {
	return collectFiltered(paths, stdin, maxBytes, nil)
}

// collectFiltered is collect with a filter for files found by walking directories (the
// project's include and exclude globs); nil keeps every file.
func collectFiltered(paths []string, stdin io.Reader, maxBytes int, keep func(string) bool) ([]input, error) {
	if len(paths) == 0 {
		paths = []string{"."}
	}
	var out []input
	for _, p := range paths {
		if p == "-" {
			data, err := readLimited(stdin, maxBytes)
			out = append(out, input{name: stdinName, data: data, err: err})
			continue
		}
		info, err := os.Stat(p)
		if err != nil {
			return nil, fmt.Errorf("cannot read %s: %w", p, unwrapPath(err))
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
			out = append(out, found...)
		case info.Mode().IsRegular():
			out = append(out, input{name: filepath.ToSlash(p), path: p, limit: maxBytes})
		default:
			return nil, fmt.Errorf("%s is not a regular file or a directory", p)
		}
	}
	return out, nil
}

// walk finds the manifests below dir, skipping hidden directories, sorted by path.
func walk(dir string, maxBytes int, keep func(string) bool) ([]input, error) {
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
		return nil, fmt.Errorf("cannot read %s: %w", dir, unwrapPath(err))
	}
	sort.Strings(names)
	var out []input
	for _, n := range names {
		in := readFile(n, maxBytes)
		if in.err == nil && !manifestMarker.Match(in.data) {
			continue
		}
		out = append(out, in.lazy(n, maxBytes))
	}
	return out, nil
}

func readFile(path string, maxBytes int) input {
	name := filepath.ToSlash(path)
	f, err := os.Open(path)
	if err != nil {
		return input{name: name, err: unwrapPath(err)}
	}
	defer f.Close()
	data, err := readLimited(f, maxBytes)
	return input{name: name, data: data, err: err}
}

// readLimited reads at most maxBytes+1 bytes, so the loader can refuse an oversized
// file without the whole of it in memory.
func readLimited(r io.Reader, maxBytes int) ([]byte, error) {
	var b bytes.Buffer
	_, err := io.Copy(&b, io.LimitReader(r, int64(maxBytes)+1))
	return b.Bytes(), unwrapPath(err)
}

// unwrapPath drops the operation and path from an *fs.PathError; the caller names the path.
func unwrapPath(err error) error {
	var pe *fs.PathError
	if errors.As(err, &pe) {
		return pe.Err
	}
	return err
}
