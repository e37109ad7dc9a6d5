package rules

import (
	"fmt"
	"math"

	"github.com/scangate/scangate/internal/analysis"

	"github.com/scangate/scangate/internal/units"

	"github.com/scangate/scangate/schema"
)

// applyWaivers marks the findings a table's live waivers accept and raises
// expired-waiver and unused-waiver for the waivers themselves. A waiver is live up to and
// including its expiry date.
func applyWaivers(t *analysis.Table, fs []Finding, cfg Config) []Finding {
	today := cfg.today()
	for i := range t.Spec.Waivers {
		w := &t.Spec.Waivers[i]
		if today.After(w.Expires) {
			if !cfg.off(ExpiredWaiver.ID) {
				days := units.Int64(math.Round(today.Sub(w.Expires).Hours() / 24))
				fs = append(fs, waiverFinding(t, ExpiredWaiver, cfg, w,
					fmt.Sprintf("waiver for %s expired on %s, %s %s ago; its findings count again", w.Rule, w.Expires.Format(dateLayout), units.Num(days), units.Plural(days, "day", "days")),
					fmt.Sprintf("fix what %s reports, or renew the waiver with a later expires: and a reason that still holds", w.Rule)))
			}
			continue
		}
		used := false
		for j := range fs {
			if fs[j].Rule == w.Rule && fs[j].Waiver == nil {
				fs[j].Waiver = w
				used = true
			}
		}
		if !used && !cfg.off(UnusedWaiver.ID) {
			fs = append(fs, waiverFinding(t, UnusedWaiver, cfg, w,
				fmt.Sprintf("waiver for %s (until %s) matches no finding", w.Rule, w.Expires.Format(dateLayout)),
				fmt.Sprintf("remove the waiver at line %d: what it accepted is fixed", w.Pos.Line)))
		}
	}
	return fs
}

const dateLayout = "2006-01-02"

func waiverFinding(t *analysis.Table, r Rule, cfg Config, w *schema.Waiver, msg, hint string) Finding {
	f := finding(t, cfg.severity(r.ID, r.Default), w.Pos, "waiver:"+w.Rule, msg, []string{hint}, map[string]float64{})
	f.Rule = r.ID
	return f
}
