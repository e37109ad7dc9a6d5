package run

import (
	"fmt"
	"os"
	"syscall"

	"github.com/scangate/scangate/internal/baseline"
	"github.com/scangate/scangate/internal/report"
	"github.com/scangate/scangate/schema"
)

// ApplyBaseline marks the findings of r recorded in the baseline file, read with the
// manifests' size limit. An invalid baseline returns a *schema.Error.
func ApplyBaseline(file string, r *report.Result, limits schema.Limits) (*report.BaselineUse, error) {
	data, err := readRegular(file, limits.MaxFileBytes)
	if err != nil {
		return nil, fmt.Errorf("--baseline: cannot read %s: %v", file, err)
	}
	b, err := baseline.Parse(file, data, limits)
	if err != nil {
		return nil, err
	}
	fixed := b.Apply(r.Findings, r.Key)
	return &report.BaselineUse{File: file, Fixed: fixed}, nil
}

// readRegular reads at most maxBytes+1 bytes of a regular file. A device, FIFO or socket
// (or a symlink to one) is refused, before opening and again on the opened file, which
// is opened without blocking so a FIFO swapped in between cannot stall the run.
func readRegular(path string, maxBytes int) ([]byte, error) {
	if info, err := os.Stat(path); err != nil {
		return nil, UnwrapPath(err)
	} else if !info.Mode().IsRegular() {
		return nil, notRegular(info)
	}
	f, err := os.OpenFile(path, os.O_RDONLY|syscall.O_NONBLOCK, 0)
	if err != nil {
		return nil, UnwrapPath(err)
	}
	defer f.Close()
	if info, err := f.Stat(); err != nil {
		return nil, UnwrapPath(err)
	} else if !info.Mode().IsRegular() {
		return nil, notRegular(info)
	}
	return ReadLimited(f, maxBytes)
}

func notRegular(info os.FileInfo) error {
	kind := "a special file"
	switch m := info.Mode(); {
	case m.IsDir():
		kind = "a directory"
	case m&os.ModeNamedPipe != 0:
		kind = "a FIFO"
	case m&os.ModeSocket != 0:
		kind = "a socket"
	case m&os.ModeDevice != 0:
		kind = "a device"
	}
	return fmt.Errorf("it is %s, not a regular file; name the baseline file itself", kind)
}
