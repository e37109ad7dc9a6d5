package schema

import (
	"encoding/json"
	"fmt"
	"math"
	"testing"
)

// The plain-digits shortcut of parseNumber must give what the exact rational path gives
// (math/big is the reference), at the limits and around int64's width.
func TestParseNumberShortcutMatchesExact(t *testing.T) {
	cases := []string{"0", "7", "007", "1000000", fmt.Sprint(MaxCount), fmt.Sprint(MaxCount + 1),
		fmt.Sprint(MaxBytes), fmt.Sprint(MaxBytes + 1), "999999999999999999", "9223372036854775807",
		"9223372036854775808", "123456789012345678901234567890"}
	for _, c := range cases {
		for _, limit := range []int64{MaxCount, MaxBytes} {
			n, err := parseNumber(c, limit, "bytes")
			m, err2 := exact(c, c, 1, limit, "bytes", true)
			if n != m || fmt.Sprint(err) != fmt.Sprint(err2) {
				t.Errorf("parseNumber(%q, %d) = %d, %v; exact gives %d, %v", c, limit, n, err, m, err2)
			}
		}
	}
}

// group and figure are total: the most negative int64 has no positive twin (negating it
// recursed forever), and a float beyond int64 is written, not wrapped.
func TestGroupAndFigureExtremes(t *testing.T) {
	for _, c := range []struct{ got, want string }{
		{group(math.MinInt64), "-9,223,372,036,854,775,808"}, {group(math.MaxInt64), "9,223,372,036,854,775,807"},
		{group(-1000), "-1,000"}, {group(0), "0"},
		{figure(1e15), "1,000,000,000,000,000"}, {figure(1e19), "1e+19"}, {figure(-1e300), "-1e+300"},
	} {
		if c.got != c.want {
			t.Errorf("got %q, want %q", c.got, c.want)
		}
	}
}

// The loader clamps cores and refresh_parallelism to the schema's maximum before
// converting; the two must not drift apart.
func TestMaxCoresMatchesSchema(t *testing.T) {
	var doc struct {
		Defs struct {
			Engine struct {
				Properties map[string]struct{ Maximum float64 } `json:"properties"`
			} `json:"engine"`
		} `json:"$defs"`
	}
	if err := json.Unmarshal(ManifestSchema(), &doc); err != nil {
		t.Fatal(err)
	}
	for _, k := range []string{"cores", "refresh_parallelism"} {
		if got := doc.Defs.Engine.Properties[k].Maximum; got != maxCores {
			t.Errorf("schema maximum of engine.%s is %v, maxCores is %v", k, got, maxCores)
		}
	}
	if got := wholeUpTo(json.Number("1e300"), maxCores); got != maxCores {
		t.Errorf("wholeUpTo(1e300) = %d", got)
	}
}
