package rules

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// count writes a row or value count the way manifests write it: 8Mi, 7.2G, 400k.
func count(n int64) string {
	for _, u := range []struct {
		s string
		f int64
	}{{"Ti", 1 << 40}, {"Gi", 1 << 30}, {"Mi", 1 << 20}} {
		if n >= u.f && n%u.f == 0 && n/u.f < 1024 {
			return fmt.Sprintf("%d%s", n/u.f, u.s)
		}
	}
	for _, u := range []struct {
		s string
		f float64
	}{{"T", 1e12}, {"G", 1e9}, {"M", 1e6}, {"k", 1e3}} {
		if float64(n) >= u.f {
			return short(float64(n)/u.f) + u.s
		}
	}
	return strconv.FormatInt(n, 10)
}

// short keeps three significant digits and drops trailing zeros: 7.2, 40, 1.46.
func short(v float64) string {
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

// num writes an integer with thousands separators: 1,460.
func num(n int64) string {
	if n < 0 {
		return "-" + num(-n)
	}
	s := strconv.FormatInt(n, 10)
	for i := len(s) - 3; i > 0; i -= 3 {
		s = s[:i] + "," + s[i:]
	}
	return s
}

// ms writes milliseconds: one decimal below 100, whole and grouped above.
func ms(x float64) string {
	if math.Abs(x) < 100 {
		return strconv.FormatFloat(x, 'f', 1, 64)
	}
	return num(int64(math.Round(x)))
}

// pct writes a fraction as a whole percentage.
func pct(f float64) string {
	if f > 0 && f < 0.1 {
		return strconv.FormatFloat(f*100, 'f', 1, 64) + "%"
	}
	return num(int64(math.Round(min(f*100, 1e15)))) + "%"
}

// size writes bytes in binary units: 1.5 GiB.
func size(b float64) string {
	units := []string{"B", "KiB", "MiB", "GiB", "TiB", "PiB", "EiB"}
	i := 0
	for b >= 1024 && i < len(units)-1 {
		b /= 1024
		i++
	}
	return short(b) + " " + units[i]
}

// plural picks the singular or plural word for n.
func plural(n int64, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}

// Thousands, Millis, Percent and Rows format figures the way findings do, for reports.
func Thousands(n int64) string { return num(n) }

// Millis writes milliseconds as findings do: one decimal below 100.
func Millis(x float64) string { return ms(x) }

// Percent writes a fraction as a percentage.
func Percent(f float64) string { return pct(f) }

// Rows writes a count with the manifest's suffixes: 8Mi, 7.2G.
func Rows(n int64) string { return count(n) }

// Bytes writes a byte size in binary units as findings do: 1.5 GiB.
func Bytes(b float64) string { return size(b) }
