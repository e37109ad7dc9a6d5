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

func TestSegmentBytesWorked(t *testing.T) {
	const n = 1 << 20
	// Random bool: 2 values, 1 bit each: 2^20/8 = 131,072 bytes + 2 one-byte dictionary entries.
	if got := SegmentBytes(schema.Column{Type: "bool"}, 4e9, n); got != 131074 {
		t.Errorf("bool: %v, want 131074", got)
	}
	// encoded_bytes overrides: 4e9 bytes over 4e9 rows is 1 byte a row.
	if got := SegmentBytes(schema.Column{Type: "int64", EncodedBytes: 4e9}, 4e9, n); got != n {
		t.Errorf("encoded_bytes: %v, want %d", got, n)
	}
	// Sorted, 10 values over 1e9 rows, n = 1e6: ds = min(n, d, n*d/R + 1) = 1.01, w = 1;
	// a run is ceil(1e6/1.01) = 990,100 rows, a 20-bit number, 3 varint bytes; runs cost
	// 1.01*(1 + 3) = 4.04 bytes, the dictionary 1.01*8 = 8.08: 12.12 bytes.
	got := SegmentBytes(schema.Column{Type: "int64", Distinct: 10, Order: schema.Sorted}, 1e9, 1e6)
	if math.Abs(got-12.12) > 1e-9 {
		t.Errorf("sorted: %v, want 12.12", got)
	}
	// Clustered, 10 values in runs of R/d = 1e8 rows, n = 1e6: one run, ds = 1, w = 1;
	// the run costs 1 + varint(1e6) = 1 + 3 bytes, the dictionary 8: 12 bytes.
	got = SegmentBytes(schema.Column{Type: "int64", Distinct: 10, Order: schema.Clustered}, 1e9, 1e6)
	if got != 12 {
		t.Errorf("clustered: %v, want 12", got)
	}
	if SegmentBytes(schema.Column{Type: "int64"}, 100, 0) != 0 {
		t.Error("an empty segment has bytes")
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
		random := SegmentBytes(c, rows, n)
		c.Order = schema.Clustered
		cl := SegmentBytes(c, rows, n)
		c.Order = schema.Sorted
		so := SegmentBytes(c, rows, n)
		for _, v := range []float64{random, cl, so} {
			if math.IsNaN(v) || math.IsInf(v, 0) || v <= 0 {
				t.Fatalf("%+v rows=%d n=%d: non-finite or non-positive estimate %v", c, rows, n, v)
			}
		}
		// Spec: a clustered column never encodes worse than bit-packing.
		if cl > random {
			t.Fatalf("%+v rows=%d n=%d: clustered %v above random %v", c, rows, n, cl, random)
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
