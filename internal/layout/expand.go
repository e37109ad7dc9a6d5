package layout

import (
	"cmp"
	"fmt"
	"math"
	"math/bits"
	"slices"
	"strconv"

	"github.com/scangate/scangate/schema"
)

// MaxPartitions caps the partitions generated for one table, so a typo such as
// keep: 10000000000 is reported as an error instead of exhausting memory.
const MaxPartitions = schema.MaxPartitions

// Partition is one partition of a table after its scheme is expanded; segments never
// span partitions, so the layout is computed from these.
type Partition struct {
	// label is the whole name (a list item's, or "all") or, for a numbered partition,
	// the prefix its number follows: "part " (even) or the grain and a space (time).
	// Names are built when asked for: a sweep expands every layout it tries, and none
	// of it reads them.
	label  string
	number int32 // 1-based place of a numbered partition (within its tier for time), 0 otherwise
	Tier   int32 // index into Partitions.Tiers for time, -1 otherwise
	Rows   int64
	Open   bool // the newest time partition (still filling)
}

// Name is "all" (none), "part 3" (even, 1-based), the item name (list), "day 1",
// "month 23" (time: grain + 1-based index within its tier, 1 = newest).
func (p Partition) Name() string {
	if p.number == 0 {
		return p.label
	}
	return p.label + strconv.Itoa(int(p.number))
}

// grain48 is a period's length in 1/48 day, so that period lengths are exact integers
// (a month is 365.25/12 days = 1461/48) and time expansion without growth is exact.
func grain48(g schema.Grain) int64 {
	switch g {
	case schema.Day:
		return 48
	case schema.Week:
		return 336
	case schema.Month:
		return 1461
	case schema.Quarter:
		return 4383
	case schema.Year:
		return 17532
	}
	return 0
}

// Expand turns a table's partition policy into partitions with row counts, in order
// (time: newest first), so that rules can count segments per partition.
func Expand(t schema.Table) ([]Partition, error) {
	if t.Rows < 0 {
		return nil, fmt.Errorf("table %q: rows %d is negative", t.Name, t.Rows)
	}
	p := t.Partitions
	switch p.Scheme {
	case schema.SchemeNone:
		return []Partition{{label: "all", Tier: -1, Rows: t.Rows}}, nil
	case schema.SchemeEven:
		return expandEven(t)
	case schema.SchemeList:
		if len(p.Items) > MaxPartitions {
			return nil, tooMany(t, int64(len(p.Items)))
		}
		if len(p.Items) == 0 {
			return nil, fmt.Errorf("table %q: scheme list has no items", t.Name)
		}
		out := make([]Partition, len(p.Items))
		for i, it := range p.Items {
			if it.Rows < 0 {
				return nil, fmt.Errorf("table %q: item %q has negative rows %d", t.Name, it.Name, it.Rows)
			}
			out[i] = Partition{label: it.Name, Tier: -1, Rows: it.Rows}
		}
		return out, nil
	case schema.SchemeTime:
		return expandTime(t)
	}
	return nil, fmt.Errorf("table %q: unknown partition scheme %q", t.Name, p.Scheme)
}

func tooMany(t schema.Table, n int64) error {
	return fmt.Errorf("table %q: %d partitions, above the limit of %d", t.Name, n, MaxPartitions)
}

// expandEven gives the first Rows%count partitions one row more, so they sum to Rows.
func expandEven(t schema.Table) ([]Partition, error) {
	n := t.Partitions.Count
	if n < 1 {
		return nil, fmt.Errorf("table %q: scheme even needs a count of at least 1, got %d", t.Name, n)
	}
	if n > MaxPartitions {
		return nil, tooMany(t, int64(n))
	}
	q, r := t.Rows/int64(n), t.Rows%int64(n)
	out := make([]Partition, n)
	for i := range out {
		rows := q
		if int64(i) < r {
			rows++
		}
		out[i] = Partition{label: "part ", number: int32(i + 1), Tier: -1, Rows: rows}
	}
	return out, nil
}

// expandTime spreads Rows over the periods by length and, with growth, by age.
func expandTime(t schema.Table) ([]Partition, error) {
	tiers := t.Partitions.Tiers
	if len(tiers) == 0 {
		return nil, fmt.Errorf("table %q: scheme time has no tiers", t.Name)
	}
	// Count before allocating; the running sum stops at the limit so it cannot overflow.
	var total int64
	for i, tr := range tiers {
		if grain48(tr.Grain) == 0 {
			return nil, fmt.Errorf("table %q: tier %d has unknown grain %q", t.Name, i+1, tr.Grain)
		}
		if tr.Keep < 1 {
			return nil, fmt.Errorf("table %q: tier %d keeps %d periods, need at least 1", t.Name, i+1, tr.Keep)
		}
		if int64(tr.Keep) > MaxPartitions || total+int64(tr.Keep) > MaxPartitions {
			// Name the full count in the error; the sum saturates so huge keeps cannot wrap.
			var sum uint64
			for _, x := range tiers {
				s, carry := bits.Add64(sum, uint64(max(x.Keep, 0)), 0)
				if carry != 0 || s > math.MaxInt64 {
					s = math.MaxInt64
				}
				sum = s
			}
			return nil, tooMany(t, int64(sum))
		}
		total += int64(tr.Keep)
	}
	g := t.GrowthPerYear
	if math.IsNaN(g) || math.IsInf(g, 0) || g <= -1 {
		return nil, fmt.Errorf("table %q: growth_per_year %v must be a finite number above -1", t.Name, g)
	}

	n := int(total)
	out := make([]Partition, n)
	i := 0
	for ti, tr := range tiers {
		prefix := string(tr.Grain) + " "
		for j := range tr.Keep {
			out[i] = Partition{label: prefix, number: int32(j + 1), Tier: int32(ti)}
			i++
		}
	}
	out[0].Open = true

	if g == 0 {
		apportionExact(out, tiers, t.Rows)
	} else {
		apportionGrowth(out, tiers, t.Rows, g)
	}
	return out, nil
}

// apportionExact splits rows by period length with 128-bit integer quotas, so the
// result is exact: 365 days of 365,000 rows are 1,000 rows each, not 999 or 1,001.
func apportionExact(out []Partition, tiers []schema.Tier, rows int64) {
	var w int64 // total length in 1/48 day; at most 10^6 * 17532, no overflow
	for _, tr := range tiers {
		w += grain48(tr.Grain) * int64(tr.Keep)
	}
	// Every period of a tier has the same quota, so work per tier.
	floors := make([]int64, len(tiers))
	rems := make([]uint64, len(tiers))
	var sum int64
	for ti, tr := range tiers {
		hi, lo := bits.Mul64(uint64(rows), uint64(grain48(tr.Grain)))
		// hi < w because the quotient rows*L/w <= rows fits in 64 bits.
		q, r := bits.Div64(hi, lo, uint64(w))
		floors[ti], rems[ti] = int64(q), r
		sum += int64(q) * int64(tr.Keep)
	}
	left := rows - sum // < number of periods: each floor loses less than one row
	// Largest remainder first; a stable order keeps earlier tiers (lower indexes) first on ties.
	order := make([]int, len(tiers))
	for i := range order {
		order[i] = i
	}
	slices.SortStableFunc(order, func(a, b int) int {
		switch {
		case rems[a] > rems[b]:
			return -1
		case rems[a] < rems[b]:
			return 1
		}
		return 0
	})
	extra := make([]int64, len(tiers)) // periods of the tier that get one more row, lowest index first
	for _, ti := range order {
		if left == 0 {
			break
		}
		k := min(left, int64(tiers[ti].Keep))
		extra[ti] = k
		left -= k
	}
	i := 0
	for ti, tr := range tiers {
		for j := range tr.Keep {
			out[i].Rows = floors[ti]
			if int64(j) < extra[ti] {
				out[i].Rows++
			}
			i++
		}
	}
}

// apportionGrowth splits rows by w_i = L_i * (1+g)^(-age_i) with float quotas, then fixes
// the rounding so the partitions sum exactly to rows and none is negative.
func apportionGrowth(out []Partition, tiers []schema.Tier, rows int64, g float64) {
	n := len(out)
	lw := make([]float64, n) // log weights: (1+g)^(-age) overflows for old periods when g < 0
	lg := math.Log1p(g)
	var start int64 // days back to the period's newer end, in 1/48 day (exact)
	maxLw := math.Inf(-1)
	i := 0
	for _, tr := range tiers {
		l := grain48(tr.Grain)
		logL := math.Log(float64(l))
		for range tr.Keep {
			age := float64(2*start+l) / 96 / 365.25 // midpoint, in years
			lw[i] = logL - float64(age*lg)
			maxLw = max(maxLw, lw[i])
			start += l
			i++
		}
	}
	// Weights relative to the largest lie in (0, 1]; Neumaier summation keeps their
	// total accurate over a million terms.
	var sum, comp float64
	for i := range lw {
		w := math.Exp(lw[i] - maxLw)
		lw[i] = w
		s := sum + w
		if math.Abs(sum) >= math.Abs(w) {
			comp += (sum - s) + w
		} else {
			comp += (w - s) + sum
		}
		sum = s
	}
	total := sum + comp // >= 1: the largest weight is 1
	fr := float64(rows)
	floors := make([]int64, n)
	rems := lw // reuse: weights are no longer needed once the quota is taken
	for i := range lw {
		q := float64(fr * (lw[i] / total)) // rounded before q - f: no FMA
		f := math.Floor(q)
		switch {
		case !(f > 0):
			floors[i] = 0
		case f >= fr:
			floors[i] = rows
		default:
			floors[i] = int64(f)
		}
		rems[i] = q - f
	}
	fixup(floors, rems, rows)
	for i := range out {
		out[i].Rows = floors[i]
	}
}

// fixup adds or removes single rows until floors sums to rows: additions go to the
// largest remainders, removals to the smallest, ties to the lower index for additions
// (the mirror order for removals). No partition goes below zero.
func fixup(floors []int64, rems []float64, rows int64) {
	n := int64(len(floors))
	// Sum with saturation so even absurd float error cannot overflow.
	var got int64
	over := false
	for _, f := range floors {
		if got > rows-f {
			over = true
			break
		}
		got += f
	}
	if over {
		removeExcess(floors, rems, rows)
		return
	}
	left := rows - got
	if left <= 0 {
		return
	}
	if left >= n {
		q := left / n
		for i := range floors {
			floors[i] += q
		}
		left -= q * n
	}
	if left == 0 {
		return
	}
	// The left-th largest remainder is the threshold; everything above it gets a row,
	// then the ties at it in index order.
	th := nth(slices.Clone(rems), int(n-left))
	for i, r := range rems {
		if r > th {
			floors[i]++
			left--
		}
	}
	for i, r := range rems {
		if left == 0 {
			break
		}
		if r == th {
			floors[i]++
			left--
		}
	}
}

// nth is the k-th smallest of xs (0-based) in slices.Sort's order, found in linear
// expected time by selection; xs is reordered. An expansion asks for one remainder's rank
// among every partition's, so a full sort would cost n log n for each.
func nth(xs []float64, k int) float64 {
	lo, hi := 0, len(xs)-1
	for lo < hi {
		// Median of three as the pivot: sorted or reversed remainders stay linear.
		mid := lo + (hi-lo)/2
		if cmp.Less(xs[mid], xs[lo]) {
			xs[mid], xs[lo] = xs[lo], xs[mid]
		}
		if cmp.Less(xs[hi], xs[lo]) {
			xs[hi], xs[lo] = xs[lo], xs[hi]
		}
		if cmp.Less(xs[hi], xs[mid]) {
			xs[hi], xs[mid] = xs[mid], xs[hi]
		}
		pivot := xs[mid]
		i, j := lo, hi
		for i <= j {
			for cmp.Less(xs[i], pivot) {
				i++
			}
			for cmp.Less(pivot, xs[j]) {
				j--
			}
			if i <= j {
				xs[i], xs[j] = xs[j], xs[i]
				i++
				j--
			}
		}
		switch {
		case k <= j:
			hi = j
		case k >= i:
			lo = i
		default:
			return xs[k] // between the two runs: equal to the pivot
		}
	}
	return xs[k]
}

// removeExcess takes rows back when float error made the floors sum above rows: first
// evenly in bulk while the excess is at least one row per partition, then one row
// each from the smallest remainders. It never takes a partition below zero.
func removeExcess(floors []int64, rems []float64, rows int64) {
	n := int64(len(floors))
	excess := func() int64 {
		var s int64
		for _, f := range floors {
			if s > math.MaxInt64-f {
				return math.MaxInt64 // saturate: the sum would overflow
			}
			s += f
		}
		return s - rows
	}
	ex := excess()
	for ex >= n {
		q := ex / n
		for i := range floors {
			floors[i] -= min(floors[i], q)
		}
		ex = excess()
	}
	if ex <= 0 {
		fixup(floors, rems, rows) // the bulk step may have overshot: add back by remainder
		return
	}
	order := make([]int, len(floors))
	for i := range order {
		order[i] = i
	}
	slices.SortStableFunc(order, func(a, b int) int {
		switch {
		case rems[a] < rems[b]:
			return -1
		case rems[a] > rems[b]:
			return 1
		}
		return b - a // higher index first: the mirror of "ties to the lower index"
	})
	for ex > 0 {
		for _, i := range order {
			if ex == 0 {
				break
			}
			if floors[i] > 0 {
				floors[i]--
				ex--
			}
		}
	}
}
