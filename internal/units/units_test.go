package units

import (
	"math"
	"strings"
	"testing"
)

// Hand-checked formatting of the figures messages carry.
func TestFormat(t *testing.T) {
	for _, c := range []struct{ got, want string }{
		{Count(8 << 20), "8Mi"}, {Count(7_200_000_000), "7.2G"}, {Count(400_000), "400k"},
		{Count(1_460_000), "1.46M"}, {Count(999), "999"}, {Num(1460), "1,460"}, {Num(-909), "-909"},
		{Ms(1.5), "1.5"}, {Ms(1319.4), "1,319"}, {Pct(0.876), "88%"}, {Pct(0.0007), "0.1%"},
		{Size(1 << 30), "1 GiB"}, {Size(1536), "1.5 KiB"},
	} {
		if c.got != c.want {
			t.Errorf("got %q, want %q", c.got, c.want)
		}
	}
}

// Up to 10^15 (the row limit) a figure is written digit for digit; beyond it three
// significant digits and a power of ten. The most negative int64 has no positive twin:
// it once recursed forever, and it must neither recurse nor wrap.
func TestHugeFigures(t *testing.T) {
	for _, c := range []struct{ got, want string }{
		{Num(1e15), "1,000,000,000,000,000"}, {Num(-1e15), "-1,000,000,000,000,000"},
		{Count(1e15), "1000T"}, {Ms(1e15), "1,000,000,000,000,000"},
		{Num(1e15 + 1), "1e15"}, {Num(math.MaxInt64), "9.22e18"}, {Num(math.MinInt64), "-9.22e18"},
		{Count(math.MaxInt64), "9.22e18"}, {Count(math.MinInt64), "-9.22e18"},
		{Ms(1e20), "1e20"}, {Ms(-1.5e20), "-1.5e20"}, {Ms(math.MaxFloat64), "1.8e308"},
		{Signed(1e20), "+1e20"}, {Signed(-1e20), "-1e20"},
		{Pct(1e20), "1e22%"}, {Pct(-1e300), "-1e302%"}, {Pct(1e13), "1,000,000,000,000,000%"},
		{Size(1e300), "8.67e281 EiB"}, {Short(1234567e15), "1.23e21"},
		{Ms(math.Inf(1)), "inf"}, {Signed(math.Inf(1)), "+inf"}, {Ms(math.Inf(-1)), "-inf"},
		{Ms(math.NaN()), "NaN"}, {Signed(math.NaN()), "NaN"}, {Pct(math.NaN()), "NaN%"},
		{Size(math.Inf(1)), "inf B"}, {Size(math.NaN()), "NaN B"},
		{Ms(math.Copysign(0, -1)), "0.0"}, {Signed(math.Copysign(0, -1)), "+0.0"},
		{Short(math.Copysign(0, -1)), "0"}, {Pct(math.Copysign(0, -1)), "0%"},
	} {
		if c.got != c.want {
			t.Errorf("got %q, want %q", c.got, c.want)
		}
	}
}

// maxLen bounds every written figure: the longest is a grouped 10^15 with its sign and a
// unit (26 bytes); 32 leaves room without admitting a 300-digit float.
const maxLen = 32

// Every extreme value through every function: no panic, a bounded length, and the sign
// of the figure (a minus only for a negative figure, and one for every negative figure
// that does not round to zero).
func TestExtremesProperty(t *testing.T) {
	floats := []float64{
		math.Inf(1), math.Inf(-1), math.NaN(), math.MaxFloat64, -math.MaxFloat64,
		math.MinInt64, math.MaxInt64, 1e300, -1e300, 0, math.Copysign(0, -1),
		math.SmallestNonzeroFloat64, -math.SmallestNonzeroFloat64,
		1e15, -1e15, 1e15 + 2, 99.95, -99.95, 0.04, -0.04, 1023.99, 1<<60 + 1,
	}
	ints := []int64{math.MinInt64, math.MaxInt64, math.MinInt64 + 1, 0, -1, 1, 1e15, -1e15, 1e15 + 1, 1 << 62, 1023 << 40}
	for _, v := range ints {
		floats = append(floats, float64(v))
	}
	type fn struct {
		name string
		f    func(float64) string
	}
	fns := []fn{{"Ms", Ms}, {"Signed", Signed}, {"Pct", Pct}, {"Size", Size}, {"Short", Short}}
	for _, v := range ints {
		for _, f := range []fn{
			{"Count", func(float64) string { return Count(v) }},
			{"Num", func(float64) string { return Num(v) }},
			{"Capacity", func(float64) string { return Capacity(v) }},
		} {
			checkFigure(t, f.name, float64(v), f.f(0))
		}
	}
	for _, v := range floats {
		for _, f := range fns {
			checkFigure(t, f.name, v, f.f(v))
		}
	}
}

func checkFigure(t *testing.T, name string, v float64, s string) {
	t.Helper()
	if s == "" || len(s) > maxLen {
		t.Errorf("%s(%g) = %q: want 1 to %d bytes", name, v, s, maxLen)
	}
	body := strings.TrimPrefix(s, "+")
	neg := strings.HasPrefix(body, "-")
	switch {
	case math.IsNaN(v):
		if !strings.HasPrefix(s, "NaN") {
			t.Errorf("%s(NaN) = %q", name, s)
		}
	case neg && !(v < 0):
		t.Errorf("%s(%g) = %q: a minus for a figure that is not negative", name, v, s)
	case v < 0 && !neg && !zeroFigure(s):
		t.Errorf("%s(%g) = %q: a negative figure lost its sign", name, v, s)
	case strings.HasPrefix(s, "+") && v < 0:
		t.Errorf("%s(%g) = %q: a plus for a negative figure", name, v, s)
	}
}

// zeroFigure reports whether s writes zero: a tiny negative may round to it.
func zeroFigure(s string) bool {
	return !strings.ContainsAny(s, "123456789")
}

// The conversions saturate where int64(x) is left to the implementation (the Go
// specification, "Conversions between numeric types").
func TestIntConversions(t *testing.T) {
	for _, c := range []struct {
		x    float64
		want int64
	}{
		{math.NaN(), 0}, {math.Inf(1), math.MaxInt64}, {math.Inf(-1), math.MinInt64},
		{math.MaxFloat64, math.MaxInt64}, {-math.MaxFloat64, math.MinInt64},
		{1 << 63, math.MaxInt64}, {-(1 << 63), math.MinInt64}, {1e20, math.MaxInt64},
		{math.Nextafter(1<<63, 0), 1<<63 - 1024}, {2.9, 2}, {-2.9, -2}, {math.Copysign(0, -1), 0},
		{math.SmallestNonzeroFloat64, 0}, {1e15, 1e15},
	} {
		if got := Int64(c.x); got != c.want {
			t.Errorf("Int64(%g) = %d, want %d", c.x, got, c.want)
		}
		if got := Int(c.x); int64(got) != c.want && math.MaxInt == math.MaxInt64 {
			t.Errorf("Int(%g) = %d, want %d", c.x, got, c.want)
		}
	}
}

func TestSeconds(t *testing.T) {
	// 1 min = 60 s, 1 h = 3,600 s (SI accepted units).
	for _, c := range []struct {
		s    float64
		want string
	}{{4.10959, "4.11 s"}, {59.9, "59.9 s"}, {60, "1 min"}, {1496, "24.9 min"}, {5400, "1.5 h"}, {-90, "-1.5 min"}} {
		if got := Seconds(c.s); got != c.want {
			t.Errorf("Seconds(%v) = %q, want %q", c.s, got, c.want)
		}
	}
}
