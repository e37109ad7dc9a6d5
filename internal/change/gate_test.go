package change

import (
	"math"
	"strings"
	"testing"

	"github.com/scangate/scangate/rules"
)

// NewGate keeps only the limits given, copies them, and refuses ones no change could
// be held to, naming the flag.
func TestNewGate(t *testing.T) {
	ms, segs := 12.5, int64(3)
	g, err := NewGate(&ms, &segs)
	if err != nil || g.MaxAddedMs == nil || *g.MaxAddedMs != 12.5 || g.MaxAddedSegments == nil || *g.MaxAddedSegments != 3 || g.FailOnNew != 0 {
		t.Fatalf("NewGate(12.5, 3) = %+v, %v", g, err)
	}
	ms, segs = 99, 99 // the gate holds copies, not the flags' variables
	if *g.MaxAddedMs != 12.5 || *g.MaxAddedSegments != 3 {
		t.Errorf("the gate follows the flags' variables: %v, %v", *g.MaxAddedMs, *g.MaxAddedSegments)
	}
	if g, err := NewGate(nil, nil); err != nil || g.MaxAddedMs != nil || g.MaxAddedSegments != nil {
		t.Errorf("NewGate(nil, nil) = %+v, %v; want no limits", g, err)
	}
	zero, zeroSegs := 0.0, int64(0)
	if g, err := NewGate(&zero, &zeroSegs); err != nil || *g.MaxAddedMs != 0 || *g.MaxAddedSegments != 0 {
		t.Errorf("zero limits (nothing may be added) = %+v, %v", g, err)
	}
	for _, c := range []struct {
		ms   float64
		segs int64
		want string
	}{
		{-1, 0, "--max-added-ms -1: give a number of milliseconds, 0 or more"},
		{math.NaN(), 0, "--max-added-ms NaN: give a number of milliseconds, 0 or more"},
		{math.Inf(1), 0, "--max-added-ms +Inf: give a number of milliseconds, 0 or more"},
		{0, -2, "--max-added-segments -2: give a number of segments, 0 or more"},
		{-1, -2, "--max-added-ms -1: give a number of milliseconds, 0 or more"}, // ms first, as diff always said
	} {
		if _, err := NewGate(&c.ms, &c.segs); err == nil || err.Error() != c.want {
			t.Errorf("NewGate(%v, %d) error %v, want %q", c.ms, c.segs, err, c.want)
		}
	}
}

// A new finding's breach names the model of its table, and a table breach is labelled
// with its model only when another model has a table of that name.
func TestGateBreachModels(t *testing.T) {
	base := side(t, "base", []string{"a.yaml", "b.yaml"}, manifest("sales", "1.5", ordersNone+stores), manifest("stock", "1.5", stores))
	head := side(t, "head", []string{"a.yaml", "b.yaml"}, manifest("sales", "1.5", ordersEven20+stores), manifest("stock", "1.5", stores))
	limit := 1.0
	breaches := Gate{MaxAddedMs: &limit, FailOnNew: rules.Warning}.Check(Compare(base, head))
	var kinds []string
	for _, b := range breaches {
		kinds = append(kinds, b.Kind+"/"+b.Model+"/"+b.Table)
		if b.Kind == "added-ms" && !strings.HasPrefix(b.Message, "orders adds ") {
			t.Errorf("orders is the only table of its name, labelled: %q", b.Message)
		}
	}
	if got := strings.Join(kinds, " "); got != "added-ms/sales/orders new-finding/sales/orders" {
		t.Errorf("breaches %s", got)
	}
}
