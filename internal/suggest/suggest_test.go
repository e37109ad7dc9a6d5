package suggest

import "testing"

func TestDistance(t *testing.T) {
	// Levenshtein distances of the textbook examples (kitten/sitting 3, flaw/lawn 2; from memory).
	for _, c := range []struct {
		a, b string
		d    int
	}{{"kitten", "sitting", 3}, {"flaw", "lawn", 2}, {"", "abc", 3}, {"same", "same", 0}} {
		if got := Distance(c.a, c.b); got != c.d {
			t.Errorf("Distance(%q, %q) = %d, want %d", c.a, c.b, got, c.d)
		}
	}
}

func TestNearest(t *testing.T) {
	names := []string{"text", "github", "json", "junit", "markdown", "sarif"}
	for _, c := range []struct {
		word, want string
	}{
		{"jsn", "json"},         // one letter missing: 1 <= 3/3
		{"makdown", "markdown"}, // 1 of 7
		{"sarf", "sarif"},
		{"junit-xml", ""}, // 4 apart, more than 9/3
		{"x", ""},         // a single letter is never a typo of a name
		{"jsom", "json"},  // json (1) before junit (3)
	} {
		got, ok := Nearest(c.word, names)
		if got != c.want || ok != (c.want != "") {
			t.Errorf("Nearest(%q) = %q, %v; want %q", c.word, got, ok, c.want)
		}
	}
	// Ties keep the first name: "tex" is 1 from "text" and 1 from "tax".
	if got, _ := Nearest("tex", []string{"tax", "text"}); got != "tax" {
		t.Errorf("a tie should keep the first name, got %q", got)
	}
}
