package schema

import (
	"encoding/json"
	"fmt"
	"math"
	"strconv"
)

// Range is the values one rule setting of the project config may take: Min to Max,
// both included unless MinExclusive, and whole numbers only when Integer. The rules
// declare it (rules.Param); the config schema is generated from it and the loader
// words its errors with it.
type Range struct {
	Min, Max     float64
	MinExclusive bool
	Integer      bool
}

// Allows reports whether v is in the range.
func (r Range) Allows(v float64) bool {
	if math.IsNaN(v) || v > r.Max || v < r.Min || (r.MinExclusive && v == r.Min) {
		return false
	}
	return !r.Integer || v == math.Trunc(v)
}

// Words says the range as a fix: "a whole number from 1 to 240", "a number above 0 and
// at most 1".
func (r Range) Words() string {
	kind := "a number"
	if r.Integer {
		kind = "a whole number"
	}
	if r.MinExclusive {
		return fmt.Sprintf("%s above %s and at most %s", kind, boundWords(r.Min), boundWords(r.Max))
	}
	return fmt.Sprintf("%s from %s to %s", kind, boundWords(r.Min), boundWords(r.Max))
}

// boundWords writes a bound plainly: 0.01, 240, 1,000,000.
func boundWords(v float64) string {
	if v == math.Trunc(v) && math.Abs(v) < 1e15 {
		return group(int64(v))
	}
	return strconv.FormatFloat(v, 'g', -1, 64)
}

// SettingProblem is the message for a rule setting out of its range, the same from the
// schema check and from the rules: it names the rule, the setting, the value as written
// and the values allowed.
func SettingProblem(rule, setting, value string, r Range) string {
	return fmt.Sprintf("%s is out of range: %s of rule %s is %s", value, setting, rule, r.Words())
}

// rangeOf reads a setting's range back from its generated schema object; ok is false
// when the object is not a bounded number.
func rangeOf(obj map[string]any) (Range, bool) {
	var r Range
	bound := func(key string) (float64, bool) {
		n, ok := obj[key].(json.Number)
		if !ok {
			return 0, false
		}
		f, err := n.Float64()
		return f, err == nil
	}
	var okMin, okMax bool
	if r.Min, okMin = bound("minimum"); !okMin {
		r.Min, okMin = bound("exclusiveMinimum")
		r.MinExclusive = okMin
	}
	r.Max, okMax = bound("maximum")
	r.Integer = obj["type"] == "integer"
	return r, okMin && okMax
}

// valueWords writes a decoded value as the file has it: 1e300 stays 1e300.
func valueWords(v any) string {
	switch x := v.(type) {
	case json.Number:
		return x.String()
	case string:
		return strconv.Quote(x)
	case map[string]any:
		return "a mapping"
	case []any:
		return "a list"
	case nil:
		return "empty"
	}
	return fmt.Sprint(v)
}
