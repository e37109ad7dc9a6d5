package rules_test

import (
	"regexp"
	"testing"

	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

var hex32 = regexp.MustCompile(`^[0-9a-f]{32}$`)

// FuzzFingerprint: a fingerprint is 32 hex digits, ignores where the finding sits and
// what it says, and tells apart findings that differ in rule, file, table or subject
// (the parts are separated, so "ab"+"c" and "a"+"bc" differ).
func FuzzFingerprint(f *testing.F) {
	f.Add("scan-overhead", "models/a.yaml", "meter_reads", "scan-overhead", 18, 5)
	f.Add("a", "bc", "", "", 1, 1)
	f.Fuzz(func(t *testing.T, rule, uri, table, subject string, line, col int) {
		a := rules.Finding{Rule: rule, Table: table, Subject: subject, Pos: schema.Pos{Line: line, Col: col}, Message: "x"}
		fp := rules.Fingerprint(a, uri)
		if !hex32.MatchString(fp) {
			t.Fatalf("fingerprint %q", fp)
		}
		moved := a
		moved.Pos = schema.Pos{Line: line + 10, Col: col + 1}
		moved.Message = "other words"
		if rules.Fingerprint(moved, uri) != fp {
			t.Fatal("a line move changed the fingerprint")
		}
		shifted := a
		shifted.Rule, shifted.Table = rule+table, ""
		if table != "" && rules.Fingerprint(shifted, uri) == fp {
			t.Fatal("moving text between parts kept the fingerprint")
		}
	})
}
