package rules

import (
	"fmt"
	"strings"
	"unicode"
	"unicode/utf8"

	"golang.org/x/text/cases"
	"golang.org/x/text/unicode/norm"

	"github.com/scangate/scangate/internal/analysis"
	"github.com/scangate/scangate/schema"
)

// LookAlikeNames warns about two names that differ only in letter case, Unicode form or
// invisible characters. Exact duplicates are schema errors; these pass the schema, yet a
// reader sees one name twice.
var LookAlikeNames = Rule{
	ID:      "look-alike-names",
	Default: Warning,
	Title:   "Two tables, columns or partitions have names that look the same",
	Why: "Names that differ only in letter case (Orders, orders), in Unicode form (a composed " +
		"é and e with a combining accent) or by an invisible character (a zero-width space) read " +
		"as one name. A reviewer cannot tell them apart, and an engine that compares names " +
		"without case treats them as one object: the manifest then describes a model that " +
		"cannot exist.",
	Fix: "Rename one of the two so the difference is visible, or remove it if both mean the " +
		"same table, column or partition.",
	How: "Each name is reduced to a key: invisible characters (format characters, category " +
		"Cf, such as U+200B zero-width space, and the other default-ignorable code points) are " +
		"removed, the rest is normalised to NFKC, case-folded and normalised again (Unicode " +
		"caseless matching, Unicode Standard section 3.13). Two different names with one key " +
		"are look-alikes: tables among the model's tables, columns among a table's columns, " +
		"partitions among a list table's items. The finding points at the later name and names " +
		"the line of the earlier one.",
	Bad: `tables:
  - name: Orders
    rows: 10M
    partitions: {scheme: none}
  - name: orders   # the same name to a reader`,
	Good: `tables:
  - name: Orders
    rows: 10M
    partitions: {scheme: none}
  - name: order_lines`,
	Check:      checkLookAlikeColumnsAndItems,
	CheckModel: checkLookAlikeTables,
}

func init() { register(LookAlikeNames) }

// named is one name of a scope, where it is written.
type named struct {
	name string
	pos  schema.Pos
}

// lookAlikes returns, for each of the n names whose key an earlier, different name
// already has, that pair (earlier first). Linear in the names.
func lookAlikes(n int, at func(i int) named) [][2]named {
	first := make(map[string]named, n)
	fold := cases.Fold() // a Caser holds state: one per call, as checks run in parallel
	var out [][2]named
	for i := range n {
		nm := at(i)
		k := lookAlikeKey(fold, nm.name)
		if f, seen := first[k]; !seen {
			first[k] = nm
		} else if f.name != nm.name {
			out = append(out, [2]named{f, nm})
		}
	}
	return out
}

// lookAlikeKey is the name as a reader sees it: without invisible characters, NFKC,
// case-folded (Unicode Standard section 3.13, compatibility caseless matching). Plain
// ASCII, the common case, only needs lower case: it has no invisible characters and
// NFKC leaves it alone.
func lookAlikeKey(fold cases.Caser, s string) string {
	if isASCII(s) {
		return strings.ToLower(s)
	}
	s = norm.NFKC.String(stripInvisible(s))
	return stripInvisible(norm.NFKC.String(fold.String(s)))
}

func isASCII(s string) bool {
	for i := 0; i < len(s); i++ {
		if s[i] >= utf8.RuneSelf {
			return false
		}
	}
	return true
}

func invisible(r rune) bool {
	return unicode.Is(unicode.Cf, r) || unicode.Is(unicode.Other_Default_Ignorable_Code_Point, r) || unicode.Is(unicode.Variation_Selector, r)
}

func stripInvisible(s string) string {
	return strings.Map(func(r rune) rune {
		if invisible(r) {
			return -1
		}
		return r
	}, s)
}

// lookAlikeReason says how two look-alike names differ: which of the reductions it took
// to make them one.
func lookAlikeReason(a, b string) string {
	var why []string
	var hidden []string
	for _, r := range a + b {
		if invisible(r) {
			hidden = append(hidden, fmt.Sprintf("U+%04X", r))
		}
	}
	if len(hidden) > 0 {
		why = append(why, "invisible characters ("+strings.Join(hidden, ", ")+")")
	}
	a, b = stripInvisible(a), stripInvisible(b)
	if a == b {
		return strings.Join(why, "")
	}
	na, nb := norm.NFKC.String(a), norm.NFKC.String(b)
	if na != a || nb != b {
		why = append(why, "Unicode form")
	}
	if na != nb {
		why = append(why, "letter case")
	}
	return strings.Join(why, " and ")
}

func lookAlikeFinding(file, table, kind string, pair [2]named) Finding {
	a, b := pair[0], pair[1]
	msg := fmt.Sprintf("%s %q (line %d) and %q (line %d) look alike: they differ only in %s",
		kind, a.name, a.pos.Line, b.name, b.pos.Line, lookAlikeReason(a.name, b.name))
	if table != "" {
		msg = table + ": " + msg
	}
	hint := fmt.Sprintf("rename %q at line %d so it differs visibly from %q at line %d, or remove it if both are the same %s",
		b.name, b.pos.Line, a.name, a.pos.Line, kind)
	return Finding{
		Severity: Warning,
		File:     file,
		Pos:      b.pos,
		Table:    table,
		Subject:  kind + ":" + b.name,
		Message:  msg,
		Hints:    []string{hint},
		Numbers:  map[string]float64{"line": float64(b.pos.Line), "first_line": float64(a.pos.Line)},
	}
}

// checkLookAlikeTables compares the names of every table of the manifest.
func checkLookAlikeTables(md *analysis.Model, _ Config) []Finding {
	m := md.Manifest
	var out []Finding
	for _, pair := range lookAlikes(len(m.Tables), func(i int) named { return named{m.Tables[i].Name, m.Tables[i].Pos} }) {
		f := lookAlikeFinding(m.File, "", "table", pair)
		f.Table = pair[1].name
		out = append(out, f)
	}
	return out
}

// checkLookAlikeColumnsAndItems compares a table's column names, and its listed
// partitions' names.
func checkLookAlikeColumnsAndItems(t *analysis.Table, _ Config) []Finding {
	var out []Finding
	cols, items := t.Spec.Columns, t.Spec.Partitions.Items
	for _, pair := range lookAlikes(len(cols), func(i int) named { return named{cols[i].Name, cols[i].Pos} }) {
		out = append(out, lookAlikeFinding(t.File, t.Spec.Name, "column", pair))
	}
	for _, pair := range lookAlikes(len(items), func(i int) named { return named{items[i].Name, items[i].Pos} }) {
		out = append(out, lookAlikeFinding(t.File, t.Spec.Name, "partition", pair))
	}
	return out
}
