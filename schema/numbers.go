package schema

import (
	"fmt"
	"math/big"
	"strconv"
	"strings"
	"unicode/utf8"
)

// Numbers are written as JSON writes them: decimal digits, an optional minus sign,
// fraction and exponent. YAML also reads 0x10, 0o17, 0b101, 1_000, 010 (octal in YAML
// 1.1), +5 and .5; a reader of the manifest may not, so they are refused with the plain
// form to write instead.

// numberFormProblem explains why text, which a YAML or JSON reader took as a number, is
// not a plain decimal, and names the form to write; "" when there is nothing to say.
func numberFormProblem(text string) string {
	const counts = "write numbers as decimal digits, and counts as digits with an optional k M G T or Ki Mi Gi Ti suffix"
	body := strings.TrimLeft(text, "+-")
	neg := strings.HasPrefix(text, "-")
	lower := strings.ToLower(body)
	what := ""
	base := 0
	switch {
	case strings.HasPrefix(lower, "0x"):
		what, base = "a hexadecimal number", 16
	case strings.HasPrefix(lower, "0o"):
		what, base = "an octal number", 8
	case strings.HasPrefix(lower, "0b"):
		what, base = "a binary number", 2
	case strings.Contains(body, "_"):
		what, base = "a number with digit separators", 10
	case len(body) > 1 && body[0] == '0' && digits(body):
		// YAML 1.1 reads 010 as octal 8, JSON and YAML 1.2 refuse or read 10.
		return fmt.Sprintf("%s has a leading zero, which some readers take as octal; %s: %s", quoteShort(text), counts, strings.TrimLeft(body, "0"))
	case strings.HasPrefix(text, "+"):
		what = "a number with a plus sign"
	case strings.Contains(lower, "nan") || strings.Contains(lower, "inf"):
		return fmt.Sprintf("%s is not a finite number; write a plain number", quoteShort(text))
	}
	if what == "" {
		if f, err := strconv.ParseFloat(strings.ReplaceAll(text, "_", ""), 64); err == nil {
			return fmt.Sprintf("%s is not a plain decimal number; write it as JSON does: %s", quoteShort(text), strconv.FormatFloat(f, 'g', -1, 64))
		}
		return ""
	}
	clean := strings.ReplaceAll(lower, "_", "")
	if base != 10 && base != 0 {
		clean = clean[2:]
	}
	if base == 0 {
		base = 10
	}
	var v big.Int
	if _, ok := v.SetString(clean, base); ok {
		if neg {
			v.Neg(&v)
		}
		return fmt.Sprintf("%s is %s; %s: %s", quoteShort(text), what, counts, suggestForms(&v))
	}
	if f, err := strconv.ParseFloat(clean, 64); err == nil && base == 10 {
		if neg {
			f = -f
		}
		return fmt.Sprintf("%s is %s; write it as JSON does: %s", quoteShort(text), what, strconv.FormatFloat(f, 'g', -1, 64))
	}
	return fmt.Sprintf("%s is %s; %s, e.g. 65536 or 64Ki", quoteShort(text), what, counts)
}

// suggestForms is v in decimal, and with a suffix when one writes it exactly (the
// shortest such form).
func suggestForms(v *big.Int) string {
	dec := v.String()
	if !v.IsInt64() || v.Sign() <= 0 {
		return quoteShort(dec)
	}
	n, best := v.Int64(), ""
	for _, u := range countSuffixes {
		if n%u.factor == 0 {
			if s := strconv.FormatInt(n/u.factor, 10) + u.suffix; best == "" || len(s) < len(best) {
				best = s
			}
		}
	}
	if best == "" || len(best) >= len(dec) {
		return dec
	}
	return dec + " or " + best
}

// quoteShort quotes a value from the file for a message, cut to a readable length.
func quoteShort(s string) string {
	const most = 40
	if utf8.RuneCountInString(s) <= most {
		return strconv.Quote(s)
	}
	r := []rune(s)
	return strconv.Quote(string(r[:most])) + fmt.Sprintf("... (%d characters)", len(r))
}
