package advisor

import "slices"

// Point is one option on two axes where less is better: fixed ms per scan (X) and
// refresh memory (Y).
type Point struct{ X, Y float64 }

// Dominates reports whether p is at least as good as q on both axes and better on one.
func (p Point) Dominates(q Point) bool {
	return p.X <= q.X && p.Y <= q.Y && (p.X < q.X || p.Y < q.Y)
}

// Front marks the points no other point dominates (the Pareto front). Equal points
// are on it together. O(n log n): sort by X then Y; a point is on the front when it
// is the lowest Y of its X and lower than every Y at a smaller X.
func Front(pts []Point) []bool {
	on := make([]bool, len(pts))
	idx := make([]int, len(pts))
	for i := range idx {
		idx[i] = i
	}
	slices.SortStableFunc(idx, func(a, b int) int {
		pa, pb := pts[a], pts[b]
		switch {
		case pa.X < pb.X:
			return -1
		case pa.X > pb.X:
			return 1
		case pa.Y < pb.Y:
			return -1
		case pa.Y > pb.Y:
			return 1
		}
		return 0
	})
	bestBefore := 0.0 // lowest Y at a strictly smaller X
	seen := false
	for g := 0; g < len(idx); {
		h := g
		for h < len(idx) && pts[idx[h]].X == pts[idx[g]].X {
			h++
		}
		low := pts[idx[g]].Y // sorted: the group's lowest Y comes first
		if !seen || low < bestBefore {
			for k := g; k < h && pts[idx[k]].Y == low; k++ {
				on[idx[k]] = true
			}
		}
		if !seen || low < bestBefore {
			bestBefore = low
		}
		seen = true
		g = h
	}
	return on
}
