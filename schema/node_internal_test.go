package schema

import (
	"fmt"
	"math/big"
	"testing"
)

// locate walks a pointer's tokens in place; escaped keys (RFC 6901 "~0" and "~1"),
// empty keys and indexes must land where the tokens name.
func TestLocateEscapedTokens(t *testing.T) {
	tr, ps := parse("m.yaml", []byte("a/b:\n  c~d:\n    - x\n    - y\n\"\": 7\n"), DefaultLimits, "")
	if len(ps) > 0 {
		t.Fatal(ps)
	}
	for ptr, want := range map[string]int{"/a~1b/c~0d/1": 4, "/a~1b/c~0d": 3, "/": 5, "": 1, "/a~1b/nope": 2} {
		if l := tr.locate(ptr); l.value == nil || l.value.Line != want {
			t.Errorf("locate(%q) at line %v, want %d", ptr, l.value, want)
		}
	}
}

// The canonical-integer shortcut of scalar gives what the general path (math/big, the
// reference) gives.
func TestScalarIntShortcut(t *testing.T) {
	for _, v := range []string{"0", "7", "10", "123456789012345678", "1234567890123456789", "-5", "-0", "-123456789012345678901"} {
		tr, ps := parse("m.yaml", []byte("v: "+v+"\n"), DefaultLimits, "")
		if len(ps) > 0 || len(tr.problems) > 0 {
			t.Fatalf("%s: %v %v", v, ps, tr.problems)
		}
		got := tr.root.(map[string]any)["v"]
		var want big.Int
		if _, ok := want.SetString(v, 10); !ok {
			t.Fatalf("reference cannot read %s", v)
		}
		if fmt.Sprint(got) != want.String() {
			t.Errorf("%s converts to %v, want %s", v, got, want.String())
		}
	}
}
