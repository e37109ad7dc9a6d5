package layout

import (
	"math"

	"github.com/scangate/scangate/schema"
)

// RowBytes is the uncompressed width of one row of the profiled columns: the sum of
// their value widths (ValueBytes). 0 without column profiles.
func RowBytes(cols []schema.Column) float64 {
	var w float64
	for _, c := range cols {
		w += ValueBytes(c)
	}
	return w
}

// TableBytes is the encoded size of a table's profiled columns laid out in parts with
// segments of segmentRows rows: the sum of the bytes a full scan of each reads
// (tableRows as ScanColumn takes it, 0 for the sum of the parts). 0 without profiles.
func TableBytes(cols []schema.Column, tableRows int64, parts []Partition, segmentRows int64) float64 {
	if tableRows <= 0 {
		for _, p := range parts {
			tableRows = satAdd(tableRows, max(p.Rows, 0))
		}
	}
	var b float64
	for _, c := range cols {
		x, _ := columnBytes(c, tableRows, parts, segmentRows, nil, nil)
		b += x
	}
	return b
}

// RefreshPeak is the memory a full refresh of a model needs at its peak: RebuildPeak
// with every table rebuilt (rebuiltBytes = modelBytes) and parallelism partitions in
// flight:
//
//	peak = 2 x modelBytes + parallelism x segmentRows x rowBytes
func RefreshPeak(modelBytes float64, parallelism int, segmentRows int64, rowBytes float64) float64 {
	return RebuildPeak(modelBytes, modelBytes, parallelism, segmentRows, rowBytes)
}

// RebuildPeak is the memory a refresh needs at its peak, the one place this formula
// lives: the model stays online (modelBytes, its encoded size) while the new copy of
// what the refresh rebuilds is built beside it (rebuiltBytes: the whole model for a
// full refresh, the recent partitions for a routine one), and each of the inFlight
// partitions processed at once holds one segment of uncompressed rows, segmentRows x
// rowBytes (rowBytes: the widest row of the model, since any table may be the one in
// flight):
//
//	peak = modelBytes + rebuiltBytes + inFlight x segmentRows x rowBytes
//
// inFlight below 1 counts as 1; negative or non-finite inputs count as 0, so the result
// is finite.
func RebuildPeak(modelBytes, rebuiltBytes float64, inFlight int, segmentRows int64, rowBytes float64) float64 {
	modelBytes, rebuiltBytes, rowBytes = finite(modelBytes), finite(rebuiltBytes), finite(rowBytes)
	rows := float64(float64(max(inFlight, 1)) * float64(max(segmentRows, 0)))
	return float64(modelBytes+rebuiltBytes) + float64(rows*rowBytes)
}

// finite is x, or 0 when x is negative, NaN or infinite.
func finite(x float64) float64 {
	if !(x > 0) || math.IsInf(x, 0) {
		return 0
	}
	return x
}
