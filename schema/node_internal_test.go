package schema

import "testing"

// locate walks a pointer's tokens in place; escaped keys (RFC 6901 "~0" and "~1"),
// empty keys and indexes must land where the tokens name.
func TestLocateEscapedTokens(t *testing.T) {
	tr, ps := parse([]byte("a/b:\n  c~d:\n    - x\n    - y\n\"\": 7\n"), DefaultLimits, "")
	if len(ps) > 0 {
		t.Fatal(ps)
	}
	for ptr, want := range map[string]int{"/a~1b/c~0d/1": 4, "/a~1b/c~0d": 3, "/": 5, "": 1, "/a~1b/nope": 2} {
		if l := tr.locate(ptr); l.value == nil || l.value.Line != want {
			t.Errorf("locate(%q) at line %v, want %d", ptr, l.value, want)
		}
	}
}
