package advisor

import (
	"testing"

	"github.com/scangate/scangate/internal/layout"
)

// The cost of a merge in the words every hint quotes, figures by hand: a year partition
// of 1.5G rows at 1M rows a second is 1,500 s, 3 day partitions of 12,328,770 rows on
// 8 workers 4.10959 s, so +1,495.9 s = +24.9 min.
func TestRoutineWords(t *testing.T) {
	today := layout.Rebuild{Partitions: 3, Rows: 12_328_770, Days: 3, Seconds: 4.10959}
	year := layout.Rebuild{Partitions: 1, Rows: 1_500_000_000, Days: 365.25, Seconds: 1500}
	if got, want := RoutineWords(today, year), "each routine refresh then rebuilds 365 days in 1 partition instead of 3 days in 3: 1.5G rows instead of 12.3M, +24.9 min"; got != want {
		t.Errorf("time: %q, want %q", got, want)
	}
	// Listed partitions have no days: 2 partitions of 90 rows instead of 2 of 70, 9 - 7 s.
	a, b := layout.Rebuild{Partitions: 2, Rows: 70, Seconds: 7}, layout.Rebuild{Partitions: 2, Rows: 90, Seconds: 9}
	if got, want := RoutineWords(a, b), "each routine refresh then rebuilds 2 partitions instead of 2: 90 rows instead of 70, +2 s"; got != want {
		t.Errorf("list: %q, want %q", got, want)
	}
	// No more rows, no words: a layout that keeps the window, or rebuilds less.
	if RoutineWords(today, today) != "" || RoutineWords(year, today) != "" {
		t.Error("a layout that rebuilds no more rows costs nothing")
	}
}
