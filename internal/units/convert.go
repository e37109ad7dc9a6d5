package units

import "math"

// Go leaves a float-to-integer conversion out of range (NaN, infinities, beyond 2^63)
// to the implementation: on amd64 it yields the most negative integer, a wrap-around
// that once printed a huge fixed cost as -9,223,372,036,854,775,808 ms. Every float
// that becomes an integer goes through these instead.

// Int64 truncates x toward zero like int64(x), saturating at the int64 range; NaN is 0.
func Int64(x float64) int64 {
	switch {
	case math.IsNaN(x):
		return 0
	case x >= math.MaxInt64: // float64(MaxInt64) is 2^63, one past the range
		return math.MaxInt64
	case x <= math.MinInt64:
		return math.MinInt64
	}
	return int64(x)
}

// Int truncates x toward zero like int(x), saturating at the int range; NaN is 0.
func Int(x float64) int {
	switch {
	case math.IsNaN(x):
		return 0
	case x >= math.MaxInt: // rounds to 2^63 where int has 64 bits; exact with 32
		return math.MaxInt
	case x <= math.MinInt:
		return math.MinInt
	}
	return int(x)
}
