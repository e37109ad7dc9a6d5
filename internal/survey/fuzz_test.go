package survey_test

import (
	"strings"
	"testing"

	"github.com/scangate/scangate/internal/survey"
	"github.com/scangate/scangate/schema"
)

// FuzzFromResult: any bytes as a query result give a table whose fragment loads as a
// manifest, or a positioned error; never a panic.
func FuzzFromResult(f *testing.F) {
	head := "table,dialect,grain,key,scope,partition,rows,id:int64:distinct,id:int64:values,s:string:avg_length\n"
	f.Add(head + "t,ansi,,,table,,5,1,1,2.5\n")
	f.Add(head + "t,strftime,month,d,table,,5,1,1,\nt,strftime,month,d,partition,2026-01-02,5,,,\n")
	f.Add(head + "t,ansi,,k,table,,5,1,1,3\nt,ansi,,k,partition,,5,,,\n")
	f.Fuzz(func(t *testing.T, body string) {
		tb, err := survey.FromResult("r.csv", []byte(body))
		if err != nil {
			if !strings.HasPrefix(err.Error(), "r.csv") {
				t.Fatalf("error without the file: %v", err)
			}
			return
		}
		if tb.Name == "" || len(tb.Name) > 200 || strings.ContainsAny(tb.Name, "\x00") {
			return // a name the manifest refuses; survey writes it and the loader says so
		}
		doc := "format: 1\nmodel: m\nengine: {segment_rows: 1M}\n" + string(survey.Fragment([]schema.SurveyTable{tb}))
		if _, err := schema.Load("f.yaml", []byte(doc), schema.DefaultLimits); err != nil && !strings.Contains(err.Error(), "name") {
			t.Fatalf("fragment does not load: %v\n%s", err, doc)
		}
	})
}
