package escape

import (
	"bytes"
	"encoding/json"
	"encoding/xml"
	"strings"
	"testing"
	"unicode/utf8"

	"github.com/yuin/goldmark"
	"github.com/yuin/goldmark/extension"
)

func TestText(t *testing.T) {
	for _, c := range []struct{ in, want string }{
		{"meter_reads", "meter_reads"},
		{"Zähler – Ströme 水", "Zähler – Ströme 水"}, // printable Unicode stays
		{"x\n::error::inj", `x\n::error::inj`},
		{"a\tb\rc", `a\tb\rc`},
		{"\x1b[2J", `\x1b[2J`},
		{"\x1b]0;title\a", `\x1b]0;title\x07`},
		{"nul\x00", `nul\x00`},
		{"del\x7f", `del\x7f`},
		{"c1\u009b31m", `c1\u009b31m`},
		// The bidi controls (Unicode Standard Annex #9): embeddings and overrides
		// U+202A-U+202E, isolates U+2066-U+2069, marks U+200E, U+200F, U+061C.
		{"abc\u202Efed", `abc\u202efed`},
		{"\u202A\u202B\u202C\u202D", `\u202a\u202b\u202c\u202d`},
		{"\u2066\u2067\u2068\u2069", `\u2066\u2067\u2068\u2069`},
		{"\u200E\u200F\u061C", `\u200e\u200f\u061c`},
		{"zero\u200Bwidth\uFEFF", `zero\u200bwidth\ufeff`},
		{"line\u2028para\u2029", `line\u2028para\u2029`},
		{"tag\U000E0041", `tag\U000e0041`}, // a tag character, Cf above U+FFFF
		{"non\uFFFE\uFFFF", `non\ufffe\uffff`},
		{"bad\xff\xfe utf8", `bad\xff\xfe utf8`},
		{"real \uFFFD stays", "real \uFFFD stays"},
		{"##[add-mask]x and ## [ and #[", `##\x5badd-mask]x and ## [ and #[`},
	} {
		if got := Text(c.in); got != c.want {
			t.Errorf("Text(%q) = %q, want %q", c.in, got, c.want)
		}
		if got := Text(Text(c.in)); got != c.want {
			t.Errorf("Text is not idempotent on %q: %q", c.in, got)
		}
	}
}

func TestLog(t *testing.T) {
	for _, c := range []struct{ in, want string }{
		{"a.yaml:1:1: error: x [rule]\n", "a.yaml:1:1: error: x [rule]\n"},
		{"::error::inj.yaml:1:1: error\n", `\x3a:error::inj.yaml:1:1: error` + "\n"},
		{"ok\n   ::warning::x\n", "ok\n   " + `\x3a:warning::x` + "\n"},
		{"ok\n\u00a0::notice::x", "ok\n\u00a0" + `\x3a:notice::x`}, // the runner trims any white space
		{"table ##[add-mask]secret in a message\n", `table ##\x5badd-mask]secret in a message` + "\n"},
		{"fill: 12%; a::b mid-line stays\n", "fill: 12%; a::b mid-line stays\n"},
	} {
		if got := Log(c.in); got != c.want {
			t.Errorf("Log(%q) = %q, want %q", c.in, got, c.want)
		}
	}
}

func TestMarkdown(t *testing.T) {
	for _, c := range []struct{ in, want string }{
		{"46 excess segments, fill 12%", "46 excess segments, fill 12%"},
		{"a|b", `a\|b`},
		{"<script>alert(1)</script>", `\<script\>alert(1)\</script\>`},
		{"[x](javascript:y)", `\[x\](javascript:y)`},
		{"*b* _i_ `c` ~s~", "\\*b\\* \\_i\\_ \\`c\\` \\~s\\~"},
		{"&#x202e;", `\&\#x202e;`},
		{"x\n| injected |", `x\\n\| injected \|`},
		{"\x1b[2J\u202E", `\\x1b\[2J\\u202e`},
	} {
		if got := Markdown(c.in); got != c.want {
			t.Errorf("Markdown(%q) = %q, want %q", c.in, got, c.want)
		}
	}
}

func TestCode(t *testing.T) {
	for _, c := range []struct{ in, want string }{
		{"meter_reads", "`meter_reads`"},
		{"a|b", "`a\\|b`"},
		{"a`b", "``a`b``"},
		{"`a", "`` `a ``"},
		{"x\n::error::inj", "`x\\n::error::inj`"},
		{"\u202Eevil", "`\\u202eevil`"},
	} {
		if got := Code(c.in); got != c.want {
			t.Errorf("Code(%q) = %q, want %q", c.in, got, c.want)
		}
	}
}

// TestMarkdownTable renders hostile cells with goldmark's table extension (the GFM
// table grammar) and checks that each row keeps its two cells and shows the text.
func TestMarkdownTable(t *testing.T) {
	md := goldmark.New(goldmark.WithExtensions(extension.GFM))
	for _, name := range []string{"a|b", `a\|b`, "a\\", "x\n| y | z |", "<script>x</script>", "``|``", "[l](http://x)"} {
		src := "| name | text |\n|---|---|\n| " + Code(name) + " | " + Markdown(name) + " |\n"
		var out bytes.Buffer
		if err := md.Convert([]byte(src), &out); err != nil {
			t.Fatal(err)
		}
		html := out.String()
		if n := strings.Count(html, "<td>"); n != 2 {
			t.Errorf("%q: %d cells, want 2:\n%s", name, n, html)
		}
		for _, bad := range []string{"<script", "<a "} {
			if strings.Contains(html, bad) {
				t.Errorf("%q: output holds %q:\n%s", name, bad, html)
			}
		}
	}
}

func TestXML(t *testing.T) {
	for _, c := range []struct{ in, want string }{
		{"meter_reads", "meter_reads"},
		{`<a href="x">&'`, "&lt;a href=&#34;x&#34;&gt;&amp;&#39;"},
		{"nul\x00esc\x1b\u202E", `nul\x00esc\x1b\u202e`},
	} {
		got := XML(c.in)
		if got != c.want {
			t.Errorf("XML(%q) = %q, want %q", c.in, got, c.want)
		}
		// It must parse as character data and as an attribute value (XML 1.0, 2.2 and 3.1).
		var v struct {
			Attr string `xml:"v,attr"`
			Text string `xml:",chardata"`
		}
		if err := xml.Unmarshal([]byte(`<t v="`+got+`">`+got+`</t>`), &v); err != nil {
			t.Errorf("XML(%q) does not parse: %v", c.in, err)
		}
	}
}

func TestCommand(t *testing.T) {
	for _, c := range []struct{ in, data, prop string }{
		{"a.yaml", "a.yaml", "a.yaml"},
		{"100% x\ny\rz", "100%25 x%0Ay%0Dz", "100%25 x%0Ay%0Dz"},
		{"a:b,c", "a:b,c", "a%3Ab%2Cc"},
		{"esc\x1b]0;t\a\u202E", `esc\x1b]0;t\x07\u202e`, `esc\x1b]0;t\x07\u202e`},
	} {
		if got := CommandData(c.in); got != c.data {
			t.Errorf("CommandData(%q) = %q, want %q", c.in, got, c.data)
		}
		if got := CommandProperty(c.in); got != c.prop {
			t.Errorf("CommandProperty(%q) = %q, want %q", c.in, got, c.prop)
		}
	}
}

func TestJSON(t *testing.T) {
	// Above U+FFFF the escape is a UTF-16 surrogate pair, as RFC 8259 (section 7) writes
	// U+1D11E: "\ud834\udd1e"; the round trip through encoding/json checks the pair.
	for _, c := range []struct{ in, want string }{
		{`{"a":"plain é"}`, `{"a":"plain é"}`},
		{"{\"a\":\"x\u202Ey\u007f\u0085\"}", `{"a":"x\u202ey\u007f\u0085"}`},
		{"{\"a\":\"tag\U000E0041\"}", `{"a":"tag\udb40\udc41"}`},
		{"{\n  \"a\": 1\n}\n", "{\n  \"a\": 1\n}\n"},
		{`{"a":"##[add-mask]x"}`, `{"a":"##\u005badd-mask]x"}`},
	} {
		got := string(JSON([]byte(c.in)))
		if got != c.want {
			t.Errorf("JSON(%q) = %q, want %q", c.in, got, c.want)
		}
		var before, after any
		if err := json.Unmarshal([]byte(c.in), &before); err != nil {
			t.Fatal(err)
		}
		if err := json.Unmarshal([]byte(got), &after); err != nil {
			t.Fatalf("JSON(%q) does not parse: %v", c.in, err)
		}
		if b1, _ := json.Marshal(before); string(b1) != string(must(json.Marshal(after))) {
			t.Errorf("JSON(%q) changed the value: %v, want %v", c.in, after, before)
		}
	}
}

func must(b []byte, err error) []byte {
	if err != nil {
		panic(err)
	}
	return b
}

// FuzzText holds Text's promise on any bytes: valid UTF-8, one line, no hidden rune, no
// "##[", and the same again when escaped twice.
func FuzzText(f *testing.F) {
	for _, s := range []string{"x\n::error::inj", "\x1b]0;t\a\u202e", "##[add-mask]", "#\x00#[", "\xff\xfe", "\U000e0041"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		got := Text(s)
		if !utf8.ValidString(got) || strings.Contains(got, "##[") || Text(got) != got {
			t.Fatalf("Text(%q) = %q", s, got)
		}
		for _, r := range got {
			if Hidden(r) {
				t.Fatalf("Text(%q) = %q holds %U", s, got, r)
			}
		}
	})
}

// Outside a table a code span shows a backslash as it is, so pipes are left alone
// there; inside one they must be escaped (GitHub Flavored Markdown, tables extension).
func TestInlineCodeKeepsPipes(t *testing.T) {
	if got := InlineCode("a|b.yaml:6:5"); got != "`a|b.yaml:6:5`" {
		t.Errorf("InlineCode = %q", got)
	}
	if got := Code("a|b"); got != "`a\\|b`" {
		t.Errorf("Code = %q", got)
	}
	if got := InlineCode("x`y"); got != "``x`y``" {
		t.Errorf("InlineCode with a backtick = %q", got)
	}
}
