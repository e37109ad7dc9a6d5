package layout

import (
	"math/rand/v2"
	"testing"
)

// Kept estimates give the scan, its bounds and the column's bytes to the bit (and a
// bound from their total under the floor): a sweep
// reads them instead of estimating the widest column again, and its outputs must not
// move. Random columns, partitions, engines and table sizes (some not the partitions'
// sum, where For refuses them); one Estimated is reused across cases, as a sweep does.
func TestEstimatedIsTheScanItKeeps(t *testing.T) {
	r := rand.New(rand.NewPCG(7, 11))
	var es Estimated
	refused := 0
	for n := range 3000 {
		c, parts, rows, e := randomScan(r, 0)
		tableRows := rows
		switch r.IntN(4) {
		case 0:
			tableRows = 0
		case 1:
			tableRows = rows + 1 + r.Int64N(1000)
		}
		var memo Smaller
		if got, want := es.Estimate(c, parts, e.SegmentRows, &memo), ColumnBytes(c, parts, e.SegmentRows); got != want {
			t.Fatalf("case %d: kept bytes %v, ColumnBytes %v", n, got, want)
		}
		if !es.For(tableRows, e) {
			if tableRows == rows || tableRows == 0 {
				t.Fatalf("case %d: refused for the partitions' own rows", n)
			}
			refused++
			continue
		}
		if tableRows != rows && tableRows != 0 {
			t.Fatalf("case %d: kept for %d table rows, made for %d", n, tableRows, rows)
		}
		if got, want := es.Scan(e), ScanColumn(c, tableRows, parts, e); got != want {
			t.Fatalf("case %d: kept scan %+v, ScanColumn %+v", n, got, want)
		}
		f1, c1 := es.Bounds(e)
		if f2, c2 := ScanBounds(c, tableRows, parts, e, nil); f1 != f2 || c1 != c2 {
			t.Fatalf("case %d: kept bounds [%v, %v], ScanBounds [%v, %v]", n, f1, c1, f2, c2)
		}
		// Least, from the total alone, is under the floor of the column itself (and so of
		// any wider one): the same task times, summed in another order.
		if least := es.Least(e); least > f1*(1+1e-9) {
			t.Fatalf("case %d: least %v above the floor %v", n, least, f1)
		}
		other := e
		other.SegmentRows *= 2
		if es.For(tableRows, other) {
			t.Fatalf("case %d: kept for another capacity", n)
		}
	}
	if refused == 0 {
		t.Fatal("no case had table rows other than its partitions'")
	}
}
