package calibrate

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
)

// Measurement is one measured full scan, a row of the CSV.
type Measurement struct {
	Line     int     // line of the row in the file
	Segments float64 // segments the scan touched
	Rows     float64 // rows it read
	Bytes    float64 // encoded bytes it read
	CPUMs    float64 // CPU milliseconds it burned, summed over cores
	WallMs   float64 // wall-clock milliseconds; 0 without the wall_ms column
	Cores    float64 // cores it ran on; 0 without the cores column
	CPUCol   int     // column of the cpu_ms value in its line, for errors
}

// InputError is a problem with the CSV, at the line and column it was found.
type InputError struct {
	File      string
	Line, Col int
	Msg       string
}

func (e *InputError) Error() string {
	return fmt.Sprintf("%s:%d:%d: %s", e.File, e.Line, e.Col, e.Msg)
}

// MaxMeasurements caps the rows read, so a wrong file cannot exhaust memory.
const MaxMeasurements = 100_000

// column is one CSV column the calibration reads.
type column struct {
	name     string
	required bool
	whole    bool // a count: a whole number
	positive bool // > 0 rather than >= 0
	doc      string
}

var columns = []column{
	{"segments", true, true, true, "segments the scan touched"},
	{"rows", true, true, false, "rows it read"},
	{"bytes", true, true, false, "encoded bytes it read"},
	{"cpu_ms", true, false, false, "CPU milliseconds, summed over cores"},
	{"wall_ms", false, false, true, "wall-clock milliseconds"},
	{"cores", false, true, true, "cores the scan ran on"},
}

// Parse reads measurements from a CSV with a header row naming the columns segments,
// rows, bytes, cpu_ms and, optionally, wall_ms and cores, in any order; other columns
// (a label, a date) are ignored, lines starting with # are comments. file names the
// input in errors.
func Parse(file string, r io.Reader) (ms []Measurement, hasWall, hasCores bool, err error) {
	cr := csv.NewReader(r)
	cr.Comment = '#'
	cr.TrimLeadingSpace = true
	cr.ReuseRecord = false
	fail := func(line, col int, format string, a ...any) error {
		return &InputError{File: file, Line: line, Col: col, Msg: fmt.Sprintf(format, a...)}
	}
	header, err := cr.Read()
	if err == io.EOF {
		return nil, false, false, fail(1, 1, "the file is empty; the first line must name the columns: segments,rows,bytes,cpu_ms[,wall_ms,cores]")
	}
	if err != nil {
		return nil, false, false, csvError(file, err)
	}
	hline, _ := cr.FieldPos(0)
	at := map[string]int{}
	for i, h := range header {
		name := strings.ToLower(strings.TrimSpace(h))
		if j, dup := at[name]; dup && name != "" {
			_, col := cr.FieldPos(i)
			_, first := cr.FieldPos(j)
			return nil, false, false, fail(hline, col, "column %q appears twice (first at column %d); name each column once", name, first)
		}
		at[name] = i
	}
	for _, c := range columns {
		if _, ok := at[c.name]; !ok && c.required {
			return nil, false, false, fail(hline, 1, "the header lacks the column %s (%s); it has: %s. Required: segments, rows, bytes, cpu_ms; optional: wall_ms, cores",
				c.name, c.doc, strings.Join(header, ", "))
		}
	}
	_, hasWall = at["wall_ms"]
	_, hasCores = at["cores"]
	for {
		rec, err := cr.Read()
		if err == io.EOF {
			break
		}
		if errors.Is(err, csv.ErrFieldCount) {
			line, _ := cr.FieldPos(0)
			more := ""
			if len(rec) > len(header) {
				more = " (a decimal comma splits a value in two: write 12.5, not 12,5)"
			}
			return nil, false, false, fail(line, 1, "this row has %d fields, the header %d; every row needs one value per column%s", len(rec), len(header), more)
		}
		if err != nil {
			return nil, false, false, csvError(file, err)
		}
		line, _ := cr.FieldPos(0)
		if len(ms) == MaxMeasurements {
			return nil, false, false, fail(line, 1, "more than %d measurements; calibrate from fewer scans", MaxMeasurements)
		}
		m := Measurement{Line: line}
		for _, c := range columns {
			i, ok := at[c.name]
			if !ok {
				continue
			}
			_, col := cr.FieldPos(i)
			v, msg := number(rec[i], c)
			if msg != "" {
				return nil, false, false, fail(line, col, "%s %q %s", c.name, rec[i], msg)
			}
			switch c.name {
			case "segments":
				m.Segments = v
			case "rows":
				m.Rows = v
			case "bytes":
				m.Bytes = v
			case "cpu_ms":
				m.CPUMs, m.CPUCol = v, col
			case "wall_ms":
				m.WallMs = v
			case "cores":
				m.Cores = v
			}
		}
		ms = append(ms, m)
	}
	return ms, hasWall, hasCores, nil
}

// number parses one value; msg says what is wrong and what to write instead.
func number(s string, c column) (float64, string) {
	s = strings.TrimSpace(s)
	if s == "" {
		return 0, "is empty; every row needs a value here"
	}
	v, err := strconv.ParseFloat(s, 64)
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
		if strings.Contains(s, ",") || strings.Count(s, ".") > 1 {
			return 0, "is not a number; write plain digits with a dot as the decimal mark and no thousands separators, e.g. 1234.5"
		}
		return 0, "is not a number; write plain digits, e.g. 1234.5"
	}
	switch {
	case c.positive && v <= 0:
		return 0, "must be greater than 0"
	case v < 0:
		return 0, "must not be negative"
	case c.whole && v != math.Trunc(v):
		return 0, "must be a whole number"
	case v > 1e18:
		return 0, "is implausibly large (above 10^18)"
	}
	return v, ""
}

// csvError turns the csv package's error into a positioned one.
func csvError(file string, err error) error {
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		msg := pe.Err.Error()
		if errors.Is(pe.Err, csv.ErrFieldCount) {
			msg = "this row has a different number of fields than the header; every row needs one value per column"
		} else if errors.Is(pe.Err, csv.ErrQuote) || errors.Is(pe.Err, csv.ErrBareQuote) {
			msg += "; quote a whole field or none of it"
		}
		return &InputError{File: file, Line: pe.Line, Col: pe.Column, Msg: msg}
	}
	return fmt.Errorf("%s: %w", file, err)
}
