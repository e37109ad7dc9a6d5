package schema

import (
	"bytes"
	_ "embed"
	"encoding/json"
	"fmt"
)

//go:embed survey.schema.json
var surveySchema []byte

// SurveySchema returns the embedded JSON Schema of survey's JSON output.
func SurveySchema() []byte { return bytes.Clone(surveySchema) }

var surveyDoc = func() *document {
	d := newDocument("https://github.com/scangate/scangate/schema/survey.schema.json", surveySchema)
	d.json = true
	return d
}()

// SurveyVersion is the shape version of survey's JSON output.
const SurveyVersion = 1

// Survey is survey's JSON output and check --observed's input: tables as measured.
type Survey struct {
	SurveyVersion int           `json:"survey_version"`
	Tables        []SurveyTable `json:"tables"`
}

// SurveyTable is one table as measured from its data.
type SurveyTable struct {
	Name          string           `json:"name"`
	Rows          int64            `json:"rows"`
	GrowthPerYear *float64         `json:"growth_per_year,omitempty"`
	Partitions    SurveyPartitions `json:"partitions"`
	Columns       []SurveyColumn   `json:"columns"`
}

// SurveyPartitions is how a surveyed table's rows split: every partition is listed with
// its exact rows, for a time scheme too (its periods, oldest first).
type SurveyPartitions struct {
	Scheme string       `json:"scheme"` // none, list or time
	Key    string       `json:"key,omitempty"`
	Grain  string       `json:"grain,omitempty"`
	Items  []SurveyItem `json:"items,omitempty"`
}

// SurveyItem is one measured partition.
type SurveyItem struct {
	Name string `json:"name"`
	Rows int64  `json:"rows"`
}

// SurveyColumn is one measured column. Distinct is exact when DistinctExact, else an
// estimate with relative standard error DistinctError.
type SurveyColumn struct {
	Name          string   `json:"name"`
	Type          string   `json:"type"`
	Distinct      int64    `json:"distinct"`
	DistinctExact bool     `json:"distinct_exact"`
	DistinctError float64  `json:"distinct_error"`
	Nulls         int64    `json:"nulls"`
	AvgLength     *float64 `json:"avg_length,omitempty"`
	Order         string   `json:"order,omitempty"`
	RunLength     int64    `json:"run_length,omitempty"`
}

// Table is the surveyed table called name, or nil.
func (s *Survey) Table(name string) *SurveyTable {
	if s == nil {
		return nil
	}
	for i := range s.Tables {
		if s.Tables[i].Name == name {
			return &s.Tables[i]
		}
	}
	return nil
}

// LoadSurvey reads survey's JSON output: strict JSON, one object, no duplicate keys,
// within the limits, valid against survey.schema.json. Invalid input returns an *Error
// listing every problem with its line and column.
func LoadSurvey(file string, data []byte, lim Limits) (*Survey, error) {
	t, ps := parseAs(true, data, lim, `a survey starts with {"survey_version": 1`)
	if t != nil {
		more, _ := t.check(surveyDoc)
		ps = append(ps, more...)
	}
	if len(ps) > 0 {
		return nil, &Error{File: file, Problems: sortProblems(ps)}
	}
	var s Survey
	if err := json.Unmarshal(data, &s); err != nil {
		// The schema already holds every value to its type; this is a bug if it happens.
		return nil, fmt.Errorf("%s: %v", file, err)
	}
	return &s, nil
}
