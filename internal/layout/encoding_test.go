package layout

import (
	"math"
	"math/bits"
	"math/rand/v2"
	"testing"

	"github.com/scangate/scangate/schema"
)

func TestIndexBitsMatchesLen64(t *testing.T) {
	// Source: Go standard library math/bits — Len64(x-1) is the bits needed to index x values.
	for x := uint64(2); x <= 1<<20; x++ {
		if got, want := IndexBits(float64(x)), bits.Len64(x-1); got != want {
			t.Fatalf("IndexBits(%d) = %d, want %d", x, got, want)
		}
	}
	// Large values around powers of two, where a rounded log2 would be one bit off.
	for k := 21; k <= 52; k++ { // 2^53+1 is not a float64
		for _, x := range []uint64{1<<k - 1, 1 << k, 1<<k + 1} {
			if got, want := IndexBits(float64(x)), bits.Len64(x-1); got != want {
				t.Errorf("IndexBits(%d) = %d, want %d", x, got, want) // source: math/bits
			}
		}
	}
	for _, x := range []uint64{1_000_000_007, 1e12, 1e15, 4_000_000_000} {
		if got, want := IndexBits(float64(x)), bits.Len64(x-1); got != want {
			t.Errorf("IndexBits(%d) = %d, want %d", x, got, want) // source: math/bits
		}
	}
	// Spec: ds <= 1 needs one bit; fractional ds rounds up.
	for ds, want := range map[float64]int{0: 1, 1: 1, 0.5: 1, 1.01: 1, 2: 1, 2.5: 2, 4: 2, 4.0001: 3, math.NaN(): 1, math.Inf(1): 64} {
		if got := IndexBits(ds); got != want {
			t.Errorf("IndexBits(%v) = %d, want %d", ds, got, want)
		}
	}
}

func TestExpectedDistinctClosedForm(t *testing.T) {
	cases := []struct{ d, n, want float64 }{
		{2, 2, 1.5},         // Cardenas (1975): 2(1 - (1/2)^2) = 1.5
		{4, 2, 1.75},        // Cardenas (1975): 4(1 - (3/4)^2) = 4*7/16 = 1.75
		{10, 3, 2.71},       // Cardenas (1975): 10(1 - 0.9^3) = 10*0.271 = 2.71
		{3, 3, 19.0 / 9},    // Cardenas (1975): 3(1 - (2/3)^3) = 3*19/27 = 19/9
		{100, 1, 1},         // Cardenas (1975): one draw is one value
		{1e15, 1, 1},        // Cardenas (1975): one draw is one value, even for huge d
		{1000, 1e12, 1000},  // Cardenas (1975): n → ∞ gives every value, d
		{1, 50, 1},          // spec: d <= 1 → min(1, n)
		{0, 50, 1},          // spec: d <= 1 → min(1, n)
		{0.5, 0.25, 0.25},   // spec: d <= 1 → min(1, n)
		{50, 0, 0},          // no draws, no values
		{math.Inf(1), 7, 7}, // d → ∞: every draw is new
		{9, math.Inf(1), 9}, // n → ∞: every value is drawn
	}
	for _, c := range cases {
		if got := ExpectedDistinct(c.d, c.n); math.Abs(got-c.want) > 1e-12*max(1, c.want) {
			t.Errorf("ExpectedDistinct(%v, %v) = %v, want %v", c.d, c.n, got, c.want)
		}
	}
	// Stable for huge d and small n: d(1-(1-1/d)^n) ≈ n - n(n-1)/(2d) (Cardenas 1975,
	// second-order expansion); the naive formula loses every digit here.
	d, n := 1e15, 1e6
	if got, want := ExpectedDistinct(d, n), n-n*(n-1)/(2*d); math.Abs(got-want) > 1e-6 {
		t.Errorf("ExpectedDistinct(1e15, 1e6) = %.9f, want %.9f", got, want)
	}
	// Spec: never above min(d, n), and monotone in n.
	prev := 0.0
	for n := 1.0; n < 1e7; n *= 1.7 {
		v := ExpectedDistinct(1000, n)
		if v > min(1000, n) || v < prev {
			t.Fatalf("ExpectedDistinct(1000, %v) = %v, not within min(d, n) or not monotone", n, v)
		}
		prev = v
	}
}

func TestExpectedDistinctSimulation(t *testing.T) {
	// Source: direct simulation — draw n values with replacement from d, count the
	// distinct ones, average over trials (seeded PCG, so the test is reproducible).
	r := rand.New(rand.NewPCG(1975, 1))
	for _, c := range []struct{ d, n int }{{10, 5}, {10, 30}, {100, 50}, {1000, 1000}, {5000, 20000}, {1 << 16, 1000}} {
		const trials = 400
		seen := make([]int, c.d)
		total := 0
		for tr := 1; tr <= trials; tr++ {
			for range c.n {
				v := r.IntN(c.d)
				if seen[v] != tr {
					seen[v] = tr
					total++
				}
			}
		}
		sim := float64(total) / trials
		got := ExpectedDistinct(float64(c.d), float64(c.n))
		if math.Abs(got-sim) > 0.03*sim {
			t.Errorf("d=%d n=%d: ExpectedDistinct %.2f, simulation %.2f (more than 3%% apart)", c.d, c.n, got, sim)
		}
	}
}

func TestValueBytes(t *testing.T) {
	// Spec (DESIGN.md §4 via the brief): fixed widths, strings avg_length + 4.
	for typ, want := range map[string]float64{"int64": 8, "float64": 8, "decimal": 8, "datetime": 8, "date": 4, "bool": 1} {
		if got := ValueBytes(schema.Column{Type: typ}); got != want {
			t.Errorf("ValueBytes(%s) = %v, want %v", typ, got, want)
		}
	}
	if got := ValueBytes(schema.Column{Type: "string", AvgLength: 12.5}); got != 16.5 {
		t.Errorf("ValueBytes(string 12.5) = %v, want 16.5", got)
	}
}

// The worked examples follow the run-length / bit-packing hybrid of the Apache Parquet
// format specification (Encodings, RLE): groups of 8 indexes, a varint header per run
// (count<<1 for a run-length run, groups<<1|1 for a bit-packed run), a run-length value in
// ceil(w/8) bytes, a bit-packed group in w bytes. internal/layout/encoder_test.go checks the
// same numbers against a real encoder.

func TestSegmentBytesWorked(t *testing.T) {
	const n = 1 << 20
	// Random bool, 2 values: 2^17 groups of 8; a group is one value with probability
	// (1/2)^7 = 1/128: 1,024 run-length groups, 130,048 bit-packed ones at 1 byte each.
	// Runs: a uniform group starts a run-length run unless the group before is uniform
	// with the same value, 1/128 + 131,071/128 x (1 - 1/256) = 1,019.996 runs of 2 bytes
	// (header varint(16) and the value); a bit-packed run starts after each run-length
	// one, 127/128 + 131,071 x 127/128 x 1/128 = 1,016.984 runs with a 2-byte header
	// (varint(2 x 130,048 / 1,016.98 + 1) = varint(257)). Dictionary: 2 one-byte values.
	// 130,048 + 2 x 1,016.984 + 2 x 1,019.996 + 2 = 134,123.96.
	rle := 1.0/128 + 131071.0/128*(1-1.0/256)
	bp := 127.0/128 + 131071*127.0/128/128
	want := 130048 + 2*bp + 2*rle + 2
	if got := DictionarySize(schema.Column{Type: "bool"}, 4e9, n).Bytes(); math.Abs(got-want) > 1e-6 {
		t.Errorf("bool: %v, want %v", got, want)
	}
	// Written plain (Apache Parquet PLAIN: booleans bit-packed, one bit each) the segment
	// is 2^20 / 8 = 131,072 bytes, less than its dictionary encoding: plain it is.
	if got := SegmentSize(schema.Column{Type: "bool"}, 4e9, n); got != (Size{Plain: 131072}) {
		t.Errorf("bool: %+v, want plain 131,072 bytes", got)
	}
	// Every value unique (int64, distinct defaults to the rows): the dictionary holds
	// about every value of the segment, 8 bytes each, and the 20-bit indexes come on
	// top; plain is 8 bytes a value, 8,388,608 bytes.
	if got := SegmentSize(schema.Column{Type: "int64"}, 4e9, n); got != (Size{Plain: 8 * n}) {
		t.Errorf("unique int64: %+v, want plain %d bytes", got, 8*n)
	}
	// Strings of 12 bytes with a 4-byte length prefix (PLAIN byte arrays): 16 bytes a value.
	if got := SegmentSize(schema.Column{Type: "string", AvgLength: 12, Distinct: 3e9}, 4e9, n); got != (Size{Plain: 16 * n}) {
		t.Errorf("unique strings: %+v, want plain %d bytes", got, 16*n)
	}
	// 1,000 values: 1,000 dictionary entries and 10-bit indexes are far below 8 bytes a row.
	if got := SegmentSize(schema.Column{Type: "int64", Distinct: 1000}, 4e9, n); got.Plain != 0 || got.Bytes() > 2*n {
		t.Errorf("1,000 values: %+v, want dictionary encoded", got)
	}
	// encoded_bytes overrides: 4e9 bytes over 4e9 rows is 1 byte a row.
	if got := SegmentBytes(schema.Column{Type: "int64", EncodedBytes: 4e9}, 4e9, n); got != n {
		t.Errorf("encoded_bytes: %v, want %d", got, n)
	}
	// Sorted, 10 values over 1e9 rows, n = 1e6: ds = 1 + (n-1)(d-1)/(R-1) = 1.008999991.
	// The segment meets one value (probability 0.991) or two (0.009). One value: a lone
	// run header, varint(2 x 10^6) = 3 bytes (21 bits). Two values, w = 1: two run-length
	// runs of 3 + 1 bytes, and the change falls inside a group with probability 7/8, a
	// bit-packed group of 1 byte with a 1-byte header: 8 + 0.875 x 2 = 9.75 bytes.
	// Dictionary 1.009 x 8 bytes.
	ds := 1 + (1e6-1)*9/(1e9-1)
	want = (2-ds)*3 + (ds-1)*9.75 + ds*8
	got := SegmentBytes(schema.Column{Type: "int64", Distinct: 10, Order: schema.Sorted}, 1e9, 1e6)
	if math.Abs(got-want) > 1e-9 {
		t.Errorf("sorted: %v, want %v", got, want)
	}
	// Clustered, 10 values in runs of R/d = 1e8 rows, n = 1e6: a value changes inside the
	// segment (n-1)/1e8 x (1 - 1/10) = 0.009 times, so the index costs as for sorted. The
	// segment meets 1 + (n-1)/1e8 = 1.01 of the table's 10 runs, each value in one run:
	// ds = 10(1 - (1 - 1.01/10)^1) = 1.01 values of 8 bytes.
	ch := (1e6 - 1) / 1e8 * 0.9
	want = (1-ch)*3 + ch*9.75 + (1+(1e6-1)/1e8)*8
	got = SegmentBytes(schema.Column{Type: "int64", Distinct: 10, Order: schema.Clustered}, 1e9, 1e6)
	if math.Abs(got-want) > 1e-9 {
		t.Errorf("clustered: %v, want %v", got, want)
	}
	// A single value needs no index bits: a lone run header, varint(2 x 2^20) = 4 bytes
	// (22 bits), plus its one 8-byte dictionary entry.
	if got := SegmentBytes(schema.Column{Type: "int64", Distinct: 1}, 4e9, n); got != 4+8 {
		t.Errorf("one value: %v, want 12", got)
	}
	if SegmentBytes(schema.Column{Type: "int64"}, 100, 0) != 0 {
		t.Error("an empty segment has bytes")
	}
	// The two parts add up to the whole.
	c := schema.Column{Type: "string", AvgLength: 10, Distinct: 5000, Order: schema.Clustered, RunLength: 40}
	if s := SegmentSize(c, 1e8, n); s.Index <= 0 || s.Dictionary <= 0 || s.Bytes() != SegmentBytes(c, 1e8, n) {
		t.Errorf("SegmentSize %+v does not add up to SegmentBytes %v", s, SegmentBytes(c, 1e8, n))
	}
}

func TestSampleDistinct(t *testing.T) {
	// Source: Yao (1977), "Approximating block accesses in database organizations": k of
	// N records, p = N/m per block, touch m(1 - prod_{i=1..k} (N-p-i+1)/(N-i+1)) of the m
	// blocks on average. Values are the blocks, rows the records. SampleDistinct takes the
	// product's factors at its midpoint: within 0.1% of the exact product.
	yao := func(m, N, k int) float64 {
		p := N / m
		prod := 1.0
		for i := 1; i <= k; i++ {
			prod *= float64(N-p-i+1) / float64(N-i+1)
		}
		return float64(m) * (1 - prod)
	}
	for _, c := range []struct{ m, N, k int }{
		{10, 100, 5}, {10, 100, 30}, {100, 1000, 100}, {1000, 2000, 500}, {500, 1000, 999}, {50, 100000, 2000},
		{1000, 1000, 300}, {10, 1000, 7}, {2, 1000, 3}, {100, 200, 60}, {1000, 3000, 1000}, {1000, 200000, 65536},
	} {
		got, want := SampleDistinct(float64(c.m), float64(c.k), float64(c.N)), yao(c.m, c.N, c.k)
		if math.Abs(got-want) > 0.001*want {
			t.Errorf("SampleDistinct(%d, %d, %d) = %.3f, Yao's product %.3f", c.m, c.k, c.N, got, want)
		}
	}
	// Exact at the ends: every row unique gives n; the whole table gives d.
	for _, c := range []struct{ d, n, total, want float64 }{
		{1000, 300, 1000, 300},
		{1e12, 1e6, 1e12, 1e6},
		{40, 500, 500, 40},
		{40, 600, 500, 40},
		{1, 50, 1000, 1},
		{7, 0, 100, 0},
	} {
		if got := SampleDistinct(c.d, c.n, c.total); math.Abs(got-c.want) > 1e-9*c.want {
			t.Errorf("SampleDistinct(%v, %v, %v) = %v, want %v", c.d, c.n, c.total, got, c.want)
		}
	}
	// Cardenas (1975) is the limit of an endless table: draws with replacement.
	if got, want := SampleDistinct(1000, 700, math.Inf(1)), ExpectedDistinct(1000, 700); got != want {
		t.Errorf("endless table: %v, Cardenas %v", got, want)
	}
	if got, want := SampleDistinct(1000, 700, 1e15), ExpectedDistinct(1000, 700); math.Abs(got-want) > 1e-6*want {
		t.Errorf("huge table: %v, Cardenas %v", got, want)
	}
	// Source: direct simulation — a table holding d values equally often, shuffled (seeded
	// PCG), the first n rows counted, averaged over trials.
	r := rand.New(rand.NewPCG(1977, 1))
	for _, c := range []struct{ d, total, n int }{{100, 200, 60}, {1000, 3000, 1000}, {5000, 5000, 1234}, {10, 1000, 7}} {
		rows := make([]int, c.total)
		for i := range rows {
			rows[i] = i % c.d
		}
		const trials = 300
		sum := 0
		seen := make([]int, c.d)
		for tr := 1; tr <= trials; tr++ {
			r.Shuffle(len(rows), func(a, b int) { rows[a], rows[b] = rows[b], rows[a] })
			for _, v := range rows[:c.n] {
				if seen[v] != tr {
					seen[v] = tr
					sum++
				}
			}
		}
		sim := float64(sum) / trials
		if got := SampleDistinct(float64(c.d), float64(c.n), float64(c.total)); math.Abs(got-sim) > 0.02*sim {
			t.Errorf("d=%d total=%d n=%d: SampleDistinct %.2f, simulation %.2f", c.d, c.total, c.n, got, sim)
		}
	}
}

func TestSegmentBytesBounds(t *testing.T) {
	r := rand.New(rand.NewPCG(7, 7))
	types := []string{"int64", "float64", "decimal", "datetime", "date", "bool", "string"}
	for range 5000 {
		rows := int64(1) + r.Int64N(1e15)
		n := 1 + r.Int64N(min(rows, 1<<30))
		c := schema.Column{Type: types[r.IntN(len(types))], AvgLength: r.Float64() * 200}
		if r.IntN(2) == 0 {
			c.Distinct = 1 + r.Int64N(rows)
		}
		if r.IntN(3) == 0 {
			c.RunLength = 1 + r.Int64N(1e6)
		}
		random := SegmentSize(c, rows, n)
		c.Order = schema.Clustered
		cl := SegmentSize(c, rows, n)
		c.Order = schema.Sorted
		so := SegmentSize(c, rows, n)
		for _, v := range []Size{random, cl, so} {
			if math.IsNaN(v.Bytes()) || math.IsInf(v.Bytes(), 0) || (v.Plain <= 0 && (v.Index <= 0 || v.Dictionary <= 0)) ||
				(v.Plain > 0 && (v.Index != 0 || v.Dictionary != 0 || v.Plain != PlainBytes(c, n))) {
				t.Fatalf("%+v rows=%d n=%d: non-finite or non-positive estimate %+v", c, rows, n, v)
			}
			// No index stream is longer than bit-packing every row at 64 bits with a
			// run header per group of 8.
			if v.Index > float64(n)*8+float64(n)/8*11+10 {
				t.Fatalf("%+v rows=%d n=%d: index %v above the bit-packing bound", c, rows, n, v.Index)
			}
		}
		// Runs of a thousand rows and more pay for their headers: such a clustered column
		// never encodes larger than the same rows in random order. (Short runs can: the
		// hybrid run-length encodes every group of 8 equal indexes, which costs more than
		// bit-packing it when the index is narrow; the reference encoder does the same.)
		c.Order = schema.Clustered
		if c.RunLength >= 1000 && cl.Bytes() > random.Bytes() {
			t.Fatalf("%+v rows=%d n=%d: clustered %v above random %v", c, rows, n, cl.Bytes(), random.Bytes())
		}
	}
}

func TestColumnBytesBySize(t *testing.T) {
	// Grouping segments by size must equal summing them one by one.
	const s = 1000
	parts := []Partition{{Rows: 2500}, {Rows: 300}, {Rows: 3000}, {Rows: 0}, {Rows: 300}, {Rows: 999}}
	var rows int64
	for _, p := range parts {
		rows += p.Rows
	}
	for _, c := range []schema.Column{{Type: "int64", Distinct: 700}, {Type: "string", AvgLength: 9}, {Type: "bool", Order: schema.Sorted}, {Type: "date", Distinct: 30, Order: schema.Clustered}} {
		var want float64
		for _, p := range parts {
			for r := p.Rows; r > 0; r -= s {
				want += SegmentBytes(c, rows, min(r, s))
			}
		}
		if got := ColumnBytes(c, parts, s); math.Abs(got-want) > 1e-12*want {
			t.Errorf("%+v: ColumnBytes %v, per segment %v", c, got, want)
		}
	}
	// 10^9 segments of 10^6 rows are one estimate times 10^9.
	c := schema.Column{Type: "float64"}
	if got, want := ColumnBytes(c, []Partition{{Rows: 1e15}}, 1e6), 1e9*SegmentBytes(c, 1e15, 1e6); got != want {
		t.Errorf("1e9 segments: %v, want %v", got, want)
	}
}

// A measured encoded_bytes B is spread over the segments in proportion to their rows
// (README, "Measured sizes"): the segments of any layout sum to B, whatever the segment
// size, and the plain-or-dictionary choice does not touch a measured size, even one
// above the plain width (here 20 bytes a row against 8).
func TestEncodedBytesSpread(t *testing.T) {
	parts := []Partition{{Rows: 2500, Open: true}, {Rows: 300}, {Rows: 3000}, {Rows: 999}}
	c := schema.Column{Type: "int64", EncodedBytes: 20 * 6799}
	for _, s := range []int64{7, 1000, 4096, 1 << 20} {
		if got := ColumnBytes(c, parts, s); math.Abs(got-20*6799) > 1e-6 {
			t.Errorf("segments of %d rows: %v bytes, want %d", s, got, 20*6799)
		}
	}
	if got := SegmentSize(c, 6799, 1000); got != (Size{Index: 20 * 1000}) {
		t.Errorf("a segment of 1,000 rows: %+v, want 20,000 bytes as measured", got)
	}
}

// columnBytes sizes a column's segments keeping the share of single-value index groups
// (it depends on the column alone): every segment's estimate is SegmentBytes' own to
// the bit, with and without the estimates kept across capacities, also where the
// declared rows are below a segment's (the distinct count then follows the segment).
func TestSharedGroupShareIsEachSegments(t *testing.T) {
	r := rand.New(rand.NewPCG(7, 8))
	for n := range 3000 {
		c, parts, rows, e := randomScan(r, 1)
		// Few distinct values, where single-value groups weigh, and any order.
		c.Distinct = []int64{0, 1, 2, 3, 7, 40, 1000, c.Distinct}[r.IntN(8)]
		c.Type = []string{"int64", "bool", c.Type}[r.IntN(3)]
		tableRows := rows
		switch n % 3 {
		case 0:
			tableRows = 1 + r.Int64N(max(rows, 1)) // declared below the partitions' sum
		case 1:
			tableRows = 1 + r.Int64N(50) // and below most segments' rows
		}
		var memo Smaller
		for _, m := range []*Smaller{nil, &memo, &memo} {
			k := 0
			columnBytes(c, tableRows, parts, e.SegmentRows, m, func(full int64, fb float64, rest int64, rb float64) {
				if full > 0 && fb != SegmentBytes(c, tableRows, e.SegmentRows) {
					t.Fatalf("case %d partition %d: full segment %v, SegmentBytes %v", n, k, fb, SegmentBytes(c, tableRows, e.SegmentRows))
				}
				if rest > 0 && rb != SegmentBytes(c, tableRows, rest) {
					t.Fatalf("case %d partition %d: segment of %d rows %v, SegmentBytes %v", n, k, rest, rb, SegmentBytes(c, tableRows, rest))
				}
				k++
			})
		}
	}
}
