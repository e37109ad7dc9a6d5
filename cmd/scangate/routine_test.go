package main

import (
	"encoding/json"
	"math"
	"strings"
	"testing"
)

// check --format json carries each table's full and routine refresh, valid against
// schema/output.schema.json; plan prints both. Figures of testdata/loads/merge-costs.yaml
// (its header): 3G rows over 730 days, the routine refresh reloads the newest 3 days of
// 4,109,590 rows each; 730 near-equal partitions on 8 workers take 92 rounds (Graham's
// list scheduling: no worker gets more than ceil(730/8) tasks), 92 x 4.109589 s.
func TestRoutineRefreshReported(t *testing.T) {
	r := scangate(t, root(t), "", nil, "check", "--format", "json", "testdata/loads/merge-costs.yaml")
	validateJSONReport(t, []byte(r.stdout))
	var doc struct {
		Files []struct {
			Tables []struct {
				Refresh struct {
					Full, Routine *struct {
						Partitions int      `json:"partitions"`
						Rows       int64    `json:"rows"`
						Days       *float64 `json:"days"`
						Seconds    float64  `json:"seconds"`
					}
				} `json:"refresh"`
			} `json:"tables"`
		} `json:"files"`
	}
	if err := json.Unmarshal([]byte(r.stdout), &doc); err != nil || len(doc.Files) != 1 || len(doc.Files[0].Tables) != 1 {
		t.Fatalf("report: %v\n%s", err, r.stdout)
	}
	rf := doc.Files[0].Tables[0].Refresh
	if rf.Full == nil || rf.Full.Partitions != 730 || rf.Full.Rows != 3_000_000_000 || math.Abs(rf.Full.Seconds-92*4.109589) > 0.001 {
		t.Errorf("full refresh %+v", rf.Full)
	}
	if rf.Routine == nil || rf.Routine.Partitions != 3 || rf.Routine.Rows != 12_328_770 || rf.Routine.Days == nil || *rf.Routine.Days != 3 ||
		math.Abs(rf.Routine.Seconds-4.10959) > 1e-6 {
		t.Errorf("routine refresh %+v", rf.Routine)
	}
	p := scangate(t, root(t), "", nil, "plan", "testdata/loads/merge-costs.yaml")
	for _, want := range []string{
		"     full                           730     3G  6.3 min",
		"     routine, newest 3 days           3  12.3M   4.11 s",
		"   full refresh    6.3 min -> 25 min",
		"each routine refresh then rebuilds 365 days in 1 partition instead of 3 days",
	} {
		if !strings.Contains(p.stdout, want) {
			t.Errorf("plan lacks %q:\n%s", want, p.stdout)
		}
	}
}
