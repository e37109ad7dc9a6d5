package datafile

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"strings"
	"unicode/utf8"

	"github.com/scangate/scangate/internal/survey"
)

// readCSV reads one CSV file: a header row naming the columns, then one row a record.
// Types are inferred from the values (see survey.Text). column, when set, names the
// column whose value is each row's partition key; otherwise every row counts under
// fileKey.
func readCSV(f File, t *survey.Table, column, fileKey string, lim Limits, progress func(int64)) error {
	h, err := open(f)
	if err != nil {
		return err
	}
	defer h.Close()
	guard := &lineGuard{r: h, max: lim.MaxRecordBytes, line: 1}
	r := csv.NewReader(bufio.NewReaderSize(guard, 64<<10))
	r.ReuseRecord = true
	header, err := r.Read()
	if err != nil {
		if errors.Is(err, io.EOF) {
			return fmt.Errorf("%s:1:1: the file is empty; a CSV file starts with a header row naming its columns", f.Path)
		}
		return csvError(f, guard, err)
	}
	cols := make([]*survey.Text, len(header))
	keyAt := -1
	seen := map[string]bool{}
	for i, name := range header {
		if i == 0 {
			name = string(bytes.TrimPrefix([]byte(name), []byte("\uFEFF")))
		}
		if name == "" {
			return fmt.Errorf("%s:1:%d: column %d has no name; the first row must name every column", f.Path, i+1, i+1)
		}
		if !utf8.ValidString(name) {
			return fmt.Errorf("%s:1:%d: column name %q is not UTF-8 text, which a manifest needs: rename the column (or save the file as UTF-8)", f.Path, i+1, strings.ToValidUTF8(name, "\uFFFD"))
		}
		if seen[name] {
			return fmt.Errorf("%s:1:%d: column %q is named twice in the header row", f.Path, i+1, name)
		}
		seen[name] = true
		if cols[i], err = t.Text(name); err != nil {
			return fmt.Errorf("%s:1:%d: %v", f.Path, i+1, err)
		}
		if name == column {
			keyAt = i
		}
	}
	if column != "" && keyAt < 0 {
		return fmt.Errorf("%s:1:1: --partition-by %q names no column of the header row", f.Path, column)
	}
	var pending int64 // rows of fileKey not yet counted
	for n := 0; ; n++ {
		rec, err := r.Read()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			return csvError(f, guard, err)
		}
		for i, v := range rec {
			cols[i].Value([]byte(v))
		}
		if keyAt >= 0 {
			if err := t.Count(rec[keyAt], 1); err != nil {
				line, _ := r.FieldPos(keyAt)
				return fmt.Errorf("%s:%d:1: %v", f.Path, line, err)
			}
		} else {
			pending++
		}
		if n%65536 == 0 {
			progress(guard.read)
		}
	}
	progress(guard.read)
	if keyAt < 0 {
		return t.Count(fileKey, pending)
	}
	return nil
}

func csvError(f File, g *lineGuard, err error) error {
	var pe *csv.ParseError
	switch {
	case errors.As(err, &pe) && errors.Is(pe.Err, errLongLine):
		return fmt.Errorf("%s:%d:1: a line is longer than %d bytes; is this a CSV file?", f.Path, g.line, g.max)
	case errors.As(err, &pe):
		return fmt.Errorf("%s:%d:%d: %v; every record needs one field per header column, and quotes must be doubled inside a quoted field", f.Path, pe.Line, pe.Column, pe.Err)
	case errors.Is(err, errLongLine):
		return fmt.Errorf("%s:%d:1: a line is longer than %d bytes; is this a CSV file?", f.Path, g.line, g.max)
	}
	return fmt.Errorf("cannot read %s: %v", f.Path, unwrap(err))
}

var errLongLine = errors.New("line too long")

// lineGuard passes bytes through and fails once a line grows past max bytes, so one
// record never takes more memory than that.
type lineGuard struct {
	r    io.Reader
	max  int
	cur  int // bytes since the last newline
	line int
	read int64
}

func (g *lineGuard) Read(p []byte) (int, error) {
	n, err := g.r.Read(p)
	g.read += int64(n)
	for _, c := range p[:n] {
		if c == '\n' {
			g.cur = 0
			g.line++
			continue
		}
		g.cur++
		if g.cur > g.max {
			return 0, errLongLine
		}
	}
	return n, err
}
