package schema_test

import (
	"fmt"
	"math/rand/v2"
	"strconv"
	"strings"
	"testing"

	"github.com/scangate/scangate/schema"
)

// Binary prefixes (Ki = 2^10, Mi = 2^20, Gi = 2^30, Ti = 2^40) are those of IEC 80000-13;
// decimal prefixes (k = 10^3, M = 10^6, G = 10^9, T = 10^12) are those of the SI (BIPM SI
// Brochure). The expected values below are written out from those definitions, not
// computed with the code under test.

func TestParseCount(t *testing.T) {
	cases := []struct {
		in   string
		want int64
	}{
		{"0", 0},
		{"7200000", 7_200_000},
		{"8Mi", 8_388_608},               // IEC 80000-13: 8 x 2^20
		{"0.5Ki", 512},                   // IEC 80000-13: 0.5 x 2^10
		{"3Gi", 3_221_225_472},           // IEC 80000-13: 3 x 2^30
		{"2Ti", 2_199_023_255_552},       // IEC 80000-13: 2 x 2^40
		{"7.2G", 7_200_000_000},          // SI (BIPM SI Brochure): 7.2 x 10^9
		{"1.3M", 1_300_000},              // SI (BIPM SI Brochure): 1.3 x 10^6
		{"400k", 400_000},                // SI (BIPM SI Brochure): 400 x 10^3
		{"2.5k", 2_500},                  // SI (BIPM SI Brochure): 2.5 x 10^3
		{"1.000001T", 1_000_001_000_000}, // SI (BIPM SI Brochure): 1.000001 x 10^12
		{"1000T", schema.MaxCount},       // SI (BIPM SI Brochure): 10^3 x 10^12, the limit itself
	}
	for _, c := range cases {
		got, err := schema.ParseCount(c.in)
		if err != nil || got != c.want {
			t.Errorf("ParseCount(%q) = %d, %v; want %d", c.in, got, err, c.want)
		}
	}
}

func TestParseCountErrors(t *testing.T) {
	cases := []struct {
		in, want string // want: a part of the error message
	}{
		{"8Xi", "not a quantity"},
		{"1.5", "not a whole number"},
		{"0.3Ki", "not a whole number"}, // 307.2
		{"-1", "not a quantity"},
		{"+5", "not a quantity"},
		{"", "not a quantity"},
		{"k", "not a quantity"},
		{"1e3", "not a quantity"}, // an exponent is a YAML number, not a count string
		{"9999999Ti", "above the limit of 1,000,000,000,000,000"},
		{"1000000000000000001", "above the limit"},
		{"1_000", "not a quantity"},
		{"1/2", "not a quantity"},
		{"4K", "not a quantity"},  // the SI kilo is a lower-case k
		{"8mi", "not a quantity"}, // prefixes are case-sensitive
		{"8 Mi", "not a quantity"},
		// Forms big.Rat would read but a count must not have.
		{"0x10", "not a quantity"},
		{"0b101", "not a quantity"},
		{"0o7", "not a quantity"},
		{"1p3", "not a quantity"},
		{"5.", "not a quantity"},
		{".5", "not a quantity"},
	}
	for _, c := range cases {
		got, err := schema.ParseCount(c.in)
		if err == nil {
			t.Errorf("ParseCount(%q) = %d, want an error containing %q", c.in, got, c.want)
			continue
		}
		if !strings.Contains(err.Error(), c.want) {
			t.Errorf("ParseCount(%q) error %q does not contain %q", c.in, err, c.want)
		}
		if !strings.Contains(err.Error(), strconv.Quote(c.in)) {
			t.Errorf("ParseCount(%q) error %q does not quote the input", c.in, err)
		}
	}
}

func TestParseBytes(t *testing.T) {
	cases := []struct {
		in   string
		want int64
	}{
		{"12", 12},
		{"0B", 0},
		{"1B", 1},
		{"64GiB", 68_719_476_736},       // IEC 80000-13: 64 x 2^30
		{"48GiB", 51_539_607_552},       // IEC 80000-13: 48 x 2^30
		{"1.5KiB", 1_536},               // IEC 80000-13: 1.5 x 2^10
		{"2MiB", 2_097_152},             // IEC 80000-13: 2 x 2^20
		{"1TiB", 1_099_511_627_776},     // IEC 80000-13: 2^40
		{"1PiB", 1_125_899_906_842_624}, // IEC 80000-13: 2^50
		{"500MB", 500_000_000},          // SI (BIPM SI Brochure): 500 x 10^6
		{"3kB", 3_000},                  // SI (BIPM SI Brochure): 3 x 10^3
		{"2.5GB", 2_500_000_000},        // SI (BIPM SI Brochure): 2.5 x 10^9
		{"4TB", 4_000_000_000_000},      // SI (BIPM SI Brochure): 4 x 10^12
		{"1PB", 1_000_000_000_000_000},  // SI (BIPM SI Brochure): 10^15
		{"1024PiB", schema.MaxBytes},    // IEC 80000-13: 2^10 x 2^50, the limit itself
	}
	for _, c := range cases {
		got, err := schema.ParseBytes(c.in)
		if err != nil || got != c.want {
			t.Errorf("ParseBytes(%q) = %d, %v; want %d", c.in, got, err, c.want)
		}
	}
}

func TestParseBytesErrors(t *testing.T) {
	cases := []struct {
		in, want string
	}{
		{"0.1B", "not a whole number of bytes"},
		{"1.5", "not a whole number of bytes"},
		{"8Mi", "not a byte size"}, // a count suffix is not a byte unit
		{"64GIB", "not a byte size"},
		{"-1B", "not a byte size"},
		{"", "not a byte size"},
		{"B", "not a byte size"},
		{"1e3B", "not a byte size"},
		{"0x10B", "not a byte size"},
		{"1025PiB", "above the limit"},
	}
	for _, c := range cases {
		got, err := schema.ParseBytes(c.in)
		if err == nil {
			t.Errorf("ParseBytes(%q) = %d, want an error containing %q", c.in, got, c.want)
			continue
		}
		if !strings.Contains(err.Error(), c.want) {
			t.Errorf("ParseBytes(%q) error %q does not contain %q", c.in, err, c.want)
		}
	}
}

// Any plain integer up to the limit reads back as itself.
func TestParseCountRoundTrip(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	ns := []int64{0, 1, 9, 10, 999, 1000, schema.MaxCount - 1, schema.MaxCount}
	for range 20_000 {
		ns = append(ns, r.Int64N(schema.MaxCount+1))
	}
	// Small values too, where most hand-written counts are.
	for range 5_000 {
		ns = append(ns, r.Int64N(10_000_000))
	}
	for _, n := range ns {
		s := strconv.FormatInt(n, 10)
		got, err := schema.ParseCount(s)
		if err != nil || got != n {
			t.Fatalf("ParseCount(%q) = %d, %v; want %d", s, got, err, n)
		}
	}
	if _, err := schema.ParseCount(strconv.FormatInt(schema.MaxCount+1, 10)); err == nil {
		t.Error("ParseCount(MaxCount+1) succeeded, want an error")
	}
}

// Decimal mantissas are exact: "a.kkkG" is a*10^9 + k*10^6 for every k. A float64 product
// misses about one k in twenty (0.067 * 1e9 is not 67,000,000 in binary floating point).
func TestParseCountDecimalMantissaExact(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 4))
	as := []int64{0, 1, 4, 7, 99, 999_999}
	for range 20 {
		as = append(as, r.Int64N(1_000_000))
	}
	for _, a := range as {
		for k := int64(0); k <= 999; k++ {
			s := fmt.Sprintf("%d.%03dG", a, k)
			want := a*1_000_000_000 + k*1_000_000 // SI (BIPM SI Brochure): G = 10^9
			got, err := schema.ParseCount(s)
			if err != nil || got != want {
				t.Fatalf("ParseCount(%q) = %d, %v; want %d", s, got, err, want)
			}
		}
	}
	// The same with a binary prefix: a.5Ki is a*1024 + 512 (IEC 80000-13: Ki = 2^10).
	for _, a := range as {
		s := fmt.Sprintf("%d.5Ki", a)
		if got, err := schema.ParseCount(s); err != nil || got != a*1024+512 {
			t.Fatalf("ParseCount(%q) = %d, %v; want %d", s, got, err, a*1024+512)
		}
	}
}
