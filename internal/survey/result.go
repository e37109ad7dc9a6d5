package survey

import (
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"unicode/utf8"

	"github.com/scangate/scangate/schema"
)

// FromResult turns the survey query's result, saved as CSV with its header row, into the
// table it measured. file names the result in errors (file:line:column). Row order is
// not measured by the query, so columns carry no order.
func FromResult(file string, data []byte) (schema.SurveyTable, error) {
	var out schema.SurveyTable
	r := csv.NewReader(bytes.NewReader(bytes.TrimPrefix(data, []byte("\uFEFF"))))
	header, err := r.Read()
	if err != nil {
		if errors.Is(err, io.EOF) {
			return out, fmt.Errorf("%s:1:1: the file is empty; save the survey query's result with its header row", file)
		}
		return out, resultError(file, err)
	}
	at := map[string]int{}
	type measure struct {
		col           int // index into cols
		what          string
		field         int
		name, colType string
	}
	var measures []measure
	var cols []schema.SurveyColumn
	colIndex := map[string]int{}
	for i, h := range header {
		h = strings.TrimSpace(h)
		if !utf8.ValidString(h) {
			return out, fmt.Errorf("%s:1:%d: header %q is not UTF-8 text, which a manifest needs: rename the column in the query", file, i+1, strings.ToValidUTF8(h, "\uFFFD"))
		}
		j := strings.LastIndexByte(h, ':')
		if j < 0 {
			at[strings.ToLower(h)] = i
			continue
		}
		what, rest := h[j+1:], h[:j]
		k := strings.LastIndexByte(rest, ':')
		if k <= 0 || !isColumnType(rest[k+1:]) || (what != "distinct" && what != "values" && what != "avg_length") {
			return out, fmt.Errorf("%s:1:%d: header %q is not one the survey query writes (NAME:TYPE:distinct, :values or :avg_length); save the query's result as it is", file, i+1, h)
		}
		name, typ := rest[:k], rest[k+1:]
		if what == "avg_length" && typ != "string" {
			return out, fmt.Errorf("%s:1:%d: header %q: avg_length is measured for string columns only; save the query's result as it is", file, i+1, h)
		}
		ci, ok := colIndex[name]
		if ok && cols[ci].Type != typ {
			return out, fmt.Errorf("%s:1:%d: header %q types column %q %s, an earlier header %s; save the query's result as it is", file, i+1, h, name, typ, cols[ci].Type)
		}
		if !ok {
			ci = len(cols)
			colIndex[name] = ci
			cols = append(cols, schema.SurveyColumn{Name: name, Type: typ})
		}
		measures = append(measures, measure{col: ci, what: what, field: i, name: name, colType: typ})
	}
	for _, need := range []string{"table", "dialect", "grain", "key", "scope", "partition", "rows"} {
		if _, ok := at[need]; !ok {
			return out, fmt.Errorf("%s:1:1: the header row has no %q column; save the survey query's result with its header row as it is", file, need)
		}
	}
	dialect := ""
	grain, key := "", ""
	parts := map[string]int64{}
	seenTable := false
	values := make([]int64, len(cols))
	for {
		rec, err := r.Read()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			return out, resultError(file, err)
		}
		line, _ := r.FieldPos(0)
		field := func(name string) string { return strings.TrimSpace(rec[at[name]]) }
		pos := func(name string) string {
			_, col := r.FieldPos(at[name])
			return fmt.Sprintf("%s:%d:%d", file, line, col)
		}
		if out.Name == "" {
			out.Name, dialect, grain, key = field("table"), field("dialect"), field("grain"), field("key")
		}
		rows, err := wholeNumber(field("rows"))
		if err != nil {
			return out, fmt.Errorf("%s: rows %q: %v", pos("rows"), field("rows"), err)
		}
		switch field("scope") {
		case "table":
			if seenTable {
				return out, fmt.Errorf("%s: a second row of scope table; the result holds one", pos("scope"))
			}
			seenTable = true
			out.Rows = rows
			for _, m := range measures {
				v := strings.TrimSpace(rec[m.field])
				_, col := r.FieldPos(m.field)
				c := &cols[m.col]
				switch m.what {
				case "distinct":
					if c.Distinct, err = wholeNumber(v); err != nil {
						return out, fmt.Errorf("%s:%d:%d: %s %q: %v", file, line, col, header[m.field], v, err)
					}
				case "values":
					if values[m.col], err = wholeNumber(v); err != nil {
						return out, fmt.Errorf("%s:%d:%d: %s %q: %v", file, line, col, header[m.field], v, err)
					}
				case "avg_length":
					avg := 0.0
					if v != "" {
						if avg, err = strconv.ParseFloat(v, 64); err != nil || avg < 0 || math.IsInf(avg, 0) || math.IsNaN(avg) {
							return out, fmt.Errorf("%s:%d:%d: %s %q: want a number of bytes", file, line, col, header[m.field], v)
						}
					}
					avg = roundTo(avg, 2)
					c.AvgLength = &avg
				}
			}
		case "partition":
			p := rec[at["partition"]]
			if _, dup := parts[p]; dup && grain == "" {
				return out, fmt.Errorf("%s: partition %q appears twice", pos("partition"), p)
			}
			if grain != "" && grainIndex(grain) >= 0 {
				if p, err = foldKey(p, grain); err != nil {
					return out, fmt.Errorf("%s: %v", pos("partition"), err)
				}
			}
			parts[p] += rows
			if len(parts) > PartitionLimit {
				return out, fmt.Errorf("%s: more than %d partitions; that column is not a partition key, or give a coarser --grain", pos("partition"), PartitionLimit)
			}
		default:
			return out, fmt.Errorf("%s: scope %q: the survey query writes table or partition", pos("scope"), field("scope"))
		}
	}
	if !seenTable {
		return out, fmt.Errorf("%s:1:1: no row of scope table; save the whole result of the survey query", file)
	}
	d, err := LookupDialect(dialect)
	if err != nil {
		return out, fmt.Errorf("%s:2:1: dialect %q is not one survey writes (%s)", file, dialect, DialectNames())
	}
	for i := range cols {
		cols[i].DistinctExact = d.Exact
		cols[i].Nulls = max(0, out.Rows-values[i])
		if cols[i].Type == "string" && cols[i].AvgLength == nil {
			zero := 0.0
			cols[i].AvgLength = &zero
		}
	}
	if key != "" {
		var sum int64
		for _, n := range parts {
			sum += n
		}
		if sum != out.Rows {
			return out, fmt.Errorf("%s: the partitions hold %d rows and the table row %d; the result is incomplete or from two runs", file, sum, out.Rows)
		}
	}
	if grain != "" && grainIndex(grain) < 0 {
		return out, fmt.Errorf("%s:2:1: grain %q: use one of day, week, month, quarter, year", file, grain)
	}
	out.Partitions, out.GrowthPerYear, err = Partition(parts, key, grain)
	if err != nil {
		return out, fmt.Errorf("%s: %v", file, err)
	}
	if cols == nil {
		cols = []schema.SurveyColumn{}
	}
	out.Columns = cols
	return out, CheckText(file, out)
}

// wholeNumber reads a count as engines print it: 1234, 1234.0 or 1.234e3.
func wholeNumber(s string) (int64, error) {
	if s == "" {
		return 0, nil
	}
	if n, err := strconv.ParseInt(s, 10, 64); err == nil && n >= 0 {
		return n, nil
	}
	f, err := strconv.ParseFloat(s, 64)
	if err != nil || f < 0 || f != math.Trunc(f) || f > 1<<62 {
		return 0, errors.New("want a whole number")
	}
	return int64(f), nil
}

func resultError(file string, err error) error {
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		return fmt.Errorf("%s:%d:%d: %v; save the query's result as CSV with its header row", file, pe.Line, pe.Column, pe.Err)
	}
	return fmt.Errorf("%s: %v", file, err)
}
