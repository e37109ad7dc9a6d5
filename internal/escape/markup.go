package escape

import (
	"html"
	"strings"
)

// markdownMeta are the characters Markdown (with tables, strikethrough and HTML) reads
// as markup inside a line: emphasis, code, links and images, HTML tags and entities,
// table cells, headings, braces. Every one is ASCII punctuation, which CommonMark lets a
// backslash escape (CommonMark 0.31, section 2.4).
const markdownMeta = "\\`*_[]<>|#!{}&~"

// Markdown is s as inline Markdown text: hidden runes made visible as Text does, then
// every markup character backslash-escaped, so s renders as the characters it holds
// and cannot end a table row, open a link or a tag, or decode an entity.
func Markdown(s string) string {
	s = Text(s)
	var b strings.Builder
	for _, r := range s {
		if strings.ContainsRune(markdownMeta, r) {
			b.WriteByte('\\')
		}
		b.WriteRune(r)
	}
	return b.String()
}

// Code is s as a Markdown code span that is safe in a table cell: hidden runes made
// visible, a fence longer than any backtick run inside, and every pipe escaped (a
// table splits its cells before it reads code spans, and takes \| as a pipe even after
// another backslash).
func Code(s string) string { return codeSpan(strings.ReplaceAll(Text(s), "|", `\|`)) }

// InlineCode is s as a Markdown code span outside tables (lists, prose), where a
// backslash inside a code span is shown as it is: pipes stay as written.
func InlineCode(s string) string { return codeSpan(Text(s)) }

// codeSpan fences s with more backticks than any run inside it.
func codeSpan(s string) string {
	fence := "`"
	for strings.Contains(s, fence) {
		fence += "`"
	}
	if strings.HasPrefix(s, "`") || strings.HasSuffix(s, "`") {
		s = " " + s + " "
	}
	return fence + s + fence
}

// XML is s as XML character data or an attribute value: hidden runes, which XML 1.0
// forbids or discourages even as character references (section 2.2), made visible as
// Text does, then &, <, >, ' and " escaped.
func XML(s string) string { return html.EscapeString(Text(s)) }

// CommandData is a workflow command's message: hidden runes but line breaks made
// visible, then %, CR and LF percent-encoded, so the message stays on the command's
// line and its line breaks come back on the runner's side.
func CommandData(s string) string {
	return strings.NewReplacer("%", "%25", "\r", "%0D", "\n", "%0A").Replace(textKeepingBreaks(s))
}

// CommandProperty is a workflow command's property value: as CommandData, plus : and ,
// which separate properties.
func CommandProperty(s string) string {
	return strings.NewReplacer("%", "%25", "\r", "%0D", "\n", "%0A", ":", "%3A", ",", "%2C").Replace(textKeepingBreaks(s))
}

// textKeepingBreaks is Text with CR and LF left for the command's own encoding.
func textKeepingBreaks(s string) string {
	if clean(s) {
		return s
	}
	var b strings.Builder
	for {
		i := strings.IndexAny(s, "\r\n")
		if i < 0 {
			b.WriteString(Text(s))
			return b.String()
		}
		b.WriteString(Text(s[:i]))
		b.WriteByte(s[i])
		s = s[i+1:]
	}
}
