// Package escape makes user text safe for each medium scangate writes: a terminal or
// CI log, Markdown, XML, workflow commands and JSON. A name, path, reason or message
// from a manifest is data; after escaping it can neither steer a terminal (control
// sequences, bidi overrides), nor start a line, nor become markup.
package escape

import (
	"fmt"
	"strings"
	"unicode"
	"unicode/utf8"
)

// Hidden reports whether r must not reach a reader raw: C0 and C1 controls, DEL,
// format characters (Unicode category Cf: the bidi embeddings, overrides and isolates
// U+202A-U+202E and U+2066-U+2069, the marks U+200E, U+200F and U+061C, zero-width
// characters, the byte order mark), the line and paragraph separators, and the
// noncharacters U+FFFE and U+FFFF, which XML 1.0 forbids (section 2.2).
func Hidden(r rune) bool {
	return unicode.Is(unicode.Cc, r) || unicode.Is(unicode.Cf, r) ||
		r == '\u2028' || r == '\u2029' || r == 0xFFFE || r == 0xFFFF
}

// Text is s for a terminal, a log or a message on stderr: every hidden rune becomes a
// visible escape in Go's notation (\t, \n, \r, \x1b, \u202e, \U000e0001), every byte
// that is not UTF-8 becomes \xNN, and the bracket of "##[" (a CI runner's older command
// form, read anywhere in a line) becomes \x5b. The result is one line of printable text.
func Text(s string) string {
	s = strings.ReplaceAll(s, "##[", `##\x5b`)
	if clean(s) {
		return s
	}
	var b strings.Builder
	for i := 0; i < len(s); {
		r, n := utf8.DecodeRuneInString(s[i:])
		switch {
		case r == utf8.RuneError && n == 1:
			fmt.Fprintf(&b, `\x%02x`, s[i])
		case Hidden(r):
			b.WriteString(visible(r))
		default:
			b.WriteString(s[i : i+n])
		}
		i += n
	}
	return b.String()
}

// clean is the common case: nothing in s needs escaping.
func clean(s string) bool {
	for i := 0; i < len(s); i++ {
		if c := s[i]; c < 0x20 || c >= 0x7f {
			return cleanRunes(s[i:])
		}
	}
	return true
}

func cleanRunes(s string) bool {
	for i, r := range s {
		if Hidden(r) || (r == utf8.RuneError && !strings.HasPrefix(s[i:], "\uFFFD")) {
			return false
		}
	}
	return true
}

// visible is the escape of one hidden rune.
func visible(r rune) string {
	switch {
	case r == '\t':
		return `\t`
	case r == '\n':
		return `\n`
	case r == '\r':
		return `\r`
	case r < 0x80:
		return fmt.Sprintf(`\x%02x`, r)
	case r <= 0xFFFF:
		return fmt.Sprintf(`\u%04x`, r)
	}
	return fmt.Sprintf(`\U%08x`, r)
}

// Log guards a whole text document (a report or stderr) written where a CI runner reads
// workflow commands: a line whose first non-blank characters are "::" gets its first
// colon escaped, and "##[" (the older command form, read anywhere in a line) gets its
// bracket escaped. scangate's own text never does either; after Text, data cannot add a
// line, so only data at the start of a line or glued to its neighbours can, and this
// catches both.
func Log(doc string) string {
	if !strings.Contains(doc, "::") && !strings.Contains(doc, "##[") {
		return doc
	}
	doc = strings.ReplaceAll(doc, "##[", `##\x5b`)
	lines := strings.SplitAfter(doc, "\n")
	for i, l := range lines {
		body := strings.TrimLeftFunc(l, unicode.IsSpace)
		if strings.HasPrefix(body, "::") {
			lines[i] = l[:len(l)-len(body)] + `\x3a` + body[1:]
		}
	}
	return strings.Join(lines, "")
}
