package rules

import (
	"fmt"
	"math"
	"strconv"
	"time"

	"github.com/scangate/scangate/internal/units"

	"github.com/scangate/scangate/internal/advisor"

	"github.com/scangate/scangate/schema"
)

// Config is what a run knows beyond the manifest: the date waivers and forecasts are
// judged on, the rule settings of the project and the tables as surveyed. The zero value is the documented
// default.
type Config struct {
	Today time.Time // zero means the current date (UTC)
	Rules map[string]RuleConfig
	// Advise computes every table's recommendation before the analysis is settled, for
	// reports that print it beside each table (the JSON report), not only for the tables
	// a finding quotes it for.
	Advise bool
	// Charts: a report charts each swept table's front (analysis.Layouts), so the
	// sweeps mark it; without it they are lean (analysis.Model.Charted).
	Charts bool
	// Observed is what `scangate survey` measured (check --observed); nil without it.
	Observed *schema.Survey
}

// RuleConfig is a project's setting for one rule.
type RuleConfig struct {
	Off      bool
	Severity Severity // 0 keeps the rule's own grading
	Params   map[string]float64
}

func (c Config) off(id string) bool { return c.Rules[id].Off }

// severity applies a project's override to a finding's own severity.
func (c Config) severity(id string, own Severity) Severity {
	if s := c.Rules[id].Severity; s != 0 {
		return s
	}
	return own
}

// Value is a rule's threshold: the project's setting or the parameter's default.
func (c Config) Value(ruleID string, p Param) float64 {
	if v, ok := c.Rules[ruleID].Params[p.Name]; ok {
		return v
	}
	return p.Default
}

// today is the date waivers are judged on.
func (c Config) today() time.Time {
	if c.Today.IsZero() {
		return time.Now().UTC().Truncate(24 * time.Hour)
	}
	return c.Today
}

// ConfigFrom turns a project config's rules section into the rules' Config, refusing
// unknown rules, parameters and severities with the position they were written at.
func ConfigFrom(p *schema.ProjectConfig, today time.Time) (Config, error) {
	cfg := Config{Today: today, Rules: map[string]RuleConfig{}}
	if p == nil {
		return cfg, nil
	}
	var problems []schema.Problem
	for _, id := range p.RuleIDs() {
		set := p.Rules[id]
		r, ok := Lookup(id)
		if !ok || r.ID == Schema.ID {
			problems = append(problems, schema.Problem{Pos: set.Pos, Path: "/rules/" + id, Message: Unknown(id)})
			continue
		}
		rc := RuleConfig{Params: map[string]float64{}}
		switch set.Severity {
		case "":
		case "off":
			rc.Off = true
		default:
			sev, err := ParseSeverity(set.Severity)
			if err != nil {
				problems = append(problems, schema.Problem{Pos: set.Pos, Path: "/rules/" + id + "/severity", Message: err.Error() + " or off"})
			}
			rc.Severity = sev
		}
		for _, name := range set.ParamNames() {
			known := false
			for _, prm := range r.Params {
				known = known || prm.Name == name
			}
			if !known {
				problems = append(problems, schema.Problem{Pos: set.ParamPos[name], Path: "/rules/" + id + "/" + name, Message: fmt.Sprintf("rule %s has no setting %q; it has: %s", id, name, paramNames(r))})
				continue
			}
			v := set.Params[name]
			if prm := paramOf(r, name); !prm.Allows(v) {
				problems = append(problems, schema.Problem{Pos: set.ParamPos[name], Path: "/rules/" + id + "/" + name,
					Message: schema.SettingProblem(id, name, valueWords(v), prm.Range)})
				continue
			}
			rc.Params[name] = v
		}
		cfg.Rules[id] = rc
	}
	if len(problems) > 0 {
		return cfg, &schema.Error{File: p.File, Problems: problems}
	}
	return cfg, nil
}

// shareRange is the range of a share of a budget or a table: above 0, at most all of it.
var shareRange = schema.Range{Min: 0, MinExclusive: true, Max: 1}

// valueWords writes a setting's value plainly: 100000000, 0.5, 1e+300.
func valueWords(v float64) string {
	if math.Abs(v) < 1e21 {
		return strconv.FormatFloat(v, 'f', -1, 64)
	}
	return strconv.FormatFloat(v, 'g', -1, 64)
}

func paramOf(r Rule, name string) Param {
	for _, p := range r.Params {
		if p.Name == name {
			return p
		}
	}
	return Param{}
}

func paramNames(r Rule) string {
	if len(r.Params) == 0 {
		return "severity only"
	}
	s := "severity"
	for _, p := range r.Params {
		s += ", " + p.Name
	}
	return s
}

// Levels are the rules' warning thresholds as the project sets them, handed to the
// analysis so the advisor recommends a layout the rules stay quiet about.
func (c Config) Levels() advisor.Levels {
	return advisor.Levels{
		OverheadWarnShare: c.Value(scanOverheadID, overheadWarnShare),
		ScanWarnShare:     c.Value(scanTimeID, scanWarnShare),
		TruncWarnMin:      c.Value(truncatedSegmentsID, truncWarnMin),
		TruncWarnShare:    c.Value(truncatedSegmentsID, truncWarnShare),
		PartitionLimit:    c.Value(partitionCountID, partitionLimit),
		HorizonMonths:     units.Int(c.Value(budgetForecastID, forecastHorizon)),
		Today:             c.today(),
	}
}
