package units

import (
	"math"
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

// The most negative count has no positive twin in int64: it is written through uint64,
// not by negating it (which recursed forever).
func TestNumExtremes(t *testing.T) {
	if got := Num(math.MinInt64); got != "-9,223,372,036,854,775,808" {
		t.Errorf("Num(MinInt64) = %q", got)
	}
	if got := Num(math.MaxInt64); got != "9,223,372,036,854,775,807" {
		t.Errorf("Num(MaxInt64) = %q", got)
	}
}
