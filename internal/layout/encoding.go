package layout

import (
	"math"
	"math/bits"

	"github.com/scangate/scangate/internal/units"

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

// SampleDistinct is the expected number of distinct values among n rows taken at
// random, without replacement, from a table of total rows that holds d values equally
// often (k = total/d rows each): the segment of a randomly ordered column is such a
// sample. Yao (1977) gives it exactly, d(1 - P) with P = C(total-k, n)/C(total, n) the
// chance a value is absent, a product of min(k, n) factors; this takes each factor at
// the product's midpoint, P = (1 - max(k,n)/(total - (min(k,n)-1)/2))^min(k,n), within
// 0.1% of the exact product and stable for any table size. Unlike Cardenas' (1975) draws
// with replacement it is exact at both ends (n when every row is unique, d when the
// sample is the whole table), and it tends to ExpectedDistinct(d, n) as total grows.
func SampleDistinct(d, n, total float64) float64 {
	if !(n > 0) {
		return 0
	}
	if !(d > 1) {
		return min(1, n)
	}
	if math.IsInf(total, 1) || math.IsNaN(total) {
		return ExpectedDistinct(d, n)
	}
	d = min(d, total) // a table holds at most one value per row
	if n >= total {
		return d
	}
	k := total / d
	m, x := min(k, n), max(k, n)
	mid := total - (m-1)/2
	if x >= mid {
		return min(d, n) // every value is in the sample
	}
	v := -d * math.Expm1(m*math.Log1p(-x/mid))
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

// Size is the estimated encoded size of a column in one segment: dictionary encoded, in
// its two parts, or plain encoded when that is smaller.
type Size struct {
	Index      float64 // the dictionary index stream: run-length / bit-packed hybrid
	Dictionary float64 // the segment's own dictionary: distinct values x value width
	Plain      float64 // the values written plain; when set, Index and Dictionary are 0
}

// Bytes is the whole encoded size: index stream plus dictionary, or the plain values.
func (s Size) Bytes() float64 { return s.Index + s.Dictionary + s.Plain }

// PlainBytes is the size of n values of c written plain, one after the other, as the
// Apache Parquet format's PLAIN encoding writes them: ValueBytes each (a string's 4-byte
// length prefix and its bytes), booleans bit-packed, one bit each.
func PlainBytes(c schema.Column, n int64) float64 {
	if n <= 0 {
		return 0
	}
	if c.Type == "bool" {
		return float64((n + 7) / 8)
	}
	return float64(n) * ValueBytes(c)
}

// SegmentBytes estimates the encoded bytes of column c in one segment of n rows of a
// table of tableRows rows, with a dictionary per segment (the index stream plus the
// dictionary) or plain values, whichever is smaller. The scan cost of a column is driven
// by this number.
func SegmentBytes(c schema.Column, tableRows, n int64) float64 {
	return segmentBytes(c, tableRows, n, nil)
}

// segmentBytes is SegmentBytes with share (nil: none) keeping, across the segments of
// one column and table, the share of a random column's index groups that hold a single
// value: it depends on the column's distinct count alone (randomIndexBytes).
func segmentBytes(c schema.Column, tableRows, n int64, share *groupShare) float64 {
	return segmentSize(c, tableRows, n, share).Bytes()
}

// groupShare is randomIndexBytes' share of single-value groups, kept once computed.
type groupShare struct {
	q   float64
	set bool
}

// SegmentSize is SegmentBytes in its parts: the segment's dictionary encoding
// (DictionarySize), or its values written plain (PlainBytes) when those take fewer
// bytes, as they do when nearly every value of the segment is distinct (the dictionary
// then repeats the values and the indexes come on top). A measured encoded_bytes is
// spread over the rows in proportion and counted as index stream.
func SegmentSize(c schema.Column, tableRows, n int64) Size {
	return segmentSize(c, tableRows, n, nil)
}

func segmentSize(c schema.Column, tableRows, n int64, share *groupShare) Size {
	s := dictionarySize(c, tableRows, n, share)
	if c.EncodedBytes > 0 || n <= 0 {
		return s
	}
	if p := PlainBytes(c, n); p < s.Bytes() {
		return Size{Plain: p}
	}
	return s
}

// DictionarySize is the estimated size of column c dictionary encoded in one segment of
// n rows of a table of tableRows rows: the index stream and the segment's dictionary.
func DictionarySize(c schema.Column, tableRows, n int64) Size {
	return dictionarySize(c, tableRows, n, nil)
}

func dictionarySize(c schema.Column, tableRows, n int64, share *groupShare) Size {
	if n <= 0 {
		return Size{}
	}
	if n > tableRows {
		share = nil // the distinct count below follows the segment's rows then
	}
	tableRows = max(tableRows, n) // a segment is never larger than its table
	fn, fr := float64(n), float64(tableRows)
	if c.EncodedBytes > 0 {
		return Size{Index: float64(c.EncodedBytes) * fn / fr}
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
	// A random segment is a sample of the table's rows; neighbouring rows hold
	// different values with probability 1 - 1/d, independently.
	random := func() Size {
		ds := SampleDistinct(fd, fn, fr)
		return Size{Index: randomIndexBytes(fn, IndexBits(ds), 1-1/fd, share), Dictionary: float64(ds * vb)}
	}
	switch c.Order {
	case schema.Sorted:
		// Equal values are adjacent, d runs of R/d rows: the d - 1 value changes lie
		// among the R - 1 neighbouring pairs, so a segment meets 1 + (n-1)(d-1)/(R-1)
		// values (about n*d/R + 1), one run each.
		ds := 1.0
		if n > 1 && d > 1 {
			ds = min(fn, 1+float64(fn-1)*(fd-1)/(fr-1))
		}
		return Size{Index: sortedIndexBytes(fn, ds), Dictionary: float64(ds * vb)}
	case schema.Clustered:
		l := c.RunLength
		if l <= 0 {
			l = max(1, tableRows/d)
		}
		// Runs of l rows start anywhere relative to the segment, so it meets 1 + (n-1)/l
		// of the table's R/l runs; the runs hold the d values equally often, and the
		// next run repeats the value with probability 1/d.
		fl := float64(min(l, tableRows))
		ds := SampleDistinct(fd, 1+(fn-1)/fl, fr/fl)
		changes := float64((fn-1)/fl) * (1 - 1/fd)
		var idx float64
		switch {
		case d == 1 || changes <= 0:
			idx = singleRunBytes(fn)
		case changes < 1:
			// Mostly one value (no index bits), sometimes two.
			idx = float64((1-changes)*singleRunBytes(fn)) + float64(changes*runIndexBytes(fn, 1, 1, fn, 0))
		default:
			idx = runIndexBytes(fn, IndexBits(ds), changes, fl, 1/fd)
		}
		return Size{Index: idx, Dictionary: float64(ds * vb)}
	}
	return random()
}

// The index estimates follow the run-length / bit-packing hybrid encoding of the
// Apache Parquet format (its RLE encoding, a published reference for the scheme):
// indexes go in groups of 8; a group of one value joins a run-length run (a varint
// header, then the value in ceil(w/8) bytes), any other group is bit-packed in w bytes,
// consecutive bit-packed groups sharing one varint header. A segment of a single value
// needs no index bits at all: one run header.

// singleRunBytes is the index stream of n rows of one value: the header of one run.
func singleRunBytes(n float64) float64 {
	return float64(varintBytes(units.Int64(math.Ceil(2 * n))))
}

// randomIndexBytes is the expected index stream of n indexes of w bits whose neighbours
// differ independently with probability p (a randomly ordered column); share, when set,
// keeps the share of single-value groups for the next call with the same p.
func randomIndexBytes(n float64, w int, p float64, share *groupShare) float64 {
	if !(n > 0) {
		return 0
	}
	p = min(max(p, 0), 1)
	if p == 0 {
		return singleRunBytes(n)
	}
	groups := n / 8
	var q float64 // a group holds one value: its 7 inner pairs are equal
	switch {
	case share == nil:
		q = math.Pow(1-p, 7)
	case share.set:
		q = share.q
	default:
		q = math.Pow(1-p, 7)
		share.q, share.set = q, true
	}
	uniform := groups * q     // run-length encoded groups
	mixed := groups - uniform // bit-packed groups
	after := max(groups-1, 0)
	// A uniform group starts a run unless the group before is uniform with the same value;
	// a mixed group starts a bit-packed run when it is first or follows a uniform group.
	rleRuns := q + float64(after*q)*(1-float64(q*(1-p)))
	bpRuns := (1 - q) + float64(after*(1-q))*q
	return hybridBytes(w, uniform, mixed, rleRuns, bpRuns)
}

// sortedIndexBytes is the expected index stream of a segment of n rows meeting ds
// values in one run each. A segment meets either floor(ds) or floor(ds)+1 values, and
// the index width follows the count it really meets, so the two are mixed.
func sortedIndexBytes(n, ds float64) float64 {
	if !(n > 0) {
		return 0
	}
	j := math.Floor(ds)
	f := ds - j
	cost := func(values float64) float64 {
		if values <= 1 {
			return singleRunBytes(n)
		}
		return runIndexBytes(n, IndexBits(values), values-1, n/(values-1), 0)
	}
	if f == 0 {
		return cost(j)
	}
	return float64((1-f)*cost(j)) + float64(f*cost(j+1))
}

// runIndexBytes is the expected index stream of n indexes of w bits that change value
// `changes` times. Runs start every l rows on average, anywhere relative to the groups
// of 8, and a run repeats the value of the one before with probability m (so value
// runs are k runs long with probability m^(k-1)(1-m)). A group is bit-packed when a
// value change falls among its 7 inner pairs; a value run shorter than 15 rows may
// hold no whole group, and then no run-length run either.
func runIndexBytes(n float64, w int, changes, l, m float64) float64 {
	if !(n > 0) {
		return 0
	}
	groups := n / 8
	l = max(l, 1)
	// ⌊7/l⌋ or one more run starts fall inside a group; none of them changes the value
	// with probability m^c.
	c := math.Floor(7 / l)
	f := 7/l - c
	pSame := float64((1-f)*math.Pow(m, c)) + float64(f*math.Pow(m, c+1))
	mixed := groups * (1 - pSame)
	uniform := groups - mixed
	rleRuns := min(uniform, (1+changes)*wholeGroupShare(l, m))
	bpRuns := min(mixed, rleRuns+1) // bit-packed stretches lie between run-length runs
	return hybridBytes(w, uniform, mixed, rleRuns, bpRuns)
}

// wholeGroupShare is the share of value runs that hold at least one whole group of 8:
// a value run of L rows starting anywhere holds one with probability min(1, (L-7)/8),
// and L = k*l with probability m^(k-1)(1-m).
func wholeGroupShare(l, m float64) float64 {
	share, pk, tail := 0.0, 1-m, 1.0 // pk = P(k), tail = P(K >= k)
	for k := 1.0; tail > 0; k++ {
		if k*l >= 15 {
			return share + tail // every longer run holds a whole group
		}
		share += float64(pk * max(0, (k*l-7)/8))
		tail -= pk
		pk *= m
	}
	return share
}

// hybridBytes prices uniform groups in rleRuns run-length runs and mixed groups in
// bpRuns bit-packed runs, each run with its varint header.
func hybridBytes(w int, uniform, mixed, rleRuns, bpRuns float64) float64 {
	b := mixed * float64(w)
	if mixed > 0 && bpRuns > 0 {
		b += float64(bpRuns * float64(varintBytes(units.Int64(math.Ceil(2*mixed/bpRuns))+1)))
	}
	if uniform > 0 && rleRuns > 0 {
		header := varintBytes(units.Int64(math.Ceil(16 * uniform / rleRuns)))
		b += float64(rleRuns * float64(header+(w+7)/8))
	}
	return b
}

// ColumnBytes is the encoded size of c over all segments of the partitions, the B_c
// that a full scan reads. Segments are grouped by size, so 10^9 segments cost one
// estimate for the full ones plus one per part-empty segment.
func ColumnBytes(c schema.Column, parts []Partition, segmentRows int64) float64 {
	b, _ := columnBytes(c, tableRowsOr(0, parts), parts, segmentRows, nil, nil)
	return b
}

// Smaller keeps, for one column of one list of partitions, the estimate of each
// partition's one segment at a capacity above the partition's rows: the same segment
// (of the partition's own rows) at every such capacity, so a sweep trying several
// capacities estimates it once. The same column, partitions and table rows must come
// with it every time; the zero value is ready to use.
type Smaller struct {
	rows  int64     // table rows the estimates are for
	bytes []float64 // by partition; -1 not yet estimated
}

// of is the estimate of partition i's one segment of n rows, kept once made.
func (m *Smaller) of(c schema.Column, tableRows int64, parts int, i int, n int64, share *groupShare) float64 {
	if m.bytes == nil {
		m.rows, m.bytes = tableRows, make([]float64, parts)
		for k := range m.bytes {
			m.bytes[k] = -1
		}
	}
	if m.rows != tableRows || len(m.bytes) != parts {
		return segmentBytes(c, tableRows, n, share)
	}
	if b := m.bytes[i]; b >= 0 {
		return b
	}
	b := segmentBytes(c, tableRows, n, share)
	m.bytes[i] = b
	return b
}

// columnBytes sums the segment estimates in partition order (a fixed order keeps the
// float sum deterministic). When visit is set it is called for each partition with its
// full-segment count and bytes and its partial segment's rows and bytes, so a scan can
// build its tasks from the same numbers.
func columnBytes(c schema.Column, tableRows int64, parts []Partition, segmentRows int64, memo *Smaller,
	visit func(full int64, fullBytes float64, partRows int64, partBytes float64)) (bytes float64, segments int64) {
	s := max(segmentRows, 1)
	var full int64
	fullBytes := -1.0 // computed once, on the first full segment
	var partial float64
	lastRows, lastBytes := int64(-1), 0.0
	var share groupShare // the same column and table rows throughout
	for i, p := range parts {
		r := max(p.Rows, 0)
		k, rest := r/s, r%s
		if k > 0 && fullBytes < 0 {
			fullBytes = segmentBytes(c, tableRows, s, &share)
		}
		full = satAdd(full, k)
		var rb float64
		if rest > 0 {
			switch {
			case rest == lastRows:
			case k == 0 && memo != nil:
				lastRows, lastBytes = rest, memo.of(c, tableRows, len(parts), i, rest, &share)
			default:
				lastRows, lastBytes = rest, segmentBytes(c, tableRows, rest, &share)
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
