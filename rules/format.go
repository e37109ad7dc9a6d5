package rules

import "github.com/scangate/scangate/rules/advisor"

// Figures are written one way everywhere; the advisor, lowest of the packages that word
// findings and plans, holds the formatting and the rules reuse it.
var (
	count  = advisor.Count  // 8Mi, 7.2G, 400k
	num    = advisor.Num    // 1,460
	ms     = advisor.Ms     // one decimal below 100 ms, whole and grouped above
	pct    = advisor.Pct    // a fraction as a percentage
	size   = advisor.Size   // bytes in binary units: 1.5 GiB
	signed = advisor.Signed // a change in ms with its sign: +1.5, -642
	short  = advisor.Short  // three significant digits: 7.2, 40, 1.46
)

// plural picks the singular or plural word for n.
func plural(n int64, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}

// Thousands, Millis, Percent, Rows and Bytes format figures the way findings do, for
// reports.
func Thousands(n int64) string { return num(n) }

// Millis writes milliseconds as findings do: one decimal below 100.
func Millis(x float64) string { return ms(x) }

// Percent writes a fraction as a percentage.
func Percent(f float64) string { return pct(f) }

// Rows writes a count with the manifest's suffixes: 8Mi, 7.2G.
func Rows(n int64) string { return count(n) }

// Bytes writes a byte size in binary units as findings do: 1.5 GiB.
func Bytes(b float64) string { return size(b) }
