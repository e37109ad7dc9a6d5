package run

import (
	"errors"
	"fmt"
	"io"
	"os"
	"strings"
	"syscall"
	"time"

	"github.com/scangate/scangate/internal/baseline"
	"github.com/scangate/scangate/internal/change"
	"github.com/scangate/scangate/internal/escape"
	"github.com/scangate/scangate/internal/report"
	"github.com/scangate/scangate/internal/units"
	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

// ApplyBaseline marks the findings of r recorded in the baseline file, read with the
// manifests' size limit, judged on today (zero: the current date, UTC): escalated
// findings and those of expired entries count again. hide asks the text log to count
// the baselined findings rather than list them. Without a file it does nothing (hide
// is then a usage error). An invalid baseline returns a *schema.Error.
func ApplyBaseline(file string, r *report.Result, limits schema.Limits, today time.Time, hide bool) (*report.BaselineUse, error) {
	switch {
	case file == "" && hide:
		return nil, errors.New("--hide-baselined needs --baseline FILE")
	case file == "":
		return nil, nil
	}
	data, err := readRegular(file, limits.MaxFileBytes)
	if err != nil {
		return nil, fmt.Errorf("--baseline: cannot read %s: %v", file, err)
	}
	b, err := baseline.Parse(file, data, limits)
	if err != nil {
		return nil, err
	}
	o := b.Apply(r.Findings, r.Key, dateOr(today))
	return &report.BaselineUse{File: file, Fixed: o.Fixed, Escalated: o.Escalated, Expired: o.Expired, Hide: hide}, nil
}

// dateOr is today, or the current date (UTC) when today is zero: the driver's one clock.
func dateOr(today time.Time) time.Time {
	if today.IsZero() {
		return time.Now().UTC().Truncate(24 * time.Hour)
	}
	return today
}

// BaselineStamp is what baseline write records beside the findings, and whether it may
// record findings an expiry says must count again.
type BaselineStamp struct {
	Today       time.Time // the date written; zero: the current date, UTC
	Reason      string    // "" for none
	Expires     string    // the entries' last day, YYYY-MM-DD, not before Today; "" for none
	OverExpired bool      // --absorb-expired: record findings of an expired waiver or entry anyway
}

// NewBaseline is the baseline file of findings, stamped, ready to write to out. It
// refuses (an error that lists them) to record findings of an expired manifest waiver
// or of an expired entry of the baseline at out, unless s.OverExpired (a *LapsedError,
// its findings listed on stderr), and never returns a file check --baseline would
// refuse. Findings are fingerprinted with key.
func NewBaseline(out string, findings []rules.Finding, key func(string) string, s BaselineStamp, limits schema.Limits, stderr io.Writer) ([]byte, int, error) {
	today := dateOr(s.Today)
	var expires time.Time
	if s.Expires != "" {
		var err error
		if expires, err = time.Parse("2006-01-02", s.Expires); err != nil {
			return nil, 0, fmt.Errorf("--expires %q: write the date as YYYY-MM-DD", s.Expires)
		}
		if expires.Before(today) {
			return nil, 0, fmt.Errorf("--expires %s is before the date written, %s (--today, else the current date): the entries would have expired already; give a later date", s.Expires, today.Format("2006-01-02"))
		}
	}
	if strings.TrimSpace(s.Reason) == "" && s.Reason != "" {
		return nil, 0, errors.New("--reason is blank; say why the findings are accepted, or leave it out")
	}
	var prior baseline.File
	if data, err := readRegular(out, limits.MaxFileBytes); err == nil {
		prior, _ = baseline.Parse(out, data, limits) // an unreadable old file is simply replaced
	}
	if lapsed := baseline.Lapsed(findings, key, prior, today); len(lapsed) > 0 && !s.OverExpired {
		e := &LapsedError{Out: out, Findings: lapsed}
		for _, l := range e.Lines() {
			io.WriteString(stderr, escape.Log(escape.Text(l))+"\n")
		}
		return nil, 0, e
	}
	b := baseline.Build(findings, key)
	b.Stamp(today, s.Reason, expires)
	data := b.Marshal()
	// Never write a file check --baseline would refuse (a path it cannot record, a file
	// above --max-file-size).
	if _, err := baseline.Parse(out, data, limits); err != nil {
		return nil, 0, fmt.Errorf("not writing %s: check --baseline would refuse it:\n%v", out, err)
	}
	return data, len(b.Entries), nil
}

// LapsedError is baseline write's refusal to record findings an expiry says must count
// again (see baseline.Lapsed).
type LapsedError struct {
	Out      string
	Findings []rules.Finding
}

func (e *LapsedError) Error() string {
	n := len(e.Findings)
	return fmt.Sprintf("not writing %s: %d %s of an expired waiver or baseline entry would be absorbed again; fix them, renew the waiver with a later expires: and a reason that still holds, or pass --absorb-expired to record them anyway",
		e.Out, n, units.Plural(int64(n), "finding", "findings"))
}

// Lines are the findings in the GNU style, one a line, for standard error.
func (e *LapsedError) Lines() []string {
	out := make([]string, len(e.Findings))
	for i, f := range e.Findings {
		out[i] = fmt.Sprintf("%s: %s: %s [%s]", change.Location(f), f.Severity, f.Message, f.Rule)
	}
	return out
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
