package rules

import (
	"errors"
	"math"
	"strings"
	"testing"
	"time"

	"github.com/scangate/scangate/schema"
)

// Every setting has a range that holds its default, so a rule never runs with a value
// its own code was not written for.
func TestEveryParamHasARange(t *testing.T) {
	for _, r := range All() {
		for _, p := range r.Params {
			if !(p.Max > p.Min) || !p.Allows(p.Default) {
				t.Errorf("%s %s: range %+v, default %v: give it a range that holds the default", r.ID, p.Name, p.Range, p.Default)
			}
		}
	}
}

// ConfigFrom refuses a value outside the range even when the schema check was not run
// (a config built in code), at the setting's position, naming rule, setting, value and
// range; values at the ends of a range are taken.
func TestConfigFromRefusesOutOfRange(t *testing.T) {
	pos := schema.Pos{Line: 4, Col: 37}
	conf := func(rule, name string, v float64) *schema.ProjectConfig {
		return &schema.ProjectConfig{File: ".scangate.yaml", Rules: map[string]schema.RuleSettings{
			rule: {Params: map[string]float64{name: v}, ParamPos: map[string]schema.Pos{name: pos}, Pos: schema.Pos{Line: 4, Col: 3}},
		}}
	}
	today := time.Date(2026, 1, 1, 0, 0, 0, 0, time.UTC)
	for _, c := range []struct {
		rule, name string
		v          float64
		want       string // "" when taken
	}{
		{budgetForecastID, "horizon_months", 100_000_000, "100000000 is out of range: horizon_months of rule budget-forecast is a whole number from 1 to 240"},
		{budgetForecastID, "horizon_months", -5, "-5 is out of range"},
		{budgetForecastID, "horizon_months", 0.5, "0.5 is out of range"},
		{budgetForecastID, "horizon_months", 1e300, "1e+300 is out of range"},
		{budgetForecastID, "horizon_months", math.NaN(), "NaN is out of range"},
		{budgetForecastID, "horizon_months", 1, ""},
		{budgetForecastID, "horizon_months", 240, ""},
		{scanOverheadID, "warn_share", 0, "0 is out of range: warn_share of rule scan-overhead is a number above 0 and at most 1"},
		{scanOverheadID, "warn_share", 1, ""},
		{rowCountMismatchID, "tolerance", 1.01, "1.01 is out of range"},
		{partitionCountID, "limit", 1_000_001, "1000001 is out of range: limit of rule partition-count is a whole number from 1 to 1,000,000"},
		{truncatedSegmentsID, "warn_min", 0, "0 is out of range"},
		{truncatedSegmentsID, "warn_min", 2.5, "2.5 is out of range"},
	} {
		cfg, err := ConfigFrom(conf(c.rule, c.name, c.v), today)
		if c.want == "" {
			if err != nil || cfg.Value(c.rule, paramOf(mustLookup(t, c.rule), c.name)) != c.v {
				t.Errorf("%s %s %v: %v; want it taken", c.rule, c.name, c.v, err)
			}
			continue
		}
		var se *schema.Error
		if !errors.As(err, &se) || len(se.Problems) != 1 {
			t.Errorf("%s %s %v: error %v; want one problem", c.rule, c.name, c.v, err)
			continue
		}
		p := se.Problems[0]
		if p.Pos != pos || p.Path != "/rules/"+c.rule+"/"+c.name || !strings.Contains(p.Message, c.want) {
			t.Errorf("%s %s %v: %+v; want %s at %v", c.rule, c.name, c.v, p, c.want, pos)
		}
		if _, set := cfg.Rules[c.rule].Params[c.name]; set {
			t.Errorf("%s %s %v: the refused value was kept", c.rule, c.name, c.v)
		}
	}
}

func mustLookup(t *testing.T, id string) Rule {
	r, ok := Lookup(id)
	if !ok {
		t.Fatalf("no rule %s", id)
	}
	return r
}

// A mistyped rule ID is answered with the nearest registered one; a word far from every
// ID gets no guess. Distances by hand: "scan-overheads" is one insertion from
// "scan-overhead"; "trunc-segments" is four edits from "truncated-segments".
func TestUnknownSuggests(t *testing.T) {
	for _, c := range []struct{ id, want string }{
		{"scan-overheads", `unknown rule "scan-overheads"; did you mean scan-overhead? ` + "`scangate rules` lists them"},
		{"trunc-segments", `unknown rule "trunc-segments"; did you mean truncated-segments? ` + "`scangate rules` lists them"},
		{"bogus", `unknown rule "bogus"; ` + "`scangate rules` lists them"},
	} {
		if got := Unknown(c.id); got != c.want {
			t.Errorf("Unknown(%q) = %q, want %q", c.id, got, c.want)
		}
	}
}
