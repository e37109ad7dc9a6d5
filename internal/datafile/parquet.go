package datafile

import (
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"strconv"
	"time"

	"github.com/parquet-go/parquet-go"
	"github.com/parquet-go/parquet-go/deprecated"
	"github.com/parquet-go/parquet-go/format"

	"github.com/scangate/scangate/internal/survey"
)

// batchRows is how many rows are decoded at a time; with the column chunk pages the
// reader holds, it bounds a file's memory whatever its size.
const batchRows = 512

// leaf is how one Parquet leaf column is measured.
type leaf struct {
	col     *survey.Typed
	typ     string // manifest type
	kind    survey.Kind
	phys    parquet.Kind
	logical any  // the logical type's value, nil when none
	millis  bool // a timestamp of the legacy converted type in milliseconds
}

// readParquet reads one Parquet file row group by row group. Top-level columns that are
// not repeated are measured; nested and repeated columns are skipped, since their values
// are not one a row.
func readParquet(f File, t *survey.Table, column, fileKey string, o Options, progress func(int64)) error {
	lim := o.Limits
	h, err := open(f)
	if err != nil {
		return err
	}
	defer h.Close()
	if err := checkFooter(f, h, lim); err != nil {
		return err
	}
	pf, err := parquet.OpenFile(h, f.Size, parquet.SkipPageIndex(true), parquet.SkipBloomFilters(true), parquet.ReadBufferSize(1<<20))
	if err != nil {
		return fmt.Errorf("%s: not a readable Parquet file: %v", f.Path, err)
	}
	sch := pf.Schema()
	leaves := make([]*leaf, len(sch.Columns()))
	keyAt := -1
	for _, field := range sch.Fields() {
		if !field.Leaf() || field.Repeated() {
			if o.Skipped != nil {
				o.Skipped(f, field.Name())
			}
			continue
		}
		lc, ok := sch.Lookup(field.Name())
		if !ok {
			continue
		}
		l := leafOf(field.Type())
		if l.col, err = t.Typed(field.Name(), l.typ, l.kind); err != nil {
			return fmt.Errorf("%s: %v", f.Path, err)
		}
		leaves[lc.ColumnIndex] = l
		if field.Name() == column {
			keyAt = lc.ColumnIndex
		}
	}
	if column != "" && keyAt < 0 {
		return fmt.Errorf("%s: --partition-by %q names no top-level column of the file", f.Path, column)
	}
	var done int64
	buf := make([]parquet.Row, batchRows)
	for gi, rg := range pf.RowGroups() {
		rows := rg.Rows()
		for {
			n, err := rows.ReadRows(buf)
			for _, row := range buf[:n] {
				key := fileKey
				for _, v := range row {
					l := leaves[v.Column()]
					if l == nil {
						continue
					}
					l.add(v)
					if v.Column() == keyAt {
						key = keyText(l, v)
					}
				}
				if keyAt >= 0 {
					if err := t.Count(key, 1); err != nil {
						rows.Close()
						return fmt.Errorf("%s: %v", f.Path, err)
					}
				}
			}
			if errors.Is(err, io.EOF) {
				break
			}
			if err != nil {
				rows.Close()
				return fmt.Errorf("%s: row group %d: %v", f.Path, gi, err)
			}
		}
		rows.Close()
		if keyAt < 0 {
			if err := t.Count(fileKey, rg.NumRows()); err != nil {
				return fmt.Errorf("%s: %v", f.Path, err)
			}
		}
		if gi < len(pf.Metadata().RowGroups) {
			done += pf.Metadata().RowGroups[gi].TotalCompressedSize
		}
		progress(min(done, f.Size))
	}
	progress(f.Size)
	return nil
}

// checkFooter refuses a file that does not end like Parquet or whose footer is larger
// than the limit, before the reader allocates it.
func checkFooter(f File, r io.ReaderAt, lim Limits) error {
	var tail [8]byte
	if f.Size < 12 {
		return fmt.Errorf("%s: not a Parquet file: %d bytes is too short", f.Path, f.Size)
	}
	if _, err := r.ReadAt(tail[:], f.Size-8); err != nil {
		return fmt.Errorf("cannot read %s: %v", f.Path, unwrap(err))
	}
	if string(tail[4:]) != "PAR1" {
		return fmt.Errorf("%s: not a Parquet file: it does not end in PAR1", f.Path)
	}
	n := int64(binary.LittleEndian.Uint32(tail[:4]))
	if n > f.Size-12 || n > lim.MaxFooterBytes {
		return fmt.Errorf("%s: its Parquet footer claims %d bytes, more than the file or the limit of %d allows", f.Path, n, lim.MaxFooterBytes)
	}
	return nil
}

// leafOf maps a Parquet type to the manifest's: strings (and other byte arrays) to
// string, DECIMAL to decimal, DATE to date, TIMESTAMP and INT96 to datetime, BOOLEAN to
// bool, FLOAT and DOUBLE to float64, other integers (TIME included) to int64.
func leafOf(tp parquet.Type) *leaf {
	l := &leaf{phys: tp.Kind()}
	if lt := tp.LogicalType(); lt != nil {
		l.logical = lt.Value
	}
	conv := tp.ConvertedType()
	l.millis = conv != nil && *conv == deprecated.TimestampMillis
	switch l.logical.(type) {
	case *format.DecimalType:
		l.typ = "decimal"
	case *format.DateType:
		l.typ = "date"
	case *format.TimestampType:
		l.typ = "datetime"
	default:
		switch {
		case conv != nil && *conv == deprecated.Decimal:
			l.typ = "decimal"
		case conv != nil && *conv == deprecated.Date:
			l.typ = "date"
		case conv != nil && (*conv == deprecated.TimestampMillis || *conv == deprecated.TimestampMicros):
			l.typ = "datetime"
		}
	}
	switch l.phys {
	case parquet.Boolean:
		l.typ, l.kind = "bool", survey.KindInt
	case parquet.Int32, parquet.Int64:
		if l.typ == "" {
			l.typ = "int64"
		}
		l.kind = survey.KindInt
	case parquet.Int96:
		l.typ, l.kind = "datetime", survey.KindInt
	case parquet.Float, parquet.Double:
		l.typ, l.kind = "float64", survey.KindFloat
	default: // byte arrays
		if l.typ == "" {
			l.typ = "string"
		}
		l.kind = survey.KindBytes
	}
	return l
}

// add counts one value.
func (l *leaf) add(v parquet.Value) {
	if v.IsNull() {
		l.col.Null()
		return
	}
	switch l.phys {
	case parquet.Boolean:
		b := int64(0)
		if v.Boolean() {
			b = 1
		}
		l.col.Int(b)
	case parquet.Int32:
		l.col.Int(int64(v.Int32()))
	case parquet.Int64:
		l.col.Int(v.Int64())
	case parquet.Int96:
		l.col.Int(int96Nanos(v.Int96()))
	case parquet.Float:
		l.col.Float(float64(v.Float()))
	case parquet.Double:
		l.col.Float(v.Double())
	default:
		l.col.Bytes(v.ByteArray())
	}
}

// int96Nanos reads the legacy INT96 timestamp: nanoseconds of the day in the first 8
// bytes, the Julian day in the last 4; 2440588 is the Julian day of 1970-01-01.
func int96Nanos(i deprecated.Int96) int64 {
	nanos := int64(uint64(i[1])<<32 | uint64(i[0]))
	return (int64(i[2])-2440588)*86400_000_000_000 + nanos
}

// keyText is a value written as a partition key: dates and times as ISO 8601 (UTC),
// numbers in base 10, strings as they are.
func keyText(l *leaf, v parquet.Value) string {
	if v.IsNull() {
		return ""
	}
	switch l.typ {
	case "date":
		return time.Unix(int64(v.Int32())*86400, 0).UTC().Format("2006-01-02")
	case "datetime":
		return time.Unix(0, 0).UTC().Add(time.Duration(ticksToNanos(l, v))).Format("2006-01-02T15:04:05")
	case "bool":
		return strconv.FormatBool(v.Boolean())
	}
	switch l.phys {
	case parquet.Int32:
		return strconv.FormatInt(int64(v.Int32()), 10)
	case parquet.Int64:
		return strconv.FormatInt(v.Int64(), 10)
	case parquet.Float:
		return strconv.FormatFloat(float64(v.Float()), 'g', -1, 32)
	case parquet.Double:
		return strconv.FormatFloat(v.Double(), 'g', -1, 64)
	}
	return string(v.ByteArray())
}

// ticksToNanos converts a timestamp's stored ticks to nanoseconds since 1970.
func ticksToNanos(l *leaf, v parquet.Value) int64 {
	if l.phys == parquet.Int96 {
		return int96Nanos(v.Int96())
	}
	ticks := v.Int64()
	if ts, ok := l.logical.(*format.TimestampType); ok && ts.Unit.Value != nil {
		return ticks * int64(ts.Unit.Value.Duration())
	}
	if l.millis {
		return ticks * int64(time.Millisecond)
	}
	return ticks * int64(time.Microsecond)
}
