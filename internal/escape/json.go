package escape

import (
	"bytes"
	"fmt"
	"unicode/utf8"
)

// JSON rewrites every hidden rune that an encoder left raw in a JSON document (DEL, C1
// controls, format characters, line separators) as a \u escape (RFC 8259, section 7;
// a surrogate pair above U+FFFF). The document means the same, since outside strings
// JSON is ASCII; it just shows the same bytes to a reader that cats it to a terminal.
// The encoders used escape C0 controls themselves, and JSON's own white space (tab,
// LF, CR between tokens) must stay, so runes below U+0020 are left alone.
// "##[" gets its bracket escaped too, for a runner that reads a JSON file catted to its
// log.
func JSON(doc []byte) []byte {
	doc = bytes.ReplaceAll(doc, []byte("##["), []byte(`##\u005b`))
	i := firstHidden(doc)
	if i < 0 {
		return doc
	}
	out := append([]byte(nil), doc[:i]...)
	for i < len(doc) {
		r, n := utf8.DecodeRune(doc[i:])
		switch {
		case r >= 0x7f && Hidden(r) && r <= 0xFFFF:
			out = fmt.Appendf(out, `\u%04x`, r)
		case r > 0xFFFF && Hidden(r):
			r -= 0x10000
			out = fmt.Appendf(out, `\u%04x\u%04x`, 0xD800+(r>>10), 0xDC00+(r&0x3FF))
		default:
			out = append(out, doc[i:i+n]...)
		}
		i += n
	}
	return out
}

// firstHidden is the offset of the first rune JSON rewrites, or -1.
func firstHidden(doc []byte) int {
	for i := 0; i < len(doc); {
		if doc[i] < 0x7f {
			i++
			continue
		}
		r, n := utf8.DecodeRune(doc[i:])
		if Hidden(r) {
			return i
		}
		i += n
	}
	return -1
}
