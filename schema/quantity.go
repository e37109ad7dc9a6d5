package schema

import (
	"fmt"
	"math/big"
	"strconv"
	"strings"
)

// MaxCount is the largest row or value count a manifest may declare. The arithmetic is
// checked for overflow up to here; larger tables do not exist in practice.
const MaxCount int64 = 1_000_000_000_000_000

// MaxBytes is the largest byte size a manifest may declare (1 EiB).
const MaxBytes int64 = 1 << 60

var countSuffixes = []struct {
	suffix string
	factor int64
}{
	// Two-letter suffixes first, so "Mi" is not read as "M".
	{"Ki", 1 << 10}, {"Mi", 1 << 20}, {"Gi", 1 << 30}, {"Ti", 1 << 40},
	{"k", 1e3}, {"M", 1e6}, {"G", 1e9}, {"T", 1e12},
}

var byteUnits = []struct {
	suffix string
	factor int64
}{
	{"KiB", 1 << 10}, {"MiB", 1 << 20}, {"GiB", 1 << 30}, {"TiB", 1 << 40}, {"PiB", 1 << 50},
	{"kB", 1e3}, {"KB", 1e3}, {"MB", 1e6}, {"GB", 1e9}, {"TB", 1e12}, {"PB", 1e15},
	{"B", 1},
}

// ParseCount reads a count: "7200000", "7.2G", "8Mi". The result is exact: the decimal
// mantissa is multiplied as a rational number, and a result that is not whole is an error.
func ParseCount(s string) (int64, error) {
	mant, factor := s, int64(1)
	for _, u := range countSuffixes {
		if strings.HasSuffix(s, u.suffix) {
			mant, factor = strings.TrimSuffix(s, u.suffix), u.factor
			break
		}
	}
	return exact(s, mant, factor, MaxCount, "rows or values", false)
}

// ParseBytes reads a byte size: "500MB", "64GiB", or a whole number of bytes.
func ParseBytes(s string) (int64, error) {
	mant, factor := s, int64(1)
	for _, u := range byteUnits {
		if strings.HasSuffix(s, u.suffix) {
			mant, factor = strings.TrimSuffix(s, u.suffix), u.factor
			break
		}
	}
	return exact(s, mant, factor, MaxBytes, "bytes", false)
}

// parseNumber reads a plain YAML or JSON number (exponents allowed) as a whole count.
func parseNumber(num string, limit int64, unit string) (int64, error) {
	// Plain digits, the common case, need no rational arithmetic: 18 digits fit int64.
	if len(num) > 0 && len(num) <= 18 && strings.Trim(num, "0123456789") == "" {
		if n, err := strconv.ParseInt(num, 10, 64); err == nil && n <= limit {
			return n, nil
		}
	}
	return exact(num, num, 1, limit, unit, true)
}

func exact(whole, mant string, factor, limit int64, unit string, allowExp bool) (int64, error) {
	notQuantity := func() error {
		if unit == "bytes" {
			return fmt.Errorf("%q is not a byte size; write digits with a unit, e.g. \"500MB\" or \"64GiB\"", whole)
		}
		return fmt.Errorf("%q is not a quantity; write digits with an optional suffix, e.g. \"8Mi\" or \"7.2G\"", whole)
	}
	if mant == "" || strings.ContainsAny(mant, "_/ ") || (!allowExp && !plainDecimal(mant)) {
		return 0, notQuantity()
	}
	var r big.Rat
	if _, ok := r.SetString(mant); !ok {
		return 0, notQuantity()
	}
	r.Mul(&r, new(big.Rat).SetInt64(factor))
	if !r.IsInt() {
		return 0, fmt.Errorf("%q is %s, not a whole number of %s", whole, r.FloatString(3), unit)
	}
	n := r.Num()
	if n.Sign() < 0 {
		return 0, fmt.Errorf("%q is negative; it must be >= 0", whole)
	}
	if n.Cmp(big.NewInt(limit)) > 0 {
		return 0, fmt.Errorf("%q is above the limit of %s %s", whole, group(limit), unit)
	}
	return n.Int64(), nil
}

// plainDecimal reports whether s is digits with an optional fraction, as the schema's
// pattern allows; big.Rat alone would also read "0x10", "0b11", "1p3" and "5.".
func plainDecimal(s string) bool {
	whole, frac, dot := strings.Cut(s, ".")
	return digits(whole) && (!dot || digits(frac))
}

func digits(s string) bool {
	for _, c := range s {
		if c < '0' || c > '9' {
			return false
		}
	}
	return s != ""
}

// group writes n with thousands separators: 1,000,000.
func group(n int64) string {
	sign := ""
	if n < 0 {
		sign = "-" // through uint64: -n overflows for the most negative int64
	}
	s := strconv.FormatUint(abs(n), 10)
	for i := len(s) - 3; i > 0; i -= 3 {
		s = s[:i] + "," + s[i:]
	}
	return sign + s
}

func abs(n int64) uint64 {
	if n < 0 {
		return uint64(0) - uint64(n)
	}
	return uint64(n)
}

// figure writes a whole number the schema accepted for a message: grouped while int64
// holds it exactly (up to MaxCount), beyond that in three significant digits (1e+19).
func figure(f float64) string {
	if f >= -float64(MaxCount) && f <= float64(MaxCount) {
		return group(int64(f))
	}
	return strconv.FormatFloat(f, 'g', 3, 64)
}

// ParseCapacities reads a comma-separated list of segment capacities, counts as
// manifests write them ("8Mi,16Mi"); "" is no list.
func ParseCapacities(s string) ([]int64, error) {
	if s == "" {
		return nil, nil
	}
	var out []int64
	for _, part := range strings.Split(s, ",") {
		part = strings.TrimSpace(part)
		n, err := ParseCount(part)
		if err != nil {
			return nil, err
		}
		if n < 1 {
			return nil, fmt.Errorf("a segment holds at least 1 row, got %q", part)
		}
		out = append(out, n)
	}
	return out, nil
}
