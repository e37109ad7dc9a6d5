package report

import (
	"testing"

	"github.com/scangate/scangate/internal/change"
)

// The deltas are written with their sign and the precision the findings use.
func TestDiffFormatting(t *testing.T) {
	fill := func(b, a float64) change.TableChange {
		return change.TableChange{Before: &change.Figures{Fill: b}, After: &change.Figures{Fill: a}}
	}
	for _, c := range []struct{ got, want string }{
		{signedMs(1240), "+1,240"}, // whole and grouped from 100 ms
		{signedMs(-1.5), "-1.5"},   // one decimal below 100 ms
		{signedMs(0.0000001), "0"}, // rounded to 6 decimals first
		{signedCount(730), "+730"},
		{signedCount(-12), "-12"},
		{signedCount(0), "0"},
		{signedBytes(1.5 * (1 << 30)), "+1.5 GiB"},
		{signedBytes(-300 * (1 << 20)), "-300 MiB"},
		{points(fill(1, 10000.0/12000)), "-17 pp"}, // 83.33% - 100% = -16.67 points
		{points(fill(0.5, 0.545)), "+4.5 pp"},      // one decimal below 10 points
		{points(fill(0.5, 0.5)), "0 pp"},
		{points(change.TableChange{After: &change.Figures{Fill: 1}}), none},
		{cell(metric{before: "24", after: "377", delta: "+353"}), "24 → 377 (+353)"},
		{cell(metric{before: "24", after: "24", delta: "0"}), "24"},
		{cell(metric{before: none, after: "1", delta: "+1"}), "– → 1 (+1)"},
		{upperFirst("adds 3.0 ms"), "Adds 3.0 ms"},
	} {
		if c.got != c.want {
			t.Errorf("got %q, want %q", c.got, c.want)
		}
	}
}
