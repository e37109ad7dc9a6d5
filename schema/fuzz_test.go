package schema_test

import (
	"strconv"
	"strings"
	"testing"

	"github.com/scangate/scangate/schema"
)

// FuzzParseCount: any string either parses to a count within the limit that prints
// back to itself, or is refused with a message that quotes it; never a panic.
func FuzzParseCount(f *testing.F) {
	for _, s := range []string{"8Mi", "7.2G", "400k", "0", "1.5", "9999999Ti", "1e3", "", "-1", "0.001k", "1000T", "12.345678M"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		n, err := schema.ParseCount(s)
		if err != nil {
			if n != 0 || !strings.Contains(err.Error(), strconv.Quote(s)) {
				t.Fatalf("ParseCount(%q) = %d, %v", s, n, err)
			}
			return
		}
		if n < 0 || n > schema.MaxCount {
			t.Fatalf("ParseCount(%q) = %d, outside 0..MaxCount", s, n)
		}
		if back, err := schema.ParseCount(strconv.FormatInt(n, 10)); err != nil || back != n {
			t.Fatalf("%d does not parse back: %d, %v", n, back, err)
		}
	})
}
