package run

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"syscall"
)

// A spool is a report on its way to a file: it is written to a temporary file as it
// renders, and reaches its target only at commit, whole. A regular file (or a new one)
// is replaced by renaming a temporary file beside it; a device or FIFO, and a file that
// is appended to (the runner's step summary), get the finished temporary file's bytes
// copied in, so they too see nothing of a report that did not complete.
type spool struct {
	err    error // the first write error, as a *targetError
	path   string
	tmp    *os.File
	w      *bufio.Writer
	append bool // add to the end of path instead of replacing it
	copyTo bool // path is a device or FIFO: copy into it, never rename over it
}

// targetError is a failure to write a report's target.
type targetError struct {
	path string
	err  error
}

func (e *targetError) Error() string { return fmt.Sprintf("cannot write %s: %v", e.path, e.err) }

func (s *spool) fail(err error) error { return &targetError{s.path, UnwrapPath(err)} }

// newSpool starts a report bound for path.
func newSpool(path string, appendTo bool) (*spool, error) {
	s := &spool{path: path, append: appendTo}
	dir := filepath.Dir(path)
	if info, err := os.Stat(path); err == nil && !info.Mode().IsRegular() && !appendTo {
		if info.IsDir() {
			return nil, fmt.Errorf("cannot write %s: it is a directory; name a file", path)
		}
		s.copyTo, dir = true, "" // beside /dev/null nothing may be created
	} else if !appendTo {
		if err := os.MkdirAll(dir, 0o755); err != nil {
			return nil, fmt.Errorf("cannot create %s: %v", dir, UnwrapPath(err))
		}
	} else {
		dir = ""
	}
	tmp, err := os.CreateTemp(dir, "."+filepath.Base(path)+".*.tmp")
	if err != nil {
		return nil, s.fail(err)
	}
	s.tmp, s.w = tmp, bufio.NewWriterSize(tmp, 64<<10)
	return s, nil
}

// Write adds rendered bytes; errors name the target, not the temporary file.
func (s *spool) Write(p []byte) (int, error) {
	if s.err != nil {
		return 0, s.err
	}
	n, err := s.w.Write(p)
	if err != nil {
		s.err = s.fail(err)
	}
	return n, s.err
}

// commit puts the finished report at its target.
func (s *spool) commit() error {
	fail := s.fail
	if s.err != nil {
		return s.err
	}
	if err := s.w.Flush(); err != nil {
		return fail(err)
	}
	if s.append || s.copyTo {
		return s.copyOut()
	}
	if err := s.tmp.Chmod(0o644); err != nil {
		return fail(err)
	}
	if err := s.tmp.Close(); err != nil {
		return fail(err)
	}
	if err := os.Rename(s.tmp.Name(), s.path); err != nil {
		return fail(err)
	}
	s.tmp = nil
	return nil
}

// copyOut copies the finished temporary file to the end of an appended file, or into a
// device or FIFO; a FIFO without a reader is an error at once rather than a wait.
func (s *spool) copyOut() error {
	flags := os.O_APPEND | os.O_CREATE | os.O_WRONLY
	if s.copyTo {
		flags = os.O_WRONLY | syscall.O_NONBLOCK
	}
	f, err := os.OpenFile(s.path, flags, 0o644)
	if err != nil {
		if s.copyTo && errors.Is(err, syscall.ENXIO) {
			return s.fail(errors.New("it is a FIFO with no reader"))
		}
		return s.fail(err)
	}
	if _, err := s.tmp.Seek(0, io.SeekStart); err != nil {
		f.Close()
		return s.fail(err)
	}
	if _, err := io.Copy(f, s.tmp); err != nil {
		f.Close()
		return s.fail(err)
	}
	if err := f.Close(); err != nil {
		return s.fail(err)
	}
	s.discard()
	return nil
}

// discard drops the temporary file; a no-op after a rename.
func (s *spool) discard() {
	if s.tmp != nil {
		s.tmp.Close()
		os.Remove(s.tmp.Name())
		s.tmp = nil
	}
}
