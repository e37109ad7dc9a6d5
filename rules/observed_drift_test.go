package rules_test

import (
	"os"
	"testing"

	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

// The tolerances are the rule's settings: widened, the drift case's figures (+11.1% rows,
// +30% and -20% distinct, -6.7% listed rows) are accepted.
func TestObservedDriftTolerances(t *testing.T) {
	const path = "../testdata/rules/observed-drift/drift.yaml"
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	m, err := schema.Load(path, data, schema.DefaultLimits)
	if err != nil {
		t.Fatal(err)
	}
	count := func(rows, distinct float64) int {
		cfg := rules.Config{Today: caseToday, Observed: observedBeside(t, path), Rules: map[string]rules.RuleConfig{
			"observed-drift": {Params: map[string]float64{"rows_tolerance": rows, "distinct_tolerance": distinct}}}}
		n := 0
		for _, f := range rules.Run(m, cfg) {
			if f.Rule == "observed-drift" {
				n++
			}
		}
		return n
	}
	for _, c := range []struct {
		rows, distinct float64
		want           int
	}{{0.05, 0.1, 4}, {0.12, 0.1, 2}, {0.05, 0.25, 3}, {0.12, 0.31, 0}} {
		if got := count(c.rows, c.distinct); got != c.want {
			t.Errorf("rows_tolerance %v, distinct_tolerance %v: %d findings, want %d", c.rows, c.distinct, got, c.want)
		}
	}
	// Without an observed file the rule has nothing to compare.
	for _, f := range rules.Run(m, rules.Config{Today: caseToday}) {
		if f.Rule == "observed-drift" {
			t.Errorf("finding without --observed: %s", f.Message)
		}
	}
}
