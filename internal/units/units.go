// Package units writes figures one way everywhere: counts as manifests write them,
// milliseconds, percentages and byte sizes. Findings, plans, diffs and every report
// word their numbers through it, so two screens never print one figure two ways.
package units

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// Every function here is total: any int64 or float64, NaN and infinities included, gives
// a short string (at most 26 bytes) whose sign is the figure's. Figures up to exactLimit
// are written digit for digit; beyond it, or when not finite, see bounded.

// exactLimit is the largest magnitude written digit for digit: 10^15, the most rows or
// distinct values a manifest may declare (schema.MaxCount). A larger figure can only come
// from extreme settings (10^15 segments x 100,000 ms), and its 19 digits would say no
// more than three significant ones and a power of ten: 1.2e20.
const exactLimit = 1e15

// bounded writes v when it is beyond exactLimit or not finite: three significant digits
// and a power of ten (1e20, -9.22e18, 1.8e308), or inf, -inf, NaN. The arithmetic keeps
// its figures finite; the words exist so that no input can make a format fail or lie.
func bounded(v float64) (string, bool) {
	switch {
	case math.IsNaN(v):
		return "NaN", true
	case math.IsInf(v, 1):
		return "inf", true
	case math.IsInf(v, -1):
		return "-inf", true
	case math.Abs(v) <= exactLimit:
		return "", false
	}
	mant, exp, _ := strings.Cut(strconv.FormatFloat(v, 'e', 2, 64), "e")
	if strings.Contains(mant, ".") {
		mant = strings.TrimRight(strings.TrimRight(mant, "0"), ".")
	}
	// exp is "+NN" or "+NNN": beyond 10^15 the power is never negative.
	return mant + "e" + strings.TrimLeft(exp, "+0"), true
}

// Count writes a row or value count the way manifests write it: 8Mi, 7.2G, 400k.
func Count(n int64) string {
	if s, ok := bounded(float64(n)); ok {
		return s
	}
	for _, u := range []struct {
		s string
		f int64
	}{{"Ti", 1 << 40}, {"Gi", 1 << 30}, {"Mi", 1 << 20}} {
		if n >= u.f && n%u.f == 0 && n/u.f < 1024 {
			return strconv.FormatInt(n/u.f, 10) + u.s
		}
	}
	for _, u := range []struct {
		s string
		f float64
	}{{"T", 1e12}, {"G", 1e9}, {"M", 1e6}, {"k", 1e3}} {
		if float64(n) >= u.f {
			return Short(float64(n)/u.f) + u.s
		}
	}
	return strconv.FormatInt(n, 10)
}

// Short keeps three significant digits and drops trailing zeros: 7.2, 40, 1.46.
func Short(v float64) string {
	if s, ok := bounded(v); ok {
		return s
	}
	if v == 0 {
		v = 0 // -0 writes as 0
	}
	prec := 2
	switch {
	case v >= 100:
		prec = 0
	case v >= 10:
		prec = 1
	}
	s := strconv.FormatFloat(v, 'f', prec, 64)
	if strings.Contains(s, ".") {
		s = strings.TrimRight(strings.TrimRight(s, "0"), ".")
	}
	return s
}

// Num writes an integer with thousands separators: 1,460.
func Num(n int64) string {
	if s, ok := bounded(float64(n)); ok {
		return s
	}
	if n < 0 {
		// Through uint64: -n overflows for the most negative int64.
		return "-" + group(strconv.FormatUint(uint64(0)-uint64(n), 10))
	}
	return group(strconv.FormatInt(n, 10))
}

// group puts a comma between every three digits from the right.
func group(s string) string {
	for i := len(s) - 3; i > 0; i -= 3 {
		s = s[:i] + "," + s[i:]
	}
	return s
}

// Ms writes milliseconds: one decimal below 100, whole and grouped above.
func Ms(x float64) string {
	if s, ok := bounded(x); ok {
		return s
	}
	if x == 0 {
		x = 0 // -0 writes as 0.0, so Signed never writes +-0.0
	}
	if math.Abs(x) < 100 {
		return strconv.FormatFloat(x, 'f', 1, 64)
	}
	return Num(int64(math.Round(x))) // |x| <= exactLimit: exact in int64
}

// Signed writes a change in milliseconds with its sign: +1.5, -642.
func Signed(x float64) string {
	if x >= 0 {
		return "+" + Ms(x)
	}
	return Ms(x)
}

// Pct writes a fraction as a whole percentage.
func Pct(f float64) string {
	if f > 0 && f < 0.1 {
		return strconv.FormatFloat(f*100, 'f', 1, 64) + "%"
	}
	p := f * 100
	if s, ok := bounded(p); ok {
		return s + "%"
	}
	return Num(int64(math.Round(p))) + "%" // |p| <= exactLimit: exact in int64
}

// Size writes bytes in binary units: 1.5 GiB.
func Size(b float64) string {
	if math.IsNaN(b) || math.IsInf(b, 0) {
		s, _ := bounded(b)
		return s + " B"
	}
	units := []string{"B", "KiB", "MiB", "GiB", "TiB", "PiB", "EiB"}
	i := 0
	for b >= 1024 && i < len(units)-1 {
		b /= 1024
		i++
	}
	return Short(b) + " " + units[i]
}

// Plural picks the singular or plural word for n.
func Plural(n int64, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}

// Capacity writes a segment capacity exactly, as a manifest would: 8Mi, 128Ki, 1000.
func Capacity(n int64) string {
	if n > 0 && n < 1<<20 && n%1024 == 0 {
		return fmt.Sprintf("%dKi", n/1024)
	}
	return Count(n)
}

// Seconds writes a duration: 4.1 s below a minute, 25 min below an hour, then 1.5 h.
func Seconds(x float64) string {
	a := math.Abs(x)
	switch {
	case a < 60 || math.IsNaN(a) || math.IsInf(a, 0):
		return Short(x) + " s"
	case a < 3600:
		return Short(x/60) + " min"
	}
	return Short(x/3600) + " h"
}
