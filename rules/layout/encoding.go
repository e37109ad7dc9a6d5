package layout

import (
	"math"
	"math/bits"

	"github.com/scangate/scangate/schema"
)

// ExpectedDistinct is Cardenas' (1975) expected number of distinct values among n
// draws from d equally likely values, d(1-(1-1/d)^n): the dictionary size of a segment
// of a randomly ordered column. It is computed as -d*expm1(n*log1p(-1/d)), which stays
// accurate when d is huge and n small; d <= 1 → min(1, n); never above min(d, n).
func ExpectedDistinct(d, n float64) float64 {
	if !(n > 0) {
		return 0
	}
	if !(d > 1) {
		return min(1, n)
	}
	if math.IsInf(d, 1) {
		return min(n, math.MaxFloat64) // every draw is new
	}
	if math.IsInf(n, 1) {
		return d // every value is drawn
	}
	v := -d * math.Expm1(n*math.Log1p(-1/d))
	return min(v, d, n)
}

// IndexBits is the dictionary index width: max(1, ceil(log2 ds)) for ds distinct values
// (ds <= 1 → 1). It uses the float's exponent rather than math.Log2, so it agrees with
// bits.Len64(uint64(ds)-1) for every integer ds >= 2, even just above a power of two
// where a rounded logarithm would come out one bit short. Capped at 64 (a uint64 index).
func IndexBits(ds float64) int {
	if !(ds > 1) {
		return 1
	}
	if math.IsInf(ds, 1) {
		return 64
	}
	frac, exp := math.Frexp(ds) // ds = frac * 2^exp, frac in [0.5, 1)
	if frac == 0.5 {
		exp-- // an exact power of two needs one bit less
	}
	return min(max(exp, 1), 64)
}

// ValueBytes is the uncompressed width of one value of column c, the size of one
// dictionary entry: int64/float64/decimal/datetime 8, date 4, bool 1, string
// avg_length + 4 (length prefix). An unknown type counts as 8.
func ValueBytes(c schema.Column) float64 {
	switch c.Type {
	case "date":
		return 4
	case "bool":
		return 1
	case "string":
		if c.AvgLength > 0 && !math.IsInf(c.AvgLength, 0) {
			return c.AvgLength + 4
		}
		return 4
	}
	return 8
}

// varintBytes is the size of v as an unsigned LEB128 varint (7 bits per byte), the
// usual encoding of a run length.
func varintBytes(v int64) int {
	if v <= 0 {
		return 1
	}
	return (bits.Len64(uint64(v)) + 6) / 7
}

// SegmentBytes estimates the encoded bytes of column c in one segment of n rows of a
// table of tableRows rows, with a dictionary per segment: the index stream plus the
// dictionary. The scan cost of a column is driven by this number.
func SegmentBytes(c schema.Column, tableRows, n int64) float64 {
	if n <= 0 {
		return 0
	}
	tableRows = max(tableRows, n) // a segment is never larger than its table
	fn, fr := float64(n), float64(tableRows)
	if c.EncodedBytes > 0 {
		return float64(c.EncodedBytes) * fn / fr
	}
	d := c.Distinct
	if d <= 0 {
		d = tableRows
		if c.Type == "bool" {
			d = 2
		}
	}
	d = min(max(d, 1), tableRows)
	fd := float64(d)
	vb := ValueBytes(c)
	random := func() float64 {
		ds := ExpectedDistinct(fd, fn)
		w := IndexBits(ds)
		return float64(fn*float64(w)/8) + float64(ds*vb)
	}
	switch c.Order {
	case schema.Sorted:
		// Equal values are adjacent: about n*d/R + 1 of them meet in a segment, one run each.
		ds := min(fn, fd, float64(fn*fd)/fr+1)
		w := IndexBits(ds)
		runLen := int64(math.Ceil(fn / ds))
		rle := float64(ds * float64((w+7)/8+varintBytes(runLen)))
		// A hybrid encoder bit-packs when runs are too short to pay for themselves.
		idx := min(rle, float64(fn*float64(w)/8))
		return idx + float64(ds*vb)
	case schema.Clustered:
		l := c.RunLength
		if l <= 0 {
			l = max(1, tableRows/d)
		}
		runs := n / l
		if n%l != 0 {
			runs++
		}
		fruns := float64(runs)
		ds := ExpectedDistinct(fd, fruns)
		w := IndexBits(ds)
		rle := float64(fruns * float64((w+7)/8+varintBytes(min(l, n))))
		idx := min(rle, float64(fn*float64(w)/8))
		// Never worse than bit-packing the same rows in random order.
		return min(idx+float64(ds*vb), random())
	}
	return random()
}

// ColumnBytes is the encoded size of c over all segments of the partitions, the B_c
// that a full scan reads. Segments are grouped by size, so 10^9 segments cost one
// estimate for the full ones plus one per part-empty segment.
func ColumnBytes(c schema.Column, parts []Partition, segmentRows int64) float64 {
	var rows int64
	for _, p := range parts {
		rows = satAdd(rows, max(p.Rows, 0))
	}
	b, _ := columnBytes(c, rows, parts, segmentRows, nil)
	return b
}

// columnBytes sums the segment estimates in partition order (a fixed order keeps the
// float sum deterministic). When visit is set it is called for each partition with its
// full-segment count and bytes and its partial segment's rows and bytes, so a scan can
// build its tasks from the same numbers.
func columnBytes(c schema.Column, tableRows int64, parts []Partition, segmentRows int64,
	visit func(full int64, fullBytes float64, partRows int64, partBytes float64)) (bytes float64, segments int64) {
	s := max(segmentRows, 1)
	var full int64
	fullBytes := -1.0 // computed once, on the first full segment
	var partial float64
	lastRows, lastBytes := int64(-1), 0.0
	for _, p := range parts {
		r := max(p.Rows, 0)
		k, rest := r/s, r%s
		if k > 0 && fullBytes < 0 {
			fullBytes = SegmentBytes(c, tableRows, s)
		}
		full = satAdd(full, k)
		var rb float64
		if rest > 0 {
			if rest != lastRows {
				lastRows, lastBytes = rest, SegmentBytes(c, tableRows, rest)
			}
			rb = lastBytes
			partial += rb
			segments = satAdd(segments, 1)
		}
		if visit != nil {
			visit(k, max(fullBytes, 0), rest, rb)
		}
	}
	segments = satAdd(segments, full)
	if full > 0 {
		bytes = float64(float64(full)*fullBytes) + partial
	} else {
		bytes = partial
	}
	return bytes, segments
}
